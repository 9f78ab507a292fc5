"""The design request: what the stage must do, checked as typed, solved in a thread.

Each field goes through its parser from `inventory.values`; the whole request then
through `Spec.problems()`, whose messages land beside the field they name.  The
solver runs in a thread worker, reports progress by messages, and stops when Esc
sets its cancel event.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from dataclasses import dataclass

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.message import Message
from textual.screen import Screen
from textual.validation import ValidationResult, Validator
from textual.widgets import Footer, Header, Input, Label, ProgressBar, Select
from textual.worker import Worker, WorkerState

from inventory import values
from optimizer.spec import Spec
from optimizer.stage import TOPOLOGIES


def parse_hz(text: str) -> float:
    """A frequency in Hz from ``30``, ``30Hz``, ``30 hz``."""
    s = text.strip()
    if s.lower().endswith("hz"):
        s = s[:-2]
    try:
        return values.parse_number(s)
    except values.ValueFormatError:
        raise values.ValueFormatError(text, "a frequency", "expected e.g. 30, 30Hz") from None


def parse_gain(text: str) -> float:
    return values.parse_number(text.strip().lstrip("-").rstrip("xX×").strip())


@dataclass(frozen=True)
class Field:
    label: str
    option: str                       # the Spec.problems() option this field answers to
    spec_name: str
    parse: Callable[[str], float]
    default: str
    hint: str


FIELDS = {
    "gain": Field("Gain", "--gain", "gain", parse_gain, "10", "voltage gain, magnitude"),
    "gain_tol": Field("Gain tolerance", "--gain-tol", "gain_tol", values.parse_tolerance, "5%", "± around it"),
    "supply": Field("Supply", "--supply", "supply_v", values.parse_voltage, "12V", "single rail"),
    "load": Field("Load", "--load", "load_ohms", values.parse_resistance, "22k", "what the output drives"),
    "source": Field("Source", "--source", "source_ohms", values.parse_resistance, "1k",
                    "resistance of what drives the input"),
    "swing": Field("Swing", "--swing", "swing_pp", values.parse_voltage, "5V", "V peak-to-peak at the load"),
    "low_cut": Field("Low cut-off", "--low-cut", "low_cut_hz", parse_hz, "30Hz", "lowest frequency, -3 dB"),
    "min_rin": Field("Minimum Rin", "--min-rin", "min_rin_ohms", values.parse_resistance, "8k",
                     "input resistance at least"),
}
DEPTHS = [("1 part per position", 1), ("up to 2 in series/parallel", 2), ("up to 3 in series/parallel", 3)]
DEFAULT_DEPTH = 2


class FieldCheck(Validator):
    def __init__(self, parse: Callable[[str], float]) -> None:
        super().__init__()
        self.parse = parse

    def validate(self, value: str) -> ValidationResult:
        try:
            self.parse(value)
        except ValueError as exc:
            return self.failure(str(exc))
        return self.success()


class SolveProgress(Message):
    """From the solving thread: how far it is."""

    def __init__(self, fraction: float, text: str) -> None:
        super().__init__()
        self.fraction, self.text = fraction, text

    def can_replace(self, message: Message) -> bool:
        return isinstance(message, SolveProgress)


class Solved(Message):
    """From the solving thread: the design result (the JSON shape), or None when cancelled."""

    def __init__(self, result: dict | None) -> None:
        super().__init__()
        self.result = result


class RequestScreen(Screen):
    """Fill in the specification; F5 solves, Esc stops a solve or goes back."""

    BINDINGS = [
        Binding("f5,ctrl+s", "solve", "Solve", id="request.solve", tooltip="Find designs from the drawer"),
        Binding("escape", "stop_or_back", "Stop/back", id="request.back",
                tooltip="Stop the solve, or go back to the drawer"),
        Binding("ctrl+r", "reset", "Defaults", id="request.reset", tooltip="Put the default request back"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.cancel = threading.Event()
        self.solving = False

    def compose(self) -> ComposeResult:
        last = self.app.last_request  # the request solved last, as it was typed
        yield Header()
        with VerticalScroll(id="request"):
            with Horizontal(classes="field"):
                yield Label("Topology", classes="field-label")
                yield Select([(t, t) for t in TOPOLOGIES], value=last.get("topology", TOPOLOGIES[0]),
                             allow_blank=False, id="topology", compact=True)
            for name, f in FIELDS.items():
                with Horizontal(classes="field"):
                    yield Label(f.label, classes="field-label")
                    yield Input(last.get(name, f.default), id=f"r-{name}", compact=True,
                                validators=[FieldCheck(f.parse)], validate_on=["changed"], placeholder=f.default)
                    yield Label(f.hint, id=f"m-{name}", classes="field-note")
            with Horizontal(classes="field"):
                yield Label("Network depth", classes="field-label")
                yield Select(DEPTHS, value=last.get("depth", DEFAULT_DEPTH), allow_blank=False, id="depth",
                             compact=True)
            yield Label("", id="request-problems", classes="field-error")
            yield ProgressBar(total=1.0, show_eta=False, id="solve-progress")
            yield Label("F5 finds designs from the parts in the drawer.", id="solve-status")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        self.query_one("#solve-progress").display = False
        self.query_one("#r-gain", Input).focus()
        self.check()

    # ---- checking ------------------------------------------------------------------------

    def spec(self) -> tuple[Spec | None, dict[str, str]]:
        """The Spec the fields describe, or None; and the problem per field name ("" for the whole)."""
        found: dict[str, str] = {}
        kwargs: dict[str, object] = {
            "topology": str(self.query_one("#topology", Select).value),
            "max_parts_per_position": int(self.query_one("#depth", Select).value),
        }
        for name, f in FIELDS.items():
            try:
                kwargs[f.spec_name] = f.parse(self.query_one(f"#r-{name}", Input).value)
            except ValueError as exc:
                found[name] = str(exc)
        if found:
            return None, found
        spec = Spec(**kwargs)
        options = {f.option: name for name, f in FIELDS.items()}
        for problem in spec.problems():
            option, _, text = problem.partition(": ")
            name = options.get(option, "")
            found[name] = f"{found[name]}; {text}" if name in found else (text if name else problem)
        return (None if found else spec), found

    @on(Input.Changed)
    @on(Select.Changed)
    def check(self) -> Spec | None:
        spec, found = self.spec()
        for name, f in FIELDS.items():
            note = self.query_one(f"#m-{name}", Label)
            note.update(found.get(name, f.hint))
            note.set_class(name in found, "-problem")
            self.query_one(f"#r-{name}", Input).set_class(name in found, "-invalid")
        self.query_one("#request-problems", Label).update(found.get("", ""))
        self.query_one("#request-problems", Label).display = "" in found
        return spec

    # ---- solving -------------------------------------------------------------------------

    @on(Input.Submitted)
    def action_solve(self) -> None:
        if self.solving:
            return
        spec = self.check()
        status = self.query_one("#solve-status", Label)
        if spec is None:
            status.update("Fix the fields marked in red first.")
            return
        if self.app.drawer is None:
            status.update(self.app.load_error or "No drawer file")
            return
        self.app.last_request = {
            "topology": spec.topology, "depth": spec.max_parts_per_position,
            **{name: self.query_one(f"#r-{name}", Input).value for name in FIELDS},
        }
        self.cancel = threading.Event()
        self.solving = True
        bar = self.query_one("#solve-progress", ProgressBar)
        bar.display = True
        bar.update(progress=0.0)
        status.update("Solving… (Esc stops)")
        self.solve(self.app.drawer, spec, spec.max_parts_per_position, self.cancel)

    @work(thread=True, exclusive=True, group="solve", exit_on_error=False)
    def solve(self, drawer, spec: Spec, depth: int, cancel: threading.Event) -> None:
        # Imported here: the solver pulls in OR-Tools, which the drawer view never needs.
        from optimizer.select import find_designs

        def progress(fraction: float, text: str) -> None:
            self.post_message(SolveProgress(fraction, text))

        try:
            result = find_designs(drawer, spec, top=3, depth=depth, progress=progress, cancel=cancel)
        except Exception:
            if not cancel.is_set():
                raise  # a real failure: the worker reports it (on_worker_state_changed)
            result = None  # stopped on request; how the solver unwinds is its own business
        self.post_message(Solved(None if cancel.is_set() else result))

    def on_solve_progress(self, message: SolveProgress) -> None:
        if self.solving:
            self.query_one("#solve-progress", ProgressBar).update(progress=message.fraction)
            self.query_one("#solve-status", Label).update(f"{message.text} (Esc stops)")

    def on_solved(self, message: Solved) -> None:
        self.solving = False
        self.query_one("#solve-progress").display = False
        status = self.query_one("#solve-status", Label)
        if message.result is None:
            status.update("Stopped. F5 solves again.")
            return
        found = len(message.result.get("designs", []))
        status.update(f"{found} design{'s' * (found != 1)} found. F5 solves again.")
        from .results import ResultsScreen

        self.app.push_screen(ResultsScreen(message.result))

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "solve" and event.state == WorkerState.ERROR:
            self.solving = False
            self.query_one("#solve-progress").display = False
            self.query_one("#solve-status", Label).update(f"The solver stopped with an error: {event.worker.error}")

    def action_stop_or_back(self) -> None:
        if self.solving:
            self.cancel.set()
            self.query_one("#solve-status", Label).update("Stopping…")
        else:
            self.app.pop_screen()

    def action_reset(self) -> None:
        for name, f in FIELDS.items():
            self.query_one(f"#r-{name}", Input).value = f.default
        self.query_one("#topology", Select).value = TOPOLOGIES[0]
        self.query_one("#depth", Select).value = DEFAULT_DEPTH
