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


# ---- issue: editing each kind of line; lines with errors shown and fixable ----------------

async def choose_line(pilot, line: int) -> None:
    """Put the drawer table's cursor on drawer line `line`."""
    table = pilot.app.screen.query_one("#parts", DataTable)
    table.focus()
    table.move_cursor(row=table.get_row_index(str(line)))
    await pilot.pause()


def first_line(path, kind: str) -> int:
    return next(p.line for p in Drawer.load(path).parts if p.kind == kind and p.qty != 7)


def raw_lines(path) -> list[str]:
    return path.read_bytes().decode("utf-8").splitlines(keepends=True)


@pytest.mark.parametrize("kind", ["resistor", "capacitor", "transistor"])
async def test_edit_opens_on_every_kind_and_a_typed_count_lands_in_qty(demo_drawer, kind):
    line = first_line(demo_drawer, kind)
    before = raw_lines(demo_drawer)
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await choose_line(pilot, line)
        await pilot.press("e")
        await pilot.pause()
        assert isinstance(app.screen, PartForm), app._exception
        assert app.screen.query_one("#kind").value == kind
        # The form opens on the count with its text selected: typing a number replaces the count.
        await pilot.press("7", "ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
        assert app.is_running and app._exception is None
    after = raw_lines(demo_drawer)
    # Only that line changed, and in it only the qty cell (column 3 of the demo's header).
    assert [i for i, (a, b) in enumerate(zip(before, after, strict=True)) if a != b] == [line - 1]
    old_cells, new_cells = before[line - 1].split(","), after[line - 1].split(",")
    assert new_cells[2] == "7"
    assert old_cells[:2] + old_cells[3:] == new_cells[:2] + new_cells[3:]
    part = Drawer.load(demo_drawer).part_at(line)
    assert part.kind == kind and part.qty == 7
    entry = app.store.history()[-1]
    assert entry.action == "count" and [c.line for c in entry.changes] == [line]


async def test_transistor_form_keeps_type_and_count_apart(demo_drawer):
    line = first_line(demo_drawer, "transistor")
    old = Drawer.load(demo_drawer).part_at(line)
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await choose_line(pilot, line)
        await pilot.press("e")
        await pilot.pause()
        assert app.screen.query_one("#f-part", Input).value == old.part
        await type_into(pilot, "#f-qty", "12")
        await type_into(pilot, "#f-location", "T1")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
    new = Drawer.load(demo_drawer).part_at(line)
    assert (new.part, new.qty, new.location, new.polarity) == (old.part, 12, "T1", old.polarity)


BROKEN = ["resistor,4k7k,3,5%,1/4W,,,,,,,,,,B3,typo\n", "capacitor,100n,x,,,,,,,,,,,,C1,\n"]


@pytest.fixture
def broken_drawer(demo_drawer):
    with demo_drawer.open("a", encoding="utf-8") as f:
        f.writelines(BROKEN)
    return demo_drawer


async def test_lines_with_errors_are_shown_marked_and_counted(broken_drawer):
    drawer = Drawer.load(broken_drawer)
    n_lines = len(raw_lines(broken_drawer)) - 1  # data lines (header excluded)
    bad = [n_lines, n_lines + 1]  # file line numbers of the two appended lines
    assert all(drawer.part_at(n) is None for n in bad)
    app = make_app(broken_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        table = app.screen.query_one("#parts", DataTable)
        assert table_lines(app)[:2] == bad  # listed first, so they are seen
        assert len(table_lines(app)) == n_lines
        assert all("✗" in str(table.get_row(str(n))[0]) for n in bad)
        label = str(app.screen.query_one("#filter-label", Label).render())
        assert f"{n_lines}/{n_lines} lines" in label and "2 with errors" in label
        # Counting a line with errors is refused with a hint; nothing opens.
        await choose_line(pilot, bad[1])
        await pilot.press("c")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)


async def test_a_line_with_errors_is_fixed_in_the_form(broken_drawer):
    line = len(raw_lines(broken_drawer)) - 1  # the first appended line: value "4k7k"
    app = make_app(broken_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await choose_line(pilot, line)
        await pilot.press("e")
        await pilot.pause()
        assert isinstance(app.screen, PartForm)
        assert "4k7k" in str(app.screen.query_one("#line-problems").render())
        assert app.screen.query_one("#f-value", Input).value == "4k7k"
        await type_into(pilot, "#f-value", "4k3")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, DrawerScreen)
        assert "✗" not in str(app.screen.query_one("#parts", DataTable).get_row(str(line))[0])
    lines = raw_lines(broken_drawer)
    assert lines[line - 1] == "resistor,4k3,3,5%,1/4W,,,,,,,,,,B3,typo\n"  # only the value cell re-spelt
    part = Drawer.load(broken_drawer).part_at(line)
    assert part.value == parse_resistance("4k3") and part.qty == 3


async def test_a_line_with_errors_is_removed(broken_drawer):
    before = raw_lines(broken_drawer)
    line = len(before)  # the last line: qty "x"
    app = make_app(broken_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await choose_line(pilot, line)
        await pilot.press("x")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        assert "qty" in str(app.screen.query_one(".dialog-detail").render())
        await pilot.press("y")
        await pilot.pause()
        assert str(line) not in app.screen.query_one("#parts", DataTable).rows
    assert raw_lines(broken_drawer) == before[:-1]


async def test_square_brackets_in_the_file_are_text_not_markup(demo_drawer):
    # Cells are the user's text: "[/b]" once crashed the app at start (read as a closing markup tag).
    with demo_drawer.open("a", encoding="utf-8") as f:
        f.write("resistor,3k9,3,5%,1/4W,,,,,,,,,,[/b],[bold]note\nresistor,4k7k,3,5%,1/4W,,,,,,,,,,[/],x\n")
    n = len(raw_lines(demo_drawer))
    app = make_app(demo_drawer)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause()
        assert "[/b]" in str(app.screen.query_one("#parts", DataTable).get_row(str(n - 1))[-1])
        for keys in (["l"], ["escape"], ["slash", "left_square_bracket", "slash", "right_square_bracket", "enter"],
                     ["escape"]):
            await pilot.press(*keys)
            await pilot.pause()
        await choose_line(pilot, n - 1)
        for keys in (["e"], ["escape"], ["c", "1", "enter"], ["x", "y"], ["h", "u"]):
            await pilot.press(*keys)
            await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        assert "[/b]" in str(app.screen.query_one(".dialog-detail").render())
        await pilot.press("n")
        await pilot.pause()
        assert app.is_running and app._exception is None
    assert all(p.location != "[/b]" for p in Drawer.load(demo_drawer).parts)  # the removal was saved
