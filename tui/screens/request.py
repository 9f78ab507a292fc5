"""The design request: what the stage must do, checked as typed, searched for in a thread.

The fields, their defaults and their parsers are `tui.request_fields` (shared with the CLI);
this screen only lays them out.  The search runs in a thread worker, reports progress by
messages, and Esc sets its cancel event: within a second the screen shows the best designs
found so far, or says the search was stopped.
"""

from __future__ import annotations

import threading

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.message import Message
from textual.screen import Screen
from textual.validation import ValidationResult, Validator
from textual.widgets import Footer, Input, Label, ProgressBar, Select
from textual.worker import Worker, WorkerState

from .. import request_fields as rf
from ..widgets.masthead import Masthead

STOP_GRACE_S = 1.0  # after Esc, how long the screen waits for the search's best-so-far


class FieldCheck(Validator):
    def __init__(self, parse) -> None:
        super().__init__()
        self.parse = parse

    def validate(self, value: str) -> ValidationResult:
        if value.strip() == "":
            return self.success()  # an empty required field is reported by the request check
        try:
            self.parse(value)
        except ValueError as exc:
            return self.failure(str(exc))
        return self.success()


class SolveProgress(Message):
    """From the searching thread: how far it is."""

    def __init__(self, run: int, fraction: float, text: str) -> None:
        super().__init__()
        self.run, self.fraction, self.text = run, fraction, text

    def can_replace(self, message: Message) -> bool:
        return isinstance(message, SolveProgress)


class Solved(Message):
    """From the searching thread: the design result document, or None when stopped with nothing."""

    def __init__(self, run: int, result: dict | None) -> None:
        super().__init__()
        self.run, self.result = run, result


def _choice_row(label: str, choices, value, widget_id: str) -> Horizontal:
    return Horizontal(Label(label, classes="field-label"),
                      Select(list(choices), value=value, allow_blank=False, id=widget_id, compact=True),
                      classes="field")


class RequestScreen(Screen):
    """Fill in the request; F5 finds stages, Esc stops a search or goes back."""

    BINDINGS = [
        Binding("f5,ctrl+s", "solve", "Find stages", id="request.solve",
                tooltip="Search the drawer for stages that meet this request"),
        Binding("escape", "stop_or_back", "Stop/back", id="request.back",
                tooltip="Stop the search (keeping the best found so far), or go back to the drawer"),
        Binding("ctrl+r", "reset", "Start afresh", id="request.reset", tooltip="Put every field back to its default"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.cancel = threading.Event()
        self.solving = False
        self.run_id = 0

    def compose(self) -> ComposeResult:
        last = self.app.last_request  # the request searched last, as it was typed
        yield Masthead()
        with VerticalScroll(id="request"):
            yield _choice_row("Stage", rf.TOPOLOGY_CHOICES, last.get("topology", rf.APP_CHOICES["topology"]),
                              "topology")
            for key, title in rf.GROUPS:
                yield Label(title, classes="group-title")
                for f in rf.FIELDS:
                    if f.group != key:
                        continue
                    with Horizontal(classes="field", id=f"row-{f.name}"):
                        yield Label(f.label, classes="field-label")
                        yield Input(last.get(f.name, f.default), id=f"r-{f.name}", compact=True,
                                    validators=[FieldCheck(f.parse)], validate_on=["changed"],
                                    placeholder=f.default or f.blank)
                        yield Label(f.hint, id=f"m-{f.name}", classes="field-note")
                if key == "search":
                    yield _choice_row("Network depth", rf.DEPTH_CHOICES,
                                      last.get("depth", rf.CHOICE_DEFAULTS["depth"]), "depth")
                    yield _choice_row("Which first", rf.PREFER_CHOICES,
                                      last.get("prefer", rf.CHOICE_DEFAULTS["prefer"]), "prefer")
            yield Label("", id="request-problems", classes="field-error")
            yield ProgressBar(total=1.0, show_eta=False, id="solve-progress")
            yield Label("F5 finds stages from the parts in the drawer.", id="solve-status")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        self.query_one("#solve-progress").display = False
        self.query_one("#r-gain", Input).focus()
        self.check()

    # ---- checking ------------------------------------------------------------------------

    def texts(self) -> dict[str, str]:
        return {f.name: self.query_one(f"#r-{f.name}", Input).value for f in rf.FIELDS}

    def choices(self) -> dict[str, object]:
        return {name: self.query_one(f"#{name}", Select).value for name in ("topology", "depth", "prefer")}

    def request(self):
        """(Spec or None, find_designs keywords, problems by field name)."""
        return rf.build_request(self.texts(), self.choices())

    @on(Input.Changed)
    @on(Select.Changed)
    def check(self):
        spec, _, found = self.request()
        topology = self.query_one("#topology", Select).value
        preset = rf.preset_gain(topology)
        for f in rf.FIELDS:
            note = self.query_one(f"#m-{f.name}", Label)
            note.update(found.get(f.name, f.hint))
            note.set_class(f.name in found, "-problem")
            self.query_one(f"#r-{f.name}", Input).set_class(f.name in found, "-invalid")
        if "min_rin" not in found:
            self.query_one("#m-min_rin", Label).update(rf.rin_floor_text(self.query_one("#r-source", Input).value))
        # A follower's gain is not asked for: just under 1 by nature.
        gain = self.query_one("#r-gain", Input)
        gain.disabled = preset is not None
        if preset is not None:
            self.query_one("#m-gain", Label).update(f"set by the {topology}: {preset:g}")
            gain.set_class(False, "-invalid")
        problems = self.query_one("#request-problems", Label)
        problems.update(found.get("", ""))
        problems.display = "" in found
        return spec

    # ---- searching -----------------------------------------------------------------------

    @on(Input.Submitted)
    def action_solve(self) -> None:
        if self.solving:
            return
        self.check()
        spec, search_kw, found = self.request()
        status = self.query_one("#solve-status", Label)
        if spec is None:
            status.update("Fix the fields marked in red first.")
            return
        if self.app.drawer is None:
            status.update(self.app.load_error or "No drawer file")
            return
        self.app.last_request = {**self.texts(), **self.choices()}
        self.cancel = threading.Event()
        self.solving = True
        self.run_id += 1
        bar = self.query_one("#solve-progress", ProgressBar)
        bar.display = True
        bar.update(progress=0.0)
        limit = search_kw.get("time_limit_s")
        status.update(f"Searching (at most {limit:g} s; Esc stops and keeps the best so far)…")
        self.solve(self.run_id, self.app.drawer, spec, search_kw, self.cancel)

    @work(thread=True, exclusive=True, group="solve", exit_on_error=False)
    def solve(self, run: int, drawer, spec, search_kw: dict, cancel: threading.Event) -> None:
        # Imported here: the solver pulls in OR-Tools, which the drawer view never needs.
        from optimizer.search.select import find_designs

        def progress(fraction: float, text: str) -> None:
            self.post_message(SolveProgress(run, fraction, text))

        try:
            result = find_designs(drawer, spec, progress=progress, cancel=cancel, **search_kw)
        except Exception:
            if not cancel.is_set():
                raise  # a real failure: the worker reports it (on_worker_state_changed)
            result = None  # stopped on request; how the solver unwinds is its own business
        if cancel.is_set() and not (result or {}).get("designs"):
            result = None
        self.post_message(Solved(run, result))

    def on_solve_progress(self, message: SolveProgress) -> None:
        if self.solving and message.run == self.run_id and not self.cancel.is_set():
            self.query_one("#solve-progress", ProgressBar).update(progress=max(0.0, min(1.0, message.fraction)))
            self.query_one("#solve-status", Label).update(f"{message.text} (Esc stops)")

    def finish(self, text: str) -> None:
        self.solving = False
        self.query_one("#solve-progress").display = False
        self.query_one("#solve-status", Label).update(text)

    def on_solved(self, message: Solved) -> None:
        if message.run != self.run_id or not self.solving:
            return  # a search the user stopped and gave up waiting for
        stopped = self.cancel.is_set()
        if message.result is None:
            self.finish("Stopped; nothing found before the stop. F5 searches again.")
            return
        result = message.result
        if stopped:
            result = {**result, "stopped": True}
        found = len(result.get("designs", []))
        self.finish(f"{found} design{'s' * (found != 1)} found{' before the stop' if stopped else ''}. "
                    "F5 searches again.")
        from .results import ResultsScreen

        self.app.push_screen(ResultsScreen(result))

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.worker.group == "solve" and event.state == WorkerState.ERROR and self.solving:
            self.finish(f"The search stopped with an error: {event.worker.error}")

    def give_up(self, run: int) -> None:
        """Esc was pressed a grace period ago and the search has not handed back yet."""
        if self.solving and run == self.run_id:
            self.finish("Stopped. F5 searches again.")

    def action_stop_or_back(self) -> None:
        if self.solving:
            self.cancel.set()
            self.query_one("#solve-status", Label).update("Stopping; keeping the best found so far…")
            run = self.run_id
            self.set_timer(STOP_GRACE_S, lambda: self.give_up(run))
        else:
            self.app.pop_screen()

    def action_reset(self) -> None:
        for f in rf.FIELDS:
            self.query_one(f"#r-{f.name}", Input).value = f.default
        for name, value in rf.APP_CHOICES.items():
            self.query_one(f"#{name}", Select).value = value
