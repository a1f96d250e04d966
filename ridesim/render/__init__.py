"""ridesim.render layer."""
