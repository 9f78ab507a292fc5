"""Widgets and helpers shared by the app's screens."""
