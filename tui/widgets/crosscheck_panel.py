"""The build sheet's ngspice section: runs the cross-check in a thread and shows ngspice beside drawerfit.

The simulation (optimizer.physics.crosscheck, one bounded ngspice run per hFE corner) runs in a thread
worker; the thread never touches a widget, it hands the result back with `call_from_thread`.
When ngspice is absent the engine's own message (how to install it) is shown.

The engine cannot be interrupted mid-run, so the worker runs it on a daemon thread and waits
for it in short steps: leaving the sheet or quitting cancels the worker at once (the result is
dropped; a running ngspice finishes its corner on its own), instead of holding the app's exit
for up to a corner's time limit.
"""

from __future__ import annotations

import threading

from textual import work
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import DataTable, Label, Static
from textual.worker import Worker, WorkerState, get_current_worker

from optimizer.chain.crosscheck import crosscheck_chain
from optimizer.physics.crosscheck import CrossCheck, crosscheck

from .. import crosscheck_text

TIMEOUT_S = 60.0  # per hFE corner; the demo job takes well under a second per corner
BAD_DESIGN = (KeyError, TypeError, ValueError, IndexError, AttributeError, RuntimeError)  # a hand-edited figure


class CrossCheckPanel(Vertical):
    """A title, a status line and the table (figure, corner, drawerfit, ngspice, deviation)."""

    DEFAULT_CSS = """
    CrossCheckPanel, CrossCheckPanel DataTable {
        height: auto;
    }
    """

    def __init__(self, design: dict, spec: dict, **kwargs) -> None:
        super().__init__(**kwargs)
        self.design, self.spec = design, spec
        self.running = False

    def compose(self) -> ComposeResult:
        yield Label("ngspice beside drawerfit", classes="section-title")
        yield Static("", id="xcheck-status")
        yield DataTable(id="xcheck", cursor_type="none", zebra_stripes=True)

    def start(self) -> bool:
        """Run the check (False: one is running already)."""
        if self.running:
            return False
        self.running = True
        which = "both transistors' hFE" if self.design.get("stages") else "hFE"
        self.query_one("#xcheck-status", Static).update(f"Simulating in ngspice at {which} min, typical and max …")
        self.query_one("#xcheck", DataTable).clear(columns=True)
        self.simulate()
        return True

    @work(thread=True, exclusive=True, group="ngspice", exit_on_error=False)
    def simulate(self) -> None:
        worker = get_current_worker()
        done, box = threading.Event(), {}

        def run() -> None:
            try:
                check = crosscheck_chain if self.design.get("stages") else crosscheck  # a chain: both transistors
                box["check"] = check(self.design, self.spec, timeout_s=TIMEOUT_S)
            except BAD_DESIGN as exc:  # the engine reports ngspice's own troubles; this is a damaged design
                box["check"] = CrossCheck(True, False, f"this design cannot be simulated ({exc!r})")
            except Exception as exc:  # handed to the worker, which reports it (on_worker_state_changed)
                box["error"] = exc
            finally:
                done.set()

        threading.Thread(target=run, name="drawerfit-ngspice", daemon=True).start()
        while not done.wait(0.1):
            if worker.is_cancelled:
                return
        if "error" in box:
            raise box["error"]
        self.app.call_from_thread(self.show, box["check"])

    def show(self, check: CrossCheck) -> None:
        self.running = False
        if not self.is_mounted:  # the sheet was left while ngspice ran
            return
        self.query_one("#xcheck-status", Static).update(check.message)
        table = self.query_one("#xcheck", DataTable)
        table.clear(columns=True)
        if check.rows:
            table.add_columns(*crosscheck_text.COLUMNS)
            table.add_rows(crosscheck_text.table_rows(check.rows))

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.state == WorkerState.ERROR:
            self.show(CrossCheck(True, False, f"the ngspice check stopped: {event.worker.error!r}"))
