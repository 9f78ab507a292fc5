"""The terminal app driven with Textual's Pilot on a copy of the real demo drawer.

Every check reads the drawer file back with `inventory.drawer` (not the app's own
state), so what is asserted is what a user would find on disk.
"""

from __future__ import annotations

import pytest
from textual.widgets import DataTable, Input, Label

from inventory.drawer import Drawer
from inventory.values import parse_resistance
from tui.app import DARK, LIGHT, make_app
from tui.screens.dialogs import ConfirmDialog, CountDialog
from tui.screens.drawer import DrawerScreen
from tui.screens.history import HistoryScreen
from tui.screens.part_form import PartForm
from tui.screens.request import RequestScreen

from .app_fixtures import demo_drawer, type_into  # noqa: F401  (fixtures)

pytestmark = pytest.mark.tui

SIZE = (100, 32)


def table_lines(app) -> list[int]:
    table = app.screen.query_one("#parts", DataTable)
    return [int(key.value) for key in table.rows]


async def only_line(pilot, text: str, path):
    """Filter the table down to the one line matching `text`; that line's Part as on disk."""
    await pilot.press("slash", *text, "enter")
    await pilot.pause()
    (line,) = table_lines(pilot.app)
    return Drawer.load(path).part_at(line)


async def test_filter_shows_exactly_the_matching_lines(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        assert isinstance(app.screen, DrawerScreen)
        drawer = Drawer.load(demo_drawer)
        assert sorted(table_lines(app)) == sorted(p.line for p in drawer.parts)
        await pilot.press("slash", "4", "k", "7")
        await pilot.pause()
        # 4k7 is RKM for 4.7 kΩ (IEC 60062); the demo spells it "4k7", "4.7k" and "4700".
        want = sorted(p.line for p in drawer.parts if p.kind == "resistor" and p.value == parse_resistance("4k7"))
        assert sorted(table_lines(app)) == want and len(want) == 3


async def test_sorting_by_quantity_orders_the_rows(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        # Kind is the first sort; six presses of "s" reach Qty (column 6).
        await pilot.press(*["s"] * 5)
        await pilot.pause()
        by_line = {p.line: p.qty for p in Drawer.load(demo_drawer).parts}
        qtys = [by_line[n] for n in table_lines(app)]
        assert qtys == sorted(qtys) and qtys[0] < qtys[-1]
        await pilot.press("S")
        await pilot.pause()
        qtys = [by_line[n] for n in table_lines(app)]
        assert qtys == sorted(qtys, reverse=True)


async def test_bad_value_in_add_form_is_refused_and_nothing_saved(demo_drawer):
    before = demo_drawer.read_bytes()
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("a")
        await pilot.pause()
        assert isinstance(app.screen, PartForm)
        await type_into(pilot, "#f-value", "4k7k")
        await type_into(pilot, "#f-qty", "5")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, PartForm), "the form must stay open"
        error = str(app.screen.query_one("#e-value", Label).render())
        assert "4k7k" in error and "resistance" in error
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
    assert demo_drawer.read_bytes() == before
    assert not demo_drawer.with_name("drawer.journal.jsonl").exists() or \
        demo_drawer.with_name("drawer.journal.jsonl").read_text() == ""


async def test_good_part_is_added_then_undone(demo_drawer):
    before = demo_drawer.read_bytes()
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("a")
        await pilot.pause()
        await type_into(pilot, "#f-value", "3k3")
        await type_into(pilot, "#f-qty", "7")
        await type_into(pilot, "#f-tolerance", "1%")
        await type_into(pilot, "#f-location", "Z9")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
        added = [p for p in Drawer.load(demo_drawer).parts if p.location == "Z9"]
        assert len(added) == 1
        assert (added[0].kind, added[0].value, added[0].qty, added[0].tolerance) == ("resistor", 3300.0, 7, 0.01)
        assert added[0].line in table_lines(app)
        await pilot.press("h")
        await pilot.pause()
        assert isinstance(app.screen, HistoryScreen)
        await pilot.press("u")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("y")
        await pilot.pause()
    assert demo_drawer.read_bytes() == before


async def test_count_change_and_removal(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        part = await only_line(pilot, "2N3904", demo_drawer)
        line, before = part.line, part.qty
        await pilot.press("c")
        await pilot.pause()
        assert isinstance(app.screen, CountDialog)
        await type_into(pilot, "#qty", "-3")
        await pilot.press("enter")
        await pilot.pause()
        assert Drawer.load(demo_drawer).part_at(line).qty == before - 3
        # A count below zero is refused in place.
        await pilot.press("c")
        await pilot.pause()
        await type_into(pilot, "#qty", f"-{before}")
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, CountDialog)
        assert "below 0" in str(app.screen.query_one("#qty-error", Label).render())
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("x")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        assert all(p.part != "2N3904" for p in Drawer.load(demo_drawer).parts)


async def test_request_fields_are_checked_as_typed(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, RequestScreen)
        await type_into(pilot, "#r-load", "22q")
        note = str(app.screen.query_one("#m-load", Label).render())
        assert "22q" in note and "resistance" in note
        assert app.screen.query_one("#r-load", Input).has_class("-invalid")
        await type_into(pilot, "#r-load", "22k")
        # A swing as large as the supply cannot fit (Spec.problems); the reason lands beside Swing.
        await type_into(pilot, "#r-swing", "12V")
        note = str(app.screen.query_one("#m-swing", Label).render())
        assert "12 V supply" in note
        await pilot.press("f5")
        await pilot.pause()
        assert "Fix the fields" in str(app.screen.query_one("#solve-status", Label).render())
        assert not app.workers


async def test_theme_toggle_and_palette(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        assert app.theme == DARK
        await pilot.press("f2")
        assert app.theme == LIGHT
        await pilot.press("ctrl+p")
        await pilot.pause()
        await pilot.press(*"Design")
        await pilot.pause(0.3)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, RequestScreen)


async def test_problems_in_the_file_are_listed(demo_drawer):
    with demo_drawer.open("a", encoding="utf-8") as f:
        f.write("resistor,4k7k,3,5%,1/4W,,,,,,,,,,B3,typo\n")
    problems = Drawer.load(demo_drawer).problems
    assert any(p.severity == "error" for p in problems)
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE):
        panel = app.screen.query_one("#problems")
        assert panel.display
        shown = str(app.screen.query_one("#problem-text").render())
        for problem in problems:
            assert str(problem) in shown


def test_missing_drawer_file_is_an_error_not_a_traceback(tmp_path, capsys):
    from tui.cli import main

    assert main(["--inventory", str(tmp_path / "nowhere.csv")]) == 2
    err = capsys.readouterr().err
    assert "nowhere.csv" in err and "does not exist" in err and "Traceback" not in err


async def test_edit_changes_the_line_and_keeps_the_rest(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        old = await only_line(pilot, "2N3904", demo_drawer)
        await pilot.press("e")
        await pilot.pause()
        assert isinstance(app.screen, PartForm)
        assert app.screen.query_one("#f-hfe_min", Input).value == "100"  # the cells as typed in the file
        await type_into(pilot, "#f-location", "D9")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
    now = [p for p in Drawer.load(demo_drawer).parts if p.part == "2N3904"]
    assert len(now) == 1 and now[0].location == "D9"
    assert now[0].line == old.line  # edited in place, not moved to the end
    assert (now[0].qty, now[0].hfe_min, now[0].hfe_max, now[0].vceo_v) == (old.qty, old.hfe_min, old.hfe_max,
                                                                            old.vceo_v)
