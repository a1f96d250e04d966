"""ridesim.solve layer."""
