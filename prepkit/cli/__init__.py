"""The command line: the only layer that prints, reads the terminal and sets exit codes."""
