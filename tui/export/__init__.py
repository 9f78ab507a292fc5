"""Build-sheet outputs: HTML, SVG schematic, Markdown, CSV pick list and a runnable SPICE bench."""
