"""Screenshots of the main screens at 80×24 (the smallest supported terminal) and 100×32.

Baselines live in tests/__snapshots__/; after a deliberate change to a screen, look at
the report and regenerate with `pytest tests/test_snapshots.py --snapshot-update`.
The drawer is a copy of the real demo drawer opened by a relative name, so the
header (which shows the file) is the same on every machine.
"""

from __future__ import annotations

import pytest

from tui.app import make_app

from .app_fixtures import demo_drawer, steady_cursor  # noqa: F401  (fixtures)

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


async def open_best_sheet(pilot):
    """Design request with its defaults (gain 10, 12 V, 22k, 1k, 5 V p-p, 30 Hz, Rin ≥ 8k) → best sheet."""
    await pilot.press("d")
    await pilot.pause()
    await pilot.press("f5")
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.press("enter")
    await pilot.pause()


def test_results_80x24(snap_compare):
    async def solve(pilot):
        await pilot.press("d")
        await pilot.pause()
        await pilot.press("f5")
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()

    assert snap_compare(app(), run_before=solve, terminal_size=(80, 24))


def test_build_sheet_80x24(snap_compare):
    assert snap_compare(app(), run_before=open_best_sheet, terminal_size=(80, 24))


def test_build_sheet_lower_half_100x32(snap_compare):
    async def scroll(pilot):
        await open_best_sheet(pilot)
        await pilot.press("pagedown", "pagedown")
        await pilot.pause()

    assert snap_compare(app(), run_before=scroll, terminal_size=(100, 32))
