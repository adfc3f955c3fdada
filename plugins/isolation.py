"""isolation plugin (being written)."""
