"""forced_response plugin (being written)."""
