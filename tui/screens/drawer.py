"""The drawer view: every part in a sortable, filterable table, and the file's problems."""

from __future__ import annotations

from rich.cells import cell_len
from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Label, Static

from inventory.parts import Part

from ..widgets.part_text import COLUMNS, BrokenLine, broken_lines, row_cells, sort_key
from .drawer_changes import DrawerChanges


def matches(cells: tuple[str, ...], words: list[str]) -> bool:
    """Every word of the filter appears in some cell of the row (case ignored)."""
    text = " ".join(cells).lower()
    return all(w in text for w in words)


class DrawerScreen(DrawerChanges, Screen):
    """What is in the drawers; add, edit, count and remove parts.

    Lines with errors are listed first, marked, so they can be fixed (edit) or removed where
    they are seen.  Typing a character that is not an action key starts the filter.
    """

    DEFAULT_CSS = """
    DrawerScreen #no-match {
        height: auto;
        margin: 0 2;
        color: $warning;
    }
    """

    AUTO_FOCUS = "#parts"

    BINDINGS = [
        Binding("slash", "filter", "Find", id="drawer.filter", tooltip="Filter the lines as you type"),
        Binding("a", "add", "Add", id="drawer.add", tooltip="Add a line"),
        Binding("e", "edit", "Edit", id="drawer.edit", tooltip="Edit the chosen line"),
        Binding("c", "count", "Qty", id="drawer.count", tooltip="Change the count of the chosen line"),
        Binding("x", "remove", "Del", id="drawer.remove", tooltip="Remove the chosen line"),
        Binding("s", "sort", "Sort", id="drawer.sort", tooltip="Sort by the next column (S: reverse)"),
        Binding("S", "reverse", "Reverse", id="drawer.reverse", show=False),
        Binding("l", "locations", "Where", id="drawer.locations", tooltip="Counts per location"),
        Binding("d", "design", "Design", id="drawer.design", tooltip="Design a stage from this drawer"),
        Binding("h", "history", "Log", id="drawer.history", tooltip="Past builds and changes; undo"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.sort_column = 1
        self.sort_reverse = False
        self.broken: list[BrokenLine] = []

    def compose(self) -> ComposeResult:
        yield Header()
        with Horizontal(id="filter-row"):
            yield Label("Filter", id="filter-label")
            yield Input(placeholder="type to filter: 4k7, 100n, BC547, A3 …", id="filter", compact=True,
                        select_on_focus=False)
        yield DataTable(id="parts", cursor_type="row", zebra_stripes=True)
        yield Static("", id="no-match", markup=False)
        with VerticalScroll(id="problems"):
            yield Static(id="problem-text", markup=False)
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#parts", DataTable)
        table.add_columns(*COLUMNS)
        self.drawer_changed()
        table.focus()

    # ---- contents ------------------------------------------------------------------------

    def drawer_changed(self) -> None:
        """Redraw from the app's drawer (called after every write and re-read)."""
        self.fill_table()
        self.show_problems()

    def filter_words(self) -> list[str]:
        return self.query_one("#filter", Input).value.lower().split()

    def visible_parts(self) -> list[Part]:
        drawer = self.app.drawer
        if drawer is None:
            return []
        words = self.filter_words()
        parts = [p for p in drawer.parts if matches(row_cells(p), words)]
        return sorted(parts, key=sort_key(self.sort_column), reverse=self.sort_reverse)

    def visible_broken(self) -> list[BrokenLine]:
        """Lines with errors that match the filter; always shown first, in file order."""
        words = self.filter_words()
        return [b for b in self.broken if matches((*b.row_cells(), "error", *b.problems), words)]

    def fill_table(self) -> None:
        table = self.query_one("#parts", DataTable)
        drawer = self.app.drawer
        self.broken = broken_lines(drawer) if drawer is not None else []
        keep = self.selected_line()
        table.clear()
        rows = [(bad.line, bad.row_cells(), "bold red") for bad in self.visible_broken()]
        rows += [(part.line, row_cells(part), "") for part in self.visible_parts()]
        for line, cells, style in rows:
            table.add_row(*(Text(c, style=style) for c in cells), key=str(line))  # Text: never markup
        for i, col in enumerate(table.columns.values()):
            arrow = (" ▼" if self.sort_reverse else " ▲") if i == self.sort_column else ""
            col.label = Text(COLUMNS[i] + arrow)
            # Each column exactly as wide as its label (arrow included) or widest cell: a table
            # only ever widens its columns, which would hide the arrow or push columns off screen.
            col.content_width = max([cell_len(col.label.plain), *(cell_len(cells[i]) for _, cells, _ in rows)])
        table.refresh()
        if keep is not None and str(keep) in table.rows:
            table.move_cursor(row=table.get_row_index(str(keep)))
        total = len(drawer.parts) + len(self.broken) if drawer else 0
        errors = f", {len(self.broken)} with errors" if self.broken else ""
        self.query_one("#filter-label", Label).update(f"{table.row_count}/{total} lines{errors} ")
        self.show_no_match(table.row_count, total)

    def show_no_match(self, shown: int, total: int) -> None:
        """Say why the table is empty: nothing matches the filter, or the file has no lines."""
        note = self.query_one("#no-match", Static)
        text = self.query_one("#filter", Input).value.strip()
        if shown == 0 and text:
            note.update(f"No line matches \"{text}\" ({total} lines in the file). "
                        "Esc on the table clears the filter.")
        elif shown == 0 and self.app.drawer is not None:
            note.update("The drawer file has no lines yet: a adds one.")
        else:
            note.update("")
        note.display = shown == 0
        # An empty table shrinks to its header, so the note sits right under it.
        self.query_one("#parts", DataTable).styles.height = "auto" if shown == 0 else "1fr"

    def show_problems(self) -> None:
        panel = self.query_one("#problems")
        drawer = self.app.drawer
        if self.app.load_error:
            lines = [self.app.load_error]
        else:
            lines = [f"{p.severity}: {p}" for p in (drawer.problems if drawer else [])]
        panel.display = bool(lines)
        panel.border_title = f"{len(lines)} problem{'s' * (len(lines) != 1)} in the drawer file"
        self.query_one("#problem-text", Static).update("\n".join(lines))

    def selected_line(self) -> int | None:
        table = self.query_one("#parts", DataTable)
        if table.row_count == 0:
            return None
        try:
            key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
        except Exception:  # noqa: BLE001 - a cursor left outside the rows means no choice
            return None
        return int(key.value) if key.value is not None else None

    def selected_broken(self) -> BrokenLine | None:
        line = self.selected_line()
        return next((b for b in self.broken if b.line == line), None)

    def selected_part(self) -> Part | None:
        line = self.selected_line()
        drawer = self.app.drawer
        part = drawer.part_at(line) if drawer and line is not None else None
        if part is None:
            if self.selected_broken() is not None:
                self.notify(f"Line {line} has errors: e fixes it, x removes it", severity="warning")
            else:
                self.notify("No part selected", severity="warning")
        return part

    # ---- events and actions --------------------------------------------------------------

    @on(Input.Changed, "#filter")
    def filter_changed(self) -> None:
        self.fill_table()

    @on(Input.Submitted, "#filter")
    def filter_done(self) -> None:
        self.query_one("#parts", DataTable).focus()

    def on_key(self, event: events.Key) -> None:
        table = self.query_one("#parts", DataTable)
        filter_box = self.query_one("#filter", Input)
        if self.focused is filter_box:
            if event.key in ("down", "escape"):
                # Down (or Esc) goes to the table, its cursor where it was: stopping the key here
                # keeps the table's own Down binding from moving it one row on.
                event.stop()
                event.prevent_default()
                table.focus()
            return
        if self.focused is table and event.key == "escape" and filter_box.value:
            event.stop()
            filter_box.value = ""
            return
        if (self.focused is table and event.is_printable and event.character and
                not event.character.isspace() and event.key not in self.active_bindings):
            # Typing on the table filters: any character that is not an action key starts it.
            # It starts a new filter; / goes to the filter box to edit the one there is.
            event.stop()
            event.prevent_default()
            filter_box.value = event.character
            filter_box.cursor_position = len(filter_box.value)
            filter_box.focus()

    @on(DataTable.HeaderSelected)
    def header_clicked(self, event: DataTable.HeaderSelected) -> None:
        self.set_sort(event.column_index)

    @on(DataTable.RowSelected)
    def row_chosen(self) -> None:
        self.action_edit()

    def set_sort(self, column: int) -> None:
        self.sort_reverse = not self.sort_reverse if column == self.sort_column else False
        self.sort_column = column
        self.fill_table()

    def action_sort(self) -> None:
        self.sort_column = (self.sort_column + 1) % len(COLUMNS)
        self.sort_reverse = False
        self.fill_table()

    def action_reverse(self) -> None:
        self.set_sort(self.sort_column)

    def action_filter(self) -> None:
        self.query_one("#filter", Input).focus()

    def action_locations(self) -> None:
        from .locations import LocationsScreen

        self.app.push_screen(LocationsScreen())

    def action_design(self) -> None:
        from .request import RequestScreen

        self.app.push_screen(RequestScreen())

    def action_history(self) -> None:
        from .history import HistoryScreen

        self.app.push_screen(HistoryScreen())
