"""Data package: the part catalog and example bins (installed from inventory/)."""
