"""reportgen.pipeline."""
