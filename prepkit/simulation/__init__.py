"""simulation stage."""
