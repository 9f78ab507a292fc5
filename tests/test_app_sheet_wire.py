"""The build sheet's keys in the app, driven with Pilot: write the sheet to a file, check the design in
ngspice, refuse a second build of the same design, and reopen a past build's sheet from the history.

Documents are the demo job's (tests/trade_docs.py) on a copy of the demo drawer.
"""

from __future__ import annotations

import csv
import errno
import io
import json
import re
import threading

import pytest
from textual.widgets import DataTable, Label, RadioSet, Static
from textual.worker import WorkerState

from inventory.drawer import Drawer
from inventory.store import Store
from optimizer.physics import crosscheck as xc
from tui.app import make_app
from tui.cli import main
from tui.cmd_design import fingerprint
from tui.screens import sheet as sheet_screen
from tui.screens.dialogs import ConfirmDialog
from tui.screens.drawer import DrawerScreen
from tui.screens.export_dialog import ExportDialog
from tui.screens.history import HistoryScreen
from tui.screens.sheet import SheetScreen
from tui.widgets import crosscheck_panel as panel_module

from .app_fixtures import demo_drawer, type_into  # noqa: F401  (fixtures)
from .demo_job import DEMO
from .trade_docs import trade_doc

pytestmark = pytest.mark.tui


async def open_sheet(pilot, doc, rank=1):
    pilot.app.push_screen(SheetScreen(rank, doc["designs"][rank - 1], doc))
    await pilot.pause()
    assert isinstance(pilot.app.screen, SheetScreen)


async def settle(pilot):
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.pause()


def notes(app) -> list[str]:
    return [str(n.message) for n in app._notifications]


# ---- the sheet as a file (issue: "the same from the app's build sheet") ----------------------------

async def write_as(pilot, steps: int, path) -> None:
    """`w`, `steps` down the format list (html, svg, md, csv, cir), the path, Enter."""
    await pilot.press("w")
    await pilot.pause()
    assert isinstance(pilot.app.screen, ExportDialog)
    pilot.app.screen.query_one("#format", RadioSet).focus()
    await pilot.press(*["down"] * steps, "enter")
    await type_into(pilot, "#path", str(path))
    await pilot.press("enter")
    await settle(pilot)


async def test_md_and_csv_written_from_the_sheet(demo_drawer, tmp_path, monkeypatch):
    doc = trade_doc()
    design = doc["designs"][1]
    app = make_app(demo_drawer)
    # One path typed in full; the others relative to the working folder (a path is typed key by key,
    # which is most of these tests' time, and a relative path is as much a user's as a full one).
    monkeypatch.chdir(tmp_path)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, doc, rank=2)
        await write_as(pilot, 2, tmp_path / "sheet.md")
        await write_as(pilot, 3, "picks.csv")
        await write_as(pilot, 0, "sheet.html")  # plots drawn with matplotlib in the worker thread
        assert isinstance(app.screen, SheetScreen) and app.is_running
    html = (tmp_path / "sheet.html").read_text(encoding="utf-8")
    assert html.lstrip().lower().startswith("<!doctype html") and "<svg" in html
    md = (tmp_path / "sheet.md").read_text(encoding="utf-8")
    assert "Design 2 of `drawer.csv`" in md
    rows = list(csv.DictReader(io.StringIO((tmp_path / "picks.csv").read_text(encoding="utf-8"))))
    assert {"location", "line", "part", "value", "qty"} <= set(rows[0])
    # One row per drawer line the design takes, with the design's own quantities.
    assert {int(r["line"]): int(r["qty"]) for r in rows} == {u["line"]: u["qty"] for u in design["uses"]}
    assert demo_drawer.read_bytes() == Drawer.load(demo_drawer).to_bytes()


async def test_the_export_is_in_the_palette_and_a_bad_place_is_said_not_raised(demo_drawer, tmp_path, monkeypatch):
    app = make_app(demo_drawer)
    monkeypatch.chdir(tmp_path)  # paths typed relative to it: fewer keys (tests/app_fixtures.type_into)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("ctrl+p", *"Write out")
        await pilot.pause(0.3)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ExportDialog)
        await type_into(pilot, "#path", "no-such-folder/s.html")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ExportDialog)  # stays open, saying why
        assert "No folder" in str(app.screen.query_one("#path-error", Label).render())
        # The folder is fine but the write fails (a full disk): reported, nothing left behind.

        def full(path, data):
            raise OSError(errno.ENOSPC, "No space left on device")

        monkeypatch.setattr(sheet_screen, "atomic_write", full)
        await type_into(pilot, "#path", "s.html")
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, SheetScreen) and app.is_running
        assert any("No space left on device" in n for n in notes(app))
    assert list(tmp_path.iterdir()) == [demo_drawer]


async def test_a_file_that_exists_is_replaced_only_when_asked_twice(demo_drawer, tmp_path, monkeypatch):
    mine = tmp_path / "notes.md"
    mine.write_text("my own notes\n")
    app = make_app(demo_drawer)
    monkeypatch.chdir(tmp_path)  # paths typed relative to it: fewer keys (tests/app_fixtures.type_into)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("w")
        await pilot.pause()
        await type_into(pilot, "#path", mine.name)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ExportDialog)
        assert "exists" in str(app.screen.query_one("#path-error", Label).render())
        assert mine.read_text() == "my own notes\n"
        await pilot.press("escape")
        await pilot.pause()
        await write_as(pilot, 2, mine.name)  # md; asked once more below
        assert isinstance(app.screen, ExportDialog)
        await pilot.press("enter")
        await settle(pilot)
        assert isinstance(app.screen, SheetScreen)
    assert mine.read_text(encoding="utf-8").startswith("# Build sheet")


# ---- ngspice from the app (issue: "The ngspice check runs from the app in a Pilot test") ----------

@pytest.mark.ngspice
async def test_ngspice_check_runs_from_the_sheet(demo_drawer, ngspice):
    doc = trade_doc()
    design = doc["designs"][0]
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, doc)
        await pilot.press("n")
        await settle(pilot)
        status = str(app.screen.query_one("#xcheck-status", Static).render())
        table = app.screen.query_one("#xcheck", DataTable)
        rows = [table.get_row_at(i) for i in range(table.row_count)]
    assert status.startswith("ngspice agrees within"), status
    assert len(rows) == 7 * 3  # VB, VE, VC, gain, Rin, f_low, THD at hFE min, typical and max
    gain_typical = next(r for r in rows if r[0] == "Gain" and r[1].startswith("hFE typical"))
    assert gain_typical[2] == f"{design['predicted']['gain']:+.2f}"  # drawerfit's own figure, as the sheet spells it
    # ngspice (an independent simulator) agrees with drawerfit's model within 1 % on every figure
    # (tests/test_crosscheck.py holds the tighter per-figure bounds).
    for r in rows:
        assert abs(float(re.match(r"([-+0-9.]+) %", r[4]).group(1))) < 1.0, r


async def test_without_ngspice_the_sheet_says_how_to_install_it(demo_drawer, monkeypatch):
    monkeypatch.setattr(xc.shutil, "which", lambda name: None)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("n")
        await settle(pilot)
        status = str(app.screen.query_one("#xcheck-status", Static).render())
        assert status == xc.NOT_INSTALLED and "apt-get install ngspice" in status
        assert app.screen.query_one("#xcheck", DataTable).row_count == 0 and app.is_running


async def test_a_running_check_is_not_doubled_and_leaving_the_sheet_is_safe(demo_drawer, monkeypatch):
    release = threading.Event()

    def slow(design, spec, **kw):
        release.wait(10)
        return xc.CrossCheck(True, True, "done", [])

    monkeypatch.setattr(panel_module, "crosscheck", slow)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("n")
        await pilot.pause()
        assert "Simulating" in str(app.screen.query_one("#xcheck-status", Static).render())
        await pilot.press("n")
        await pilot.pause()
        assert any("still running" in n for n in notes(app))
        (worker,) = [w for w in app.workers if w.group == "ngspice"]
        await pilot.press("escape")  # leave while ngspice "runs": the worker stops waiting for it
        await settle(pilot)
        assert worker.state == WorkerState.CANCELLED and not release.is_set()
        assert isinstance(app.screen, DrawerScreen) and app.is_running
        release.set()


async def test_an_unexpected_failure_of_the_check_is_shown_not_raised(demo_drawer, monkeypatch):
    def broken(design, spec, **kw):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(panel_module, "crosscheck", broken)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("n")
        await settle(pilot)
        status = str(app.screen.query_one("#xcheck-status", Static).render())
        assert status.startswith("the ngspice check stopped") and "division by zero" in status
        await pilot.press("n")  # and it can be run again
        await pilot.pause()
        assert not any("still running" in n for n in notes(app))
    assert app.return_code in (None, 0)


# ---- building twice (issue 10, item 7) and the past build's sheet -------------------------------

def takes(path):
    return [e for e in Store(path).history() if e.action == "take"]


async def build(pilot, answer: str) -> str:
    await pilot.press("b")
    await pilot.pause()
    assert isinstance(pilot.app.screen, ConfirmDialog)
    question = str(pilot.app.screen.query_one(".dialog-title", Label).render())
    await pilot.press(answer)
    await pilot.pause()
    return question


async def test_second_build_asks_for_another_copy_and_the_history_reopens_the_sheet(demo_drawer):
    doc = trade_doc()
    design = doc["designs"][1]  # the demo drawer holds two copies' parts of design 2 (not of design 1)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, doc, rank=2)
        assert "Build this design" in await build(pilot, "y")
        assert isinstance(app.screen, DrawerScreen)
        once = demo_drawer.read_bytes()
        await open_sheet(pilot, doc, rank=2)
        assert "built already (change #1" in await build(pilot, "n")
        assert demo_drawer.read_bytes() == once and isinstance(app.screen, SheetScreen)
        assert "built already" in await build(pilot, "y")  # "Build another copy"
        assert len(takes(demo_drawer)) == 2, notes(app)
        first, second = takes(demo_drawer)
        assert second.reason.startswith("built another copy of design #2")
        tag = re.search(r"\[design [0-9a-f]{12}\]", first.reason).group(0)
        assert tag in second.reason
        assert first.design == second.design == json.loads(json.dumps({"rank": 2, "design": design,
                                                                         "spec": doc["spec"]}))

        await pilot.press("h")
        await pilot.pause()
        assert isinstance(app.screen, HistoryScreen)
        await pilot.press("s")  # the newest row: the second build
        await pilot.pause()
        assert isinstance(app.screen, SheetScreen)
        assert app.screen.rank == 2 and app.screen.design == json.loads(json.dumps(design))
        assert str(app.screen.query_one("#schematic", Static).render())  # drawn from the record
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, HistoryScreen)
    # Two copies' parts came off the counts, nothing else moved.
    before = {p.line: p.qty for p in Drawer.load(DEMO).parts}
    for u in design["uses"]:
        before[u["line"]] -= 2 * u["qty"]
    assert {p.line: p.qty for p in Drawer.load(demo_drawer).parts} == before


async def test_a_cli_build_is_refused_in_the_app_and_its_sheet_opens_from_the_history(demo_drawer, tmp_path):
    doc = trade_doc()
    lines = [u["line"] for d in doc["designs"] for u in d["uses"]]
    doc.update(inventory=str(demo_drawer), fingerprint=fingerprint(Drawer.load(demo_drawer), lines))
    file = tmp_path / "gain10.json"
    file.write_text(json.dumps(doc), encoding="utf-8")
    assert main(["--inventory", str(demo_drawer), "build", str(file), "--pick", "2"]) == 0
    Store(demo_drawer).set_qty(2, 3, "counted")  # a change with no sheet, newest in the history
    app = make_app(demo_drawer, open_file=file)  # `drawerfit open FILE`
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("down", "enter")  # design 2 of the saved file
        await pilot.pause()
        assert isinstance(app.screen, SheetScreen) and app.screen.rank == 2
        assert "built already" in await build(pilot, "n")
        await pilot.press("escape", "escape")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
        await pilot.press("h")
        await pilot.pause()
        await pilot.press("s")  # the count: no sheet, said so
        await pilot.pause()
        assert isinstance(app.screen, HistoryScreen)
        assert any("not a build (count)" in n for n in notes(app))
        await pilot.press("down", "s")
        await pilot.pause()
        assert isinstance(app.screen, SheetScreen) and app.screen.rank == 2
        assert app.screen.design == doc["designs"][1]
        assert "built already" in await build(pilot, "n")  # the record keeps the tag's fingerprint
    assert len(takes(demo_drawer)) == 1
