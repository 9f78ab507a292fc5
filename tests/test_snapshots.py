"""Screenshots of the main screens at 80×24 (the smallest supported terminal) and 100×32.

Baselines live in tests/__snapshots__/; after a deliberate change to a screen, look at
the report and regenerate with `pytest tests/test_snapshots.py --snapshot-update`.
The drawer is a copy of the real demo drawer opened by a relative name, so the
header (which shows the file) is the same on every machine.
"""

from __future__ import annotations

import pytest

from tui.app import make_app
from tui.screens.results import ResultsScreen
from tui.screens.sheet import SheetScreen

from .app_fixtures import demo_drawer, steady_cursor  # noqa: F401  (fixtures)
from .trade_docs import trade_doc

pytestmark = pytest.mark.tui


@pytest.fixture(autouse=True)
def _steady(steady_cursor, demo_drawer, monkeypatch):
    monkeypatch.chdir(demo_drawer.parent)


def app():
    return make_app("drawer.csv")


def test_drawer_view_80x24(snap_compare):
    assert snap_compare(app(), terminal_size=(80, 24))


def test_drawer_view_filtered_light_100x32(snap_compare):
    assert snap_compare(app(), press=["f2", "slash", *"cap 10u"], terminal_size=(100, 32))


def test_add_form_refuses_bad_value_80x24(snap_compare):
    async def fill(pilot):
        await pilot.press("a")
        await pilot.pause()
        await pilot.press(*"4k7k", "ctrl+s")

    assert snap_compare(app(), run_before=fill, terminal_size=(80, 24))


def test_design_request_80x24(snap_compare):
    assert snap_compare(app(), press=["d"], terminal_size=(80, 24))


async def show(pilot, screen):
    pilot.app.push_screen(screen)
    await pilot.pause()


def test_design_request_follower_80x24(snap_compare):
    async def follower(pilot):
        await pilot.press("d")
        await pilot.pause()
        pilot.app.screen.query_one("#topology").value = "emitter-follower"
        await pilot.pause()

    assert snap_compare(app(), run_before=follower, terminal_size=(80, 24))


# Results and sheets show a fixed document (tests/data/trade_doc.json), so they do not move with the solver.

def test_results_80x24(snap_compare):
    assert snap_compare(app(), run_before=lambda pilot: show(pilot, ResultsScreen(trade_doc())),
                        terminal_size=(80, 24))


def test_results_second_chosen_light_100x32(snap_compare):
    async def second(pilot):
        await pilot.press("f2")
        await show(pilot, ResultsScreen(trade_doc()))
        await pilot.press("down")
        await pilot.pause()

    assert snap_compare(app(), run_before=second, terminal_size=(100, 32))


def sheet():
    doc = trade_doc()
    return SheetScreen(1, doc["designs"][0], doc)


def test_build_sheet_80x24(snap_compare):
    assert snap_compare(app(), run_before=lambda pilot: show(pilot, sheet()), terminal_size=(80, 24))


def test_build_sheet_plots_80x24(snap_compare):
    async def plots(pilot):
        await show(pilot, sheet())
        await pilot.press("end")
        await pilot.pause()

    assert snap_compare(app(), run_before=plots, terminal_size=(80, 24))


def test_build_sheet_lower_half_100x32(snap_compare):
    async def scroll(pilot):
        await show(pilot, sheet())
        await pilot.press("pagedown", "pagedown")
        await pilot.pause()

    assert snap_compare(app(), run_before=scroll, terminal_size=(100, 32))


def test_build_sheet_key_list_at_the_end_80x24(snap_compare):
    # Regression: the key list narrows the sheet and End brings the plots into view (once a crash).
    async def keys_then_end(pilot):
        await show(pilot, sheet())
        await pilot.press("f1", "end")
        await pilot.pause()

    assert snap_compare(app(), run_before=keys_then_end, terminal_size=(80, 24))
