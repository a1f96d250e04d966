"""ridesim.metrics layer."""
