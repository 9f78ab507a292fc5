"""drawerfit's own two colour themes, registered with Textual's theme API.

- "bakelite" (dark): the brown-black of an old instrument case, copper and brass for what
  matters, verdigris for the second colour.
- "bench" (light): pale bench paper with the same copper, brass and verdigris, darkened
  to read on a light ground.

Every colour of the app lives here; the .tcss files use the theme's variables only.
"""

from __future__ import annotations

from textual.theme import Theme

DARK, LIGHT = "bakelite", "bench"

THEMES = (
    Theme(
        name=DARK,
        dark=True,
        primary="#C8753A",      # copper
        secondary="#6F9A8D",    # verdigris
        accent="#E0B04A",       # brass
        foreground="#E8DFD2",
        background="#1B1815",
        surface="#24201C",
        panel="#3A3028",
        success="#86B35E",
        warning="#E3A23B",
        error="#E0644C",
        variables={"footer-key-foreground": "#E0B04A", "block-cursor-text-style": "bold"},
    ),
    Theme(
        name=LIGHT,
        dark=False,
        primary="#9A4F1F",
        secondary="#3F6F62",
        accent="#7A5A10",
        foreground="#2B2520",
        background="#F3EDE2",
        surface="#FBF7EF",
        panel="#E2D6C2",
        success="#3D7A2A",
        warning="#A86A00",
        error="#B0341F",
        variables={"footer-key-foreground": "#9A4F1F", "block-cursor-text-style": "bold"},
    ),
)
