"""ridesim.assess layer."""
