"""drawerfit's header: its own mark (a chest of drawers, ▤) instead of the framework's stock icon."""

from __future__ import annotations

from textual.widgets import Header

MARK = "▤"


class Masthead(Header):
    """The header every drawerfit screen shows: the mark, the title and the drawer file (styled in app.tcss)."""

    def __init__(self) -> None:
        super().__init__(icon=MARK)
