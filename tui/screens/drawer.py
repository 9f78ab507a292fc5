"""The drawer view: every part in a sortable, filterable table, and the file's problems."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Label, Static

from inventory.parts import Part

from ..widgets.part_text import COLUMNS, describe, row_cells, sort_key


def matches(part: Part, words: list[str]) -> bool:
    """Every word of the filter appears in some cell of the row (case ignored)."""
    text = " ".join(row_cells(part)).lower()
    return all(w in text for w in words)


class DrawerScreen(Screen):
    """What is in the drawers; add, edit, count and remove parts."""

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

    def compose(self) -> ComposeResult:
        yield Header()
        with Horizontal(id="filter-row"):
            yield Label("Filter", id="filter-label")
            yield Input(placeholder="type to filter: 4k7, cap, A3 …", id="filter", compact=True)
        yield DataTable(id="parts", cursor_type="row", zebra_stripes=True)
        with VerticalScroll(id="problems"):
            yield Static(id="problem-text")
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

    def visible_parts(self) -> list[Part]:
        drawer = self.app.drawer
        if drawer is None:
            return []
        words = self.query_one("#filter", Input).value.lower().split()
        parts = [p for p in drawer.parts if matches(p, words)]
        return sorted(parts, key=sort_key(self.sort_column), reverse=self.sort_reverse)

    def fill_table(self) -> None:
        table = self.query_one("#parts", DataTable)
        keep = self.selected_line()
        table.clear()
        for part in self.visible_parts():
            table.add_row(*row_cells(part), key=str(part.line))
        for i, col in enumerate(table.columns.values()):
            arrow = (" ▼" if self.sort_reverse else " ▲") if i == self.sort_column else ""
            col.label = f"{COLUMNS[i]}{arrow}"
        table.refresh()
        if keep is not None and str(keep) in table.rows:
            table.move_cursor(row=table.get_row_index(str(keep)))
        total = len(self.app.drawer.parts) if self.app.drawer else 0
        self.query_one("#filter-label", Label).update(f"{table.row_count}/{total} lines ")

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
        key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
        return int(key.value)

    def selected_part(self) -> Part | None:
        line = self.selected_line()
        drawer = self.app.drawer
        part = drawer.part_at(line) if drawer and line is not None else None
        if part is None:
            self.notify("No part selected", severity="warning")
        return part

    # ---- events and actions --------------------------------------------------------------

    @on(Input.Changed, "#filter")
    def filter_changed(self) -> None:
        self.fill_table()

    @on(Input.Submitted, "#filter")
    def filter_done(self) -> None:
        self.query_one("#parts", DataTable).focus()

    def key_down(self) -> None:
        # Down from the filter goes to the table (Enter does too), so typing then choosing is one motion.
        if isinstance(self.focused, Input):
            self.query_one("#parts", DataTable).focus()

    def key_escape(self) -> None:
        if isinstance(self.focused, Input):
            self.query_one("#parts", DataTable).focus()

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

    def action_add(self) -> None:
        from .part_form import PartForm

        store = self.app.store
        self.app.push_screen(
            PartForm(None, lambda fields: store.add_part(fields, reason="added in the app")),
            lambda saved: self.saved(saved, "Added a line"),
        )

    def action_edit(self) -> None:
        from .part_form import PartForm

        part = self.selected_part()
        if part is None:
            return
        self.app.push_screen(
            PartForm(part, lambda fields: self.replace(part, fields), cells=self.cells_of(part)),
            lambda saved: self.saved(saved, f"Saved line {part.line}"),
        )

    def saved(self, saved: bool | None, text: str) -> None:
        self.app.reload()
        if saved:
            self.notify(text, title="Saved")

    def cells_of(self, part: Part) -> dict[str, str]:
        """The line's cells as typed in the file, by column name."""
        drawer = self.app.drawer
        record = drawer.records[drawer.record_index(part.line)]
        return {name: record.cells[i].strip() for name, i in drawer.columns.items() if i < len(record.cells)}

    def replace(self, part: Part, fields: dict[str, str]) -> None:
        """Save an edited line in place: a new count alone is a count, anything else an edit.

        The store rewrites only the cells whose text changed, as one journal entry.
        """
        store = self.app.store
        before = {k: v for k, v in self.cells_of(part).items() if v}
        if {k: v for k, v in before.items() if k != "qty"} == {k: v for k, v in fields.items() if k != "qty" and v}:
            store.set_qty(part.line, int(fields["qty"]), reason=f"counted {describe(part)}")
            return
        store.edit_part(part.line, fields, reason=f"edited {describe(part)}")

    def action_count(self) -> None:
        from .dialogs import CountDialog

        part = self.selected_part()
        if part is None:
            return

        def done(qty: int | None) -> None:
            if qty is not None and qty != part.qty:
                self.app.write(
                    lambda: self.app.store.set_qty(part.line, qty, reason=f"counted {describe(part)}"),
                    f"{describe(part)}: {part.qty} → {qty}",
                )

        self.app.push_screen(CountDialog(part), done)

    def action_remove(self) -> None:
        from .dialogs import ConfirmDialog

        part = self.selected_part()
        if part is None:
            return

        def done(yes: bool | None) -> None:
            if yes:
                self.app.write(
                    lambda: self.app.store.remove_part(part.line, reason=f"removed {describe(part)}"),
                    f"Removed {describe(part)}",
                )

        self.app.push_screen(ConfirmDialog(
            "Remove this line from the drawer file?", describe(part), "Remove"), done)

    def action_locations(self) -> None:
        from .locations import LocationsScreen

        self.app.push_screen(LocationsScreen())

    def action_design(self) -> None:
        from .request import RequestScreen

        self.app.push_screen(RequestScreen())

    def action_history(self) -> None:
        from .history import HistoryScreen

        self.app.push_screen(HistoryScreen())
