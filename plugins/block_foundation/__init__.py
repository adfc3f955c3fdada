"""block_foundation: rotating-machine foundations on soil (in progress)."""
