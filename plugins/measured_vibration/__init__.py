"""measured_vibration: site surveys and monitoring records (in progress)."""
