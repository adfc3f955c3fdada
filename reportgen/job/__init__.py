"""reportgen.job."""
