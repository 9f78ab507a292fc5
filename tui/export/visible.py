"""Text-direction controls made visible in every file the sheet writes (html, svg, md, csv, cir).

Unicode's bidirectional formatting characters (Unicode Standard Annex #9: ALM U+061C, LRM and
RLM U+200E/U+200F, the embeddings and overrides U+202A–U+202E, the isolates U+2066–U+2069) are
invisible but reorder the text around them, so a part name, location or note holding one could
make a printed pick list read otherwise than the drawer file says.  The sheet writes none of its
own; each one that comes from the drawer or the saved file is written as its escape, the way
`drawerfit check` and `drawerfit list` show it (`\\u202e`).  The drawer file keeps its text.
"""

from __future__ import annotations

BIDI_CONTROLS = "\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"
_ESCAPES = str.maketrans({c: f"\\u{ord(c):04x}" for c in BIDI_CONTROLS})


def visible(text: str) -> str:
    """`text` with every bidirectional formatting character written as its escape (U+202E → \\u202e)."""
    return text.translate(_ESCAPES)
