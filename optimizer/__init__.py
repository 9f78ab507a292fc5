"""Stage physics, resistor networks and the design solver. Knows nothing of files or screens."""
