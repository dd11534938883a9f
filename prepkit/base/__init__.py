"""Low-level helpers every stage may use: atomic files, JSON values, counting words, cell text."""
