"""ridesim.io layer."""
