"""Small modal dialogs: a yes/no confirmation and a new count for one drawer line."""

from __future__ import annotations

import re

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.validation import ValidationResult, Validator
from textual.widgets import Button, Footer, Input, Label, Static

from inventory.parts import Part

from ..widgets.part_text import describe

_COUNT = re.compile(r"\s*([+-]?)\s*([0-9]{1,9})\s*")


class ConfirmDialog(ModalScreen[bool]):
    """Ask before a change to the drawer file; dismisses True for yes."""

    BINDINGS = [
        Binding("y", "answer(True)", "Yes", id="confirm.yes"),
        Binding("n,escape", "answer(False)", "No", id="confirm.no"),
    ]

    def __init__(self, question: str, detail: str = "", yes: str = "Yes") -> None:
        super().__init__()
        self.question, self.detail, self.yes = question, detail, yes

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(self.question, classes="dialog-title", markup=False)
            if self.detail:
                yield Static(self.detail, classes="dialog-detail", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button(f"{self.yes} (y)", variant="primary", id="yes")
                yield Button("Cancel (n)", id="no")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        self.query_one("#yes", Button).focus()

    @on(Button.Pressed)
    def pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "yes")

    def action_answer(self, yes: bool) -> None:
        self.dismiss(yes)


def read_count(text: str, now: int) -> int:
    """A new count from "12" (set), "+3" or "-2" (relative to `now`); ValueError says why not."""
    m = _COUNT.fullmatch(text)
    if not m:
        raise ValueError(f'"{text.strip()}" is not a count (expected a whole number like 12, or +3 / -2)')
    sign, digits = m.groups()
    qty = now + int(digits) if sign == "+" else now - int(digits) if sign == "-" else int(digits)
    if qty < 0:
        raise ValueError(f"only {now} in the drawer: the count cannot go below 0")
    return qty


class CountValidator(Validator):
    def __init__(self, now: int) -> None:
        super().__init__()
        self.now = now

    def validate(self, value: str) -> ValidationResult:
        try:
            read_count(value, self.now)
        except ValueError as exc:
            return self.failure(str(exc))
        return self.success()


class CountDialog(ModalScreen[int | None]):
    """A new quantity for one line: the number counted, or +n / -n."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="count.cancel")]

    def __init__(self, part: Part) -> None:
        super().__init__()
        self.part = part

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(f"Count of {describe(self.part)}", classes="dialog-title", markup=False)
            yield Static(f"Now {self.part.qty}. Type the number counted, or +n / -n.")
            yield Input(str(self.part.qty), id="qty", validators=[CountValidator(self.part.qty)],
                        validate_on=["changed", "submitted"])
            yield Label("", id="qty-error", classes="field-error", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Save (enter)", variant="primary", id="save")
                yield Button("Cancel (esc)", id="cancel")
        yield Footer(compact=True, show_command_palette=False)

    @on(Input.Changed, "#qty")
    def check(self, event: Input.Changed) -> None:
        result = event.validation_result
        text = "" if result is None or result.is_valid else result.failure_descriptions[0]
        self.query_one("#qty-error", Label).update(text)

    @on(Input.Submitted, "#qty")
    @on(Button.Pressed, "#save")
    def save(self) -> None:
        text = self.query_one("#qty", Input).value
        try:
            qty = read_count(text, self.part.qty)
        except ValueError as exc:
            self.query_one("#qty-error", Label).update(str(exc))
            return
        self.dismiss(qty)

    @on(Button.Pressed, "#cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
