"""Data package: example specs (installed from examples/)."""
