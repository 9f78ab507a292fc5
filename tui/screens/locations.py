"""Counts per location: how many lines and pieces each drawer or bin holds."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import DataTable, Footer, Label

from inventory.summary import per_location


class LocationsScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape,l", "close", "Close", id="locations.close")]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog wide"):
            yield Label("Counts per location", classes="dialog-title")
            yield DataTable(id="locations", cursor_type="row", zebra_stripes=True)
            yield Label("Esc closes", classes="field-note")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#locations", DataTable)
        table.add_columns("Place", "Lines", "Pieces", "Of which")
        parts = self.app.drawer.parts if self.app.drawer else []
        # Text cells: a location is the user's text, never markup.
        table.add_rows([tuple(Text(str(c)) for c in row) for row in per_location(parts)])
        table.focus()

    def action_close(self) -> None:
        self.dismiss(None)
