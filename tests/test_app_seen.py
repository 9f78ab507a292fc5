""""Fix what was seen" in the drawer view and the history, driven with Pilot on the demo drawer.

Each test reads what the terminal shows (the screen rendered to text) or the drawer file on
disk, not the app's own state, where that is what the user would go by.
"""

from __future__ import annotations

import pytest
from textual.widgets import DataTable, Input, Static

from inventory.drawer import Drawer
from inventory.store import Store
from tui.app import make_app
from tui.screens.dialogs import ConfirmDialog
from tui.screens.drawer import DrawerScreen
from tui.screens.history import HistoryScreen
from tui.widgets.part_text import COLUMNS

from .app_fixtures import demo_drawer  # noqa: F401  (fixture)

pytestmark = pytest.mark.tui


def screen_text(app) -> str:
    """The characters of the top screen as the user sees them, one line per terminal row."""
    return "\n".join(strip.text for strip in app.screen._compositor.render_strips())


def rows(app) -> list[int]:
    return [int(k.value) for k in app.screen.query_one("#parts", DataTable).rows]


async def test_typing_on_the_table_filters(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        assert isinstance(app.focused, DataTable)
        await pilot.press(*"2N3904")  # no key of it is an action key: it all goes to the filter
        await pilot.pause()
        assert app.screen.query_one("#filter", Input).value == "2N3904"
        want = [p.line for p in Drawer.load(demo_drawer).parts if p.part == "2N3904"]
        assert rows(app) == want and len(want) == 1
        # Back on the table, Esc clears the filter and every line is back.
        await pilot.press("enter", "escape")
        await pilot.pause()
        assert app.screen.query_one("#filter", Input).value == ""
        assert len(rows(app)) == len(Drawer.load(demo_drawer).parts)
        # An action key typed on the table still acts (here: the locations summary opens).
        await pilot.press("l")
        await pilot.pause()
        assert not isinstance(app.screen, DrawerScreen)


async def test_down_from_the_filter_lands_on_the_first_match(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("slash", *"4k7")
        await pilot.pause()
        table = app.screen.query_one("#parts", DataTable)
        assert table.row_count == 3 and table.cursor_row == 0
        await pilot.press("down")
        await pilot.pause()
        assert app.focused is table and table.cursor_row == 0  # no row skipped
        await pilot.press("down")
        await pilot.pause()
        assert table.cursor_row == 1


async def test_a_filter_matching_nothing_says_so(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        note = app.screen.query_one("#no-match", Static)
        assert not note.display
        await pilot.press("slash", *"zz9q")
        await pilot.pause()
        assert app.screen.query_one("#parts", DataTable).row_count == 0
        assert note.display
        text = screen_text(app)
        assert 'No line matches "zz9q"' in text and "0/113 lines" in text


@pytest.mark.parametrize("size", [(80, 24), (100, 32)])
async def test_the_sort_arrow_is_shown_on_every_column(demo_drawer, size):
    app = make_app(demo_drawer)
    async with app.run_test(size=size) as pilot:
        table = app.screen.query_one("#parts", DataTable)
        for step in range(len(COLUMNS)):
            column = (1 + step) % len(COLUMNS)  # Kind first, then s moves one column on
            for arrow in ("▲", "▼"):
                labels = [str(c.label) for c in table.columns.values()]
                assert [i for i, lab in enumerate(labels) if arrow in lab] == [column]
                # The whole label, arrow included, fits the column's width.
                col = list(table.columns.values())[column]
                assert col.content_width >= len(labels[column].rstrip())
                await pilot.press("S")  # reverse
                await pilot.pause()
            await pilot.press("s")
            await pilot.pause()
        # A full round of s is back on Kind, and the arrow is on the screen.
        assert "Kind ▲" in str(list(table.columns.values())[1].label)
        assert "Kind ▲" in screen_text(app)


def journal_of(path, n: int) -> Store:
    """n count changes to the drawer at `path`, made through the store (as the CLI would)."""
    store = Store(path)
    line = Drawer.load(path).parts[0].line
    for i in range(n):
        store.load()
        store.set_qty(line, 20 + i, reason=f"count {i + 1}")
    return store


async def test_enter_on_a_history_row_undoes_that_change(demo_drawer):
    store = journal_of(demo_drawer, 3)
    line = Drawer.load(demo_drawer).parts[0].line
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.press("h")
        await pilot.pause()
        table = app.screen.query_one("#journal", DataTable)
        await pilot.press("down")  # newest first: the second row is change #2
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        detail = str(app.screen.query_one(".dialog-detail").render())
        assert "Change #2" in detail and "count 2" in detail and f"line {line}" in detail
        await pilot.press("y")
        await pilot.pause()
        assert isinstance(app.screen, HistoryScreen) and table.row_count == 4
    last = store.history()[-1]
    assert last.action == "undo" and last.undoes == 2 and last.reason == "undo of #2 in the app"


async def test_the_undo_dialog_names_the_last_change(demo_drawer):
    journal_of(demo_drawer, 2)
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("h", "u")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        text = screen_text(app)
        assert "Undo change #2 (count)?" in text and "count 2" in text and "qty 21 → 20" in text


async def test_the_state_column_shows_whole_change_numbers(demo_drawer):
    store = journal_of(demo_drawer, 11)
    store.load()
    store.undo(10, reason="a long reason " * 6)  # change #12 undoes #10
    app = make_app(demo_drawer)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("h")
        await pilot.pause()
        text = screen_text(app)
        assert "undone by #12" in text and "reverts #10" in text
