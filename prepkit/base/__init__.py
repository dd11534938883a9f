"""base stage."""
