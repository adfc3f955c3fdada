"""reportgen.document."""
