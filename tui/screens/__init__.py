"""Screens of the terminal app, one per module."""
