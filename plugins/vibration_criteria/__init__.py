"""vibration_criteria: the library of published vibration criteria (in progress)."""
