"""reportgen.calc."""
