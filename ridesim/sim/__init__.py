"""ridesim.sim layer."""
