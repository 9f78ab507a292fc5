"""The command line and the terminal app."""
