"""model subpackage."""
