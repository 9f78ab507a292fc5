"""The app on a saved chain design: the trade view opens its build sheet, which draws both stages and
gives the meter checks of both transistors."""

from __future__ import annotations

import shutil

import pytest
from textual.widgets import Static

from tests.chain_job import DRAWER
from tui.app import make_app

pytestmark = pytest.mark.tui


@pytest.fixture(scope="module")
def saved(tmp_path_factory, chain_saved):
    # The chain `drawerfit design --save` wrote once this session (tests/conftest.py), opened on a
    # private copy of its drawer.
    folder = tmp_path_factory.mktemp("chain")
    drawer = folder / "drawer.csv"
    shutil.copy(DRAWER, drawer)
    path = folder / "chain.json"
    shutil.copy(chain_saved[1], path)
    return drawer, path


async def test_chain_sheet_shows_both_stages(saved):
    drawer, path = saved
    app = make_app(inventory_path=str(drawer), open_file=str(path))
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause()
        assert type(app.screen).__name__ == "SheetScreen"
        drawing = str(app.screen.query_one("#schematic", Static).render())
        meter = str(app.screen.query_one("#meter", Static).render())
    assert "Stage 1 (common-emitter)" in drawing and "Stage 2 (emitter-follower)" in drawing
    assert "CIN_B" in drawing
    for point in ("Q1 VB", "Q1 VC", "Q2 VB", "Q2 VE"):
        assert point in meter
