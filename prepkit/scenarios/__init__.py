"""scenarios stage."""
