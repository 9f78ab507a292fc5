"""The design-side screens driven with Pilot: sheet plots at any size, the request form, the trade view.

Documents are the demo job's, with the trade-off keys added by hand (tests/trade_docs.py).
"""

from __future__ import annotations

import threading
import time

import pytest
from textual.widgets import DataTable, Input, Label, ProgressBar, Select, Static

from optimizer.spec import DEFAULT_TOP
from tui.app import make_app
from tui.screens.request import RequestScreen
from tui.screens.results import ResultsScreen
from tui.screens.sheet import SheetScreen
from tui.widgets import chart
from tui.widgets.tradeplot import TradePlot

from .app_fixtures import demo_drawer, type_into  # noqa: F401  (fixtures)
from .trade_docs import old_doc, trade_doc

pytestmark = pytest.mark.tui


async def open_sheet(pilot, doc, rank=1):
    pilot.app.push_screen(SheetScreen(rank, doc["designs"][rank - 1], doc))
    await pilot.pause()
    assert isinstance(pilot.app.screen, SheetScreen)


def charts_drawn(app) -> list[str]:
    return [str(c.render()) for c in app.screen.query(chart.Chart)]


# ---- issue: ctrl+p → key list → End crashed the sheet's plot (log10 of 0) -------------------------

async def test_sheet_with_key_list_and_end_at_80x24(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("ctrl+p", *"Key list")
        await pilot.pause(0.3)
        await pilot.press("enter")
        await pilot.pause()
        assert app.screen.query("HelpPanel"), "the key list opens from the palette"
        await pilot.press("end")
        await pilot.pause(0.3)
        assert len(charts_drawn(app)) == 2 and app.is_running
    assert app.return_code in (None, 0)


@pytest.mark.parametrize("width", [50, 40])
async def test_sheet_survives_narrowing(demo_drawer, width):
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        await open_sheet(pilot, trade_doc())
        await pilot.press("f1", "end")
        await pilot.pause()
        await pilot.resize_terminal(width, 24)
        await pilot.pause(0.3)
        await pilot.press("pageup", "end")
        await pilot.pause(0.3)
        for drawn in charts_drawn(app):
            assert drawn == chart.TOO_SMALL or "┤" in drawn
        assert app.is_running
    assert app.return_code in (None, 0)


async def test_histogram_is_explained(demo_drawer):
    doc = trade_doc()
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await open_sheet(pilot, doc)
        caption = str(app.screen.query_one("#histogram-caption", Static).render())
        shown, n = len(doc["designs"][0]["mc"]["gain"]), doc["designs"][0]["mc"]["n"]
        assert f"{shown} builds are shown" in caption and f"of the {n} behind the yield" in caption
        assert "tolerance" in caption and "hFE" in caption and "°C" in caption


# ---- the request form --------------------------------------------------------------------------------

async def test_follower_drops_the_gain_and_its_stale_error(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, RequestScreen)
        await type_into(pilot, "#r-gain", "12q")
        assert app.screen.query_one("#r-gain", Input).has_class("-invalid")
        app.screen.query_one("#topology", Select).value = "emitter-follower"
        await pilot.pause()
        gain = app.screen.query_one("#r-gain", Input)
        assert gain.disabled and not gain.has_class("-invalid")
        assert "follower" in str(app.screen.query_one("#m-gain", Label).render())
        assert app.screen.request()[0] is not None  # the request is complete without a gain


async def test_search_gets_every_option_and_shows_progress_then_stops(demo_drawer, monkeypatch):
    from optimizer.search import select

    seen = {}
    doc = trade_doc()
    reported = threading.Event()

    def find_designs(drawer, spec, *, progress=None, cancel=None, **kw):
        seen.update(kw, spec=spec)
        progress(0.4, "screening divider values")
        reported.set()
        cancel.wait(5)  # an anytime search: on cancel it hands back the best found so far
        return {**doc, "designs": doc["designs"][:2]}

    monkeypatch.setattr(select, "find_designs", find_designs)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("d")
        await pilot.pause()
        screen = app.screen
        await type_into(pilot, "#r-time_limit", "4 s")
        await type_into(pilot, "#r-max_thd", "2%")
        await type_into(pilot, "#r-min_yield", "0.8")
        screen.query_one("#prefer", Select).value = "clean"
        await pilot.pause()
        await pilot.press("f5")
        for _ in range(50):
            await pilot.pause(0.05)
            if reported.is_set() and "screening" in str(screen.query_one("#solve-status", Label).render()):
                break
        assert screen.query_one("#solve-progress", ProgressBar).progress == pytest.approx(0.4)
        assert seen["prefer"] == "clean" and seen["time_limit_s"] == 4.0 and seen["min_yield"] == 0.8
        assert seen["top"] == DEFAULT_TOP and seen["spec"].max_thd == 0.02
        started = time.monotonic()
        await pilot.press("escape")
        while not isinstance(app.screen, ResultsScreen) and time.monotonic() - started < 2:
            await pilot.pause(0.05)
        assert time.monotonic() - started < 1.0 + 0.5  # within the second (plus the test's own ticking)
        assert isinstance(app.screen, ResultsScreen) and len(app.screen.designs) == 2
        assert "Stopped early" in str(app.screen.query_one("#status", Static).render())


async def test_stop_says_so_within_a_second_when_the_search_is_slow_to_hand_back(demo_drawer, monkeypatch):
    from optimizer.search import select

    release = threading.Event()

    def find_designs(drawer, spec, *, progress=None, cancel=None, **kw):
        progress(0.1, "starting")
        release.wait(5)  # a search that does not look at `cancel` in time
        return {"designs": [], "why": ["cancelled"]}

    monkeypatch.setattr(select, "find_designs", find_designs)
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("d")
        await pilot.pause()
        screen = app.screen
        await pilot.press("f5")
        await pilot.pause(0.2)
        await pilot.press("escape")
        await pilot.pause(1.3)
        assert not screen.solving and "Stopped" in str(screen.query_one("#solve-status", Label).render())
        release.set()
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert app.screen is screen  # the late answer is dropped


# ---- the trade view --------------------------------------------------------------------------------

async def test_results_show_the_trade_and_follow_the_cursor(demo_drawer):
    doc = trade_doc()
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        app.push_screen(ResultsScreen(doc))
        await pilot.pause()
        table = app.screen.query_one("#designs", DataTable)
        rows = [" ".join(str(c) for c in table.get_row_at(i)) for i in range(table.row_count)]
        assert "balanced" in rows[0] and "fewest parts, least current" in rows[1] and "cleanest, most robust" in rows[2]
        assert "0.42 %" in rows[0] and "31.0 %" in rows[0] and "900 µA" in rows[0]  # THD, margin, current (SI)
        assert "left unexplored: networks of 3 parts for RC" in str(app.screen.query_one("#status").render())
        plot = app.screen.query_one("#trade", TradePlot)
        assert plot.chosen == 1
        await pilot.press("down")
        await pilot.pause()
        assert plot.chosen == 2
        assert "Q1 " in str(app.screen.query_one("#chosen-values", Static).render())
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SheetScreen) and app.screen.rank == 2
        assert app.screen.design is doc["designs"][1]


async def test_older_saved_documents_still_show(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        app.push_screen(ResultsScreen(old_doc()))
        await pilot.pause()
        table = app.screen.query_one("#designs", DataTable)
        assert table.row_count == len(old_doc()["designs"])
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SheetScreen)


async def test_a_build_record_reopens_the_same_sheet(demo_drawer):
    import json

    from tui.screens.sheet import build_record

    doc = trade_doc()
    record = json.loads(json.dumps(build_record(2, doc["designs"][1], doc)))  # as a journal line keeps it
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        app.push_screen(SheetScreen.from_record(record))
        await pilot.pause()
        assert app.screen.rank == 2 and app.screen.design == doc["designs"][1]
        assert app.screen.result["spec"] == doc["spec"]
        assert "design #2" in str(app.screen.query(Label).first().render())


@pytest.mark.parametrize(("status", "title", "says"), [
    ("infeasible", "No design meets this request", None),
    ("unproven", "No design found yet", "not proven impossible"),
])
async def test_no_design_says_whether_it_is_proven(demo_drawer, status, title, says):
    doc = {"designs": [], "why": ["gain: the stage cannot reach 400 on 5 V"], "hints": [], "status": status,
           "optimal": status == "infeasible", "unexplored": None}
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        app.push_screen(ResultsScreen(doc))
        await pilot.pause()
        assert title in str(app.screen.query(Label).first().render())
        assert "cannot reach 400" in str(app.screen.query_one("#why", Static).render())
        status_widgets = app.screen.query("#status")
        if says is None:
            assert not status_widgets
        else:
            assert says in str(status_widgets.first().render())
        await pilot.press("enter")  # nothing to open: no crash, stays
        await pilot.pause()
        assert isinstance(app.screen, ResultsScreen)
