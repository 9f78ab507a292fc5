"""Open a file saved with `drawerfit design --save` from inside the app: ask for its path, show its designs."""

from __future__ import annotations

from pathlib import Path

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Footer, Input, Label, Static

from ..saved import SavedFileError, load_saved


class OpenSavedDialog(ModalScreen[dict | None]):
    """The path of a saved design file; dismisses its document, or None when cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="open.cancel")]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label("Open saved designs", classes="dialog-title")
            yield Static("The file written by `drawerfit design … --save FILE` (a path, ~ allowed).")
            yield Input("", id="path", placeholder="gain10.json")
            yield Label("", id="path-error", classes="field-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Open (enter)", variant="primary", id="open")
                yield Button("Cancel (esc)", id="cancel")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        self.query_one("#path", Input).focus()

    @on(Input.Submitted, "#path")
    @on(Button.Pressed, "#open")
    def open(self) -> None:
        text = self.query_one("#path", Input).value.strip()
        if not text:
            self.query_one("#path-error", Label).update("Type the path of a saved design file.")
            return
        try:
            doc = load_saved(Path(text).expanduser())
        except SavedFileError as exc:
            self.query_one("#path-error", Label).update(str(exc))
            return
        self.dismiss(doc)

    @on(Button.Pressed, "#cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
