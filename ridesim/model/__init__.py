"""ridesim.model layer."""
