"""report subpackage."""
