"""Data layer: reading and validating the files users edit (no physics here)."""
