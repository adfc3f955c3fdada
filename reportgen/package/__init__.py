"""reportgen.package."""
