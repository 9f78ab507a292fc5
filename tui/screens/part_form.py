"""The form for a new drawer line or an edited one, checked as it is typed.

Each cell is checked with the same parser the drawer file is read with; a bad
value is refused with the parser's reason beside the field and nothing is saved.
The caller hands in `commit(fields)`, which writes the file and raises when the
store refuses; its reason is shown in the form, which then stays open.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.validation import ValidationResult, Validator
from textual.widgets import Button, Footer, Input, Label, Select, Static

from inventory import values
from inventory.parts import DIELECTRICS, KINDS, Part
from inventory.store import StoreError

_QTY = re.compile(r"[0-9]{1,9}")


def parse_qty(text: str) -> float:
    if not _QTY.fullmatch(text.strip()):
        raise ValueError(f'"{text.strip()}" is not a count (expected a whole number, 0 or more)')
    return float(text)


# column -> (label, parser or None for free text, kinds it applies to, required)
FIELDS: dict[str, tuple[str, Callable[[str], float] | None, tuple[str, ...], bool]] = {
    "value": ("Value", None, ("resistor", "capacitor"), True),
    "part": ("Type", None, ("transistor",), True),
    "qty": ("Qty", parse_qty, KINDS, True),
    "tolerance": ("Tolerance", values.parse_tolerance, ("resistor", "capacitor"), False),
    "power": ("Power", values.parse_power, ("resistor",), False),
    "voltage": ("Voltage", values.parse_voltage, ("capacitor",), False),
    "hfe_min": ("hFE min", values.parse_number, ("transistor",), False),
    "hfe_max": ("hFE max", values.parse_number, ("transistor",), False),
    "vceo": ("VCEO", values.parse_voltage, ("transistor",), False),
    "ic_max": ("Ic max", values.parse_current, ("transistor",), False),
    "pd_max": ("Pd max", values.parse_power, ("transistor",), False),
    "location": ("Location", None, KINDS, False),
    "notes": ("Notes", None, KINDS, False),
}
HINTS = {"value": "4k7", "qty": "10", "tolerance": "5%", "power": "0.25W", "voltage": "25V",
         "part": "BC547", "hfe_min": "110", "hfe_max": "800", "vceo": "45V", "ic_max": "100mA",
         "pd_max": "500mW", "location": "A3"}


class CellCheck(Validator):
    """One cell through its parser; the parser's message is the failure text."""

    def __init__(self, form: PartForm, column: str) -> None:
        super().__init__()
        self.form, self.column = form, column

    def validate(self, value: str) -> ValidationResult:
        problem = self.form.cell_problem(self.column, value)
        return self.failure(problem) if problem else self.success()


class PartForm(ModalScreen[bool]):
    """Add a part (`part` and `line` None), edit one, or fix a line with errors (`line` given,
    `part` None, `problems` its messages); dismisses True once saved.

    The kind is kept on the form (not read back from the Select), because the fields' checks
    run as soon as their Inputs get a value, before the Select is mounted.
    """

    BINDINGS = [
        Binding("ctrl+s", "save", "Save", id="form.save"),
        Binding("escape", "cancel", "Cancel", id="form.cancel"),
    ]

    def __init__(self, part: Part | None, commit: Callable[[dict[str, str]], object],
                 cells: dict[str, str] | None = None, *, line: int | None = None,
                 problems: Sequence[str] = ()) -> None:
        super().__init__()
        self.part, self.commit = part, commit
        self.cells = cells or {}
        self.line = part.line if part is not None else line
        self.problems = list(problems)
        typed = self.cells.get("kind", "").strip().lower()
        self._kind = part.kind if part is not None else typed if typed in KINDS else "resistor"

    def compose(self) -> ComposeResult:
        if self.line is None:
            title = "Add a part"
        else:
            title = f"{'Edit' if self.part is not None else 'Fix'} line {self.line}"
        kind = self._kind
        with Vertical(classes="dialog form"):
            yield Label(title, classes="dialog-title")
            if self.problems:
                yield Static("\n".join(self.problems), id="line-problems", classes="field-error", markup=False)
            with VerticalScroll(classes="form-fields"):
                with Horizontal(classes="field"):
                    yield Label("Kind", classes="field-label")
                    yield Select([(k, k) for k in KINDS], value=kind, allow_blank=False, id="kind",
                                 compact=True)
                with Horizontal(classes="field", id="row-polarity"):
                    yield Label("Polarity", classes="field-label")
                    yield Select([("NPN", "NPN"), ("PNP", "PNP")], value=self.cell("polarity", "NPN"),
                                 allow_blank=False, id="polarity", compact=True)
                with Horizontal(classes="field", id="row-dielectric"):
                    yield Label("Dielectric", classes="field-label")
                    yield Select([(d, d) for d in DIELECTRICS], value=self.cell("dielectric", Select.NULL),
                                 id="dielectric", compact=True, prompt="(not given)")
                for column, (label, _, _, _) in FIELDS.items():
                    with Vertical(classes="field-block", id=f"row-{column}"):
                        with Horizontal(classes="field"):
                            yield Label(label, classes="field-label")
                            hint = HINTS.get(column)
                            yield Input(self.cell(column, ""), placeholder=f"e.g. {hint}" if hint else "",
                                        id=f"f-{column}", compact=True,
                                        validators=[CellCheck(self, column)], validate_on=["changed"])
                        yield Label("", id=f"e-{column}", classes="field-error", markup=False)
            yield Label("", id="form-status", classes="field-error", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Save (ctrl+s)", variant="primary", id="save")
                yield Button("Cancel (esc)", id="cancel")
        yield Footer(compact=True, show_command_palette=False)

    def cell(self, column: str, default):
        text = self.cells.get(column, "")
        if column == "polarity":  # a Select takes only its own options; other text starts blank
            text = text.upper() if text.upper() in ("NPN", "PNP") else ""
        elif column == "dielectric":
            text = text.lower() if text.lower() in DIELECTRICS else ""
        return text if text else default

    def on_mount(self) -> None:
        self.show_kind()
        # An edit is most often a new count: start there (its text selected, so typing replaces it).
        # A new line starts at what names the part: the value, or a transistor's type.
        first = "qty" if self.part is not None else "value" if self.kind != "transistor" else "part"
        self.query_one(f"#f-{first}", Input).focus()

    @property
    def kind(self) -> str:
        return self._kind

    def cell_problem(self, column: str, text: str) -> str | None:
        """Why `text` cannot go in `column` for the chosen kind, or None."""
        label, parse, kinds, required = FIELDS[column]
        text = text.strip()
        if not text:
            return f"{label} is needed" if required and self.kind in kinds else None
        if column == "value":
            parse = values.parse_resistance if self.kind == "resistor" else values.parse_capacitance
        if parse is None:
            return None
        try:
            parse(text)
        except ValueError as exc:
            return str(exc)
        return None

    @on(Select.Changed, "#kind")
    def kind_chosen(self, event: Select.Changed) -> None:
        if isinstance(event.value, str) and event.value in KINDS:
            self._kind = event.value
        self.show_kind()

    def show_kind(self) -> None:
        kind = self.kind
        for column, (_, _, kinds, _) in FIELDS.items():
            self.query_one(f"#row-{column}").display = kind in kinds
        self.query_one("#row-polarity").display = kind == "transistor"
        self.query_one("#row-dielectric").display = kind == "capacitor"
        self.query_one("#f-value", Input).placeholder = "e.g. 100n" if kind == "capacitor" else "e.g. 4k7"
        self.check_all(show_missing=False)

    @on(Input.Changed)
    def field_changed(self, event: Input.Changed) -> None:
        column = (event.input.id or "")[2:]
        if column in FIELDS:
            self.show_problem(column, self.cell_problem(column, event.value))

    def show_problem(self, column: str, problem: str | None) -> None:
        error = self.query_one(f"#e-{column}", Label)
        error.update(problem or "")
        error.display = bool(problem)
        self.query_one(f"#f-{column}", Input).set_class(bool(problem), "-invalid")

    def check_all(self, show_missing: bool = True) -> list[str]:
        """Problems of every field shown for this kind; each shown beside its field."""
        found = []
        for column, (_, _, kinds, required) in FIELDS.items():
            if self.kind not in kinds:
                continue
            text = self.query_one(f"#f-{column}", Input).value
            problem = self.cell_problem(column, text)
            if problem and (show_missing or text.strip()):
                self.show_problem(column, problem)
                found.append(f"{FIELDS[column][0]}: {problem}")
            else:
                self.show_problem(column, None)
        return found

    def fields(self) -> dict[str, str]:
        """Column -> cell text for the chosen kind (cells of other kinds left empty)."""
        kind = self.kind
        out = {"kind": kind}
        for column, (_, _, kinds, _) in FIELDS.items():
            out[column] = self.query_one(f"#f-{column}", Input).value.strip() if kind in kinds else ""
        out["polarity"] = str(self.query_one("#polarity", Select).value) if kind == "transistor" else ""
        dielectric = self.query_one("#dielectric", Select).value
        out["dielectric"] = str(dielectric) if kind == "capacitor" and dielectric != Select.NULL else ""
        for column in ("kind", "polarity", "dielectric"):  # "NPN" for "npn" is no change: keep the file's
            if out[column] and out[column].lower() == self.cells.get(column, "").lower():
                out[column] = self.cells[column]
        # An empty cell is left out, so a column the file lacks is not added for nothing; a field of
        # this kind emptied by the user empties its cell.  Cells of other kinds stay as they are.
        shown = {c for c, (_, _, kinds, _) in FIELDS.items() if kind in kinds}
        shown |= {"polarity"} if kind == "transistor" else {"dielectric"} if kind == "capacitor" else set()
        return {k: v for k, v in out.items() if v or k in ("kind", "qty") or (k in shown and self.cells.get(k))}

    @on(Button.Pressed, "#save")
    def action_save(self) -> None:
        status = self.query_one("#form-status", Label)
        problems = self.check_all()
        if problems:
            status.update(f"Not saved: {len(problems)} field{'s' * (len(problems) > 1)} to fix")
            return
        try:
            self.commit(self.fields())
        except (StoreError, ValueError, OSError) as exc:
            status.update(f"Not saved: {exc}")
            return
        self.dismiss(True)

    @on(Button.Pressed, "#cancel")
    def action_cancel(self) -> None:
        self.dismiss(False)
