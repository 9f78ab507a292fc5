"""Write the build sheet to a file from the app: choose what to write and where (as `drawerfit sheet`)."""

from __future__ import annotations

import os
from pathlib import Path

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Footer, Input, Label, RadioButton, RadioSet, Static

from ..cmd_sheet import FORMATS

# What each format holds, in the words of the CLI's help (README "drawerfit sheet").
WHAT = {"html": "the whole sheet, to print (A4 or Letter, 1–2 pages)", "svg": "the schematic alone",
        "md": "the sheet as Markdown", "csv": "the pick list, by drawer place",
        "cir": "a SPICE bench for `ngspice -b`"}


def target_problem(text: str) -> str | None:
    """Why the path typed cannot be written to, or None (the write itself may still fail: it is reported)."""
    if not text.strip():
        return "Type the path of the file to write."
    path = Path(text.strip()).expanduser()
    if path.is_dir():
        return f"{path} is a folder; add a file name."
    folder = path.parent
    if not folder.is_dir():
        return f"No folder {folder}."
    if not os.access(folder, os.W_OK | os.X_OK):
        return f"The folder {folder} cannot be written to."
    return None


def with_suffix(text: str, fmt: str) -> str:
    """The typed path with its suffix swapped for `fmt`'s when it ends in one of the sheet's suffixes."""
    stem, dot, suffix = text.rpartition(".")
    return f"{stem}.{fmt}" if dot and suffix in FORMATS else text


class ExportDialog(ModalScreen[tuple[str, Path] | None]):
    """What to write (html, svg, md, csv, cir) and where; dismisses (format, path), or None."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="export.cancel")]

    def __init__(self, default_name: str, fmt: str = "html") -> None:
        super().__init__()
        self.default_name, self.fmt = default_name, fmt
        self.replace_ok: Path | None = None  # a file that exists, replaced only when asked twice

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog wide"):
            yield Label("Write the build sheet to a file", classes="dialog-title")
            with RadioSet(id="format"):
                for fmt in FORMATS:
                    yield RadioButton(f"{fmt}: {WHAT[fmt]}", value=fmt == self.fmt, id=f"fmt-{fmt}")
            yield Static("The file (a path, ~ allowed). A file that exists is replaced only when you write twice.",
                         classes="dialog-detail")
            yield Input(f"{self.default_name}.{self.fmt}", id="path")
            yield Label("", id="path-error", classes="field-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Write (enter)", variant="primary", id="write")
                yield Button("Cancel (esc)", id="cancel")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        self.query_one("#path", Input).focus()

    @on(RadioSet.Changed, "#format")
    def chosen(self, event: RadioSet.Changed) -> None:
        self.fmt = FORMATS[event.index]
        path = self.query_one("#path", Input)
        path.value = with_suffix(path.value, self.fmt)

    @on(Input.Submitted, "#path")
    @on(Button.Pressed, "#write")
    def write(self) -> None:
        text = self.query_one("#path", Input).value
        problem = target_problem(text)
        path = Path(text.strip()).expanduser()
        if not problem and path.exists() and self.replace_ok != path:
            self.replace_ok = path
            problem = f"{path.name} exists: Write again to replace it."
        if problem:
            self.query_one("#path-error", Label).update(problem)
            return
        self.dismiss((self.fmt, path))

    @on(Button.Pressed, "#cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
