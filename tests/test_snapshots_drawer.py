"""Screenshots of the drawer-side screens that show a state the main snapshots do not:
lines with errors, a filter that matches nothing, the history with an undo dialog.

Regenerate after a deliberate change with `--snapshot-update`, having looked at the report.
"""

from __future__ import annotations

import pytest

from inventory.drawer import Drawer
from inventory.store import Store
from tui.app import make_app

from .app_fixtures import demo_drawer, steady_cursor  # noqa: F401  (fixtures)

pytestmark = pytest.mark.tui

BROKEN = "resistor,4k7k,3,5%,1/4W,,,,,,,,,,B3,typo\ncapacitor,100n,x,,,,,,,,,,,,C1,\n"


@pytest.fixture(autouse=True)
def _steady(steady_cursor, demo_drawer, monkeypatch):
    monkeypatch.chdir(demo_drawer.parent)
    # Journal times fixed, so the history screen is the same on every run.
    monkeypatch.setattr("inventory.store.now_iso", lambda: "2026-12-01T08:30:00.000Z")


def app():
    return make_app("drawer.csv")


def test_lines_with_errors_80x24(snap_compare, demo_drawer):
    with demo_drawer.open("a", encoding="utf-8") as f:
        f.write(BROKEN)
    assert snap_compare(app(), terminal_size=(80, 24))


def test_filter_matching_nothing_80x24(snap_compare):
    assert snap_compare(app(), press=["slash", *"zz9"], terminal_size=(80, 24))


def test_history_undo_dialog_80x24(snap_compare, demo_drawer):
    store = Store(demo_drawer)
    line = Drawer.load(demo_drawer).parts[0].line
    for qty in (5, 6, 7):
        store.load()
        store.set_qty(line, qty, reason=f"counted {qty} at the bench")
    store.load()
    store.undo(2, reason="undo of #2")
    assert snap_compare(app(), press=["h", "u"], terminal_size=(80, 24))
