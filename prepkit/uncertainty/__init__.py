"""uncertainty stage."""
