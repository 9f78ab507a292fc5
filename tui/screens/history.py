"""Past builds and changes from the journal, newest first; undo the last or a chosen one."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Label

from inventory.journal import undone_ids


def when(iso: str) -> str:
    """"2026-12-01T22:40:03.512Z" -> "2026-12-01 22:40" (UTC, as journaled)."""
    return iso.replace("T", " ")[:16]


class HistoryScreen(Screen):
    """The drawer file's journal."""

    BINDINGS = [
        Binding("u", "undo_last", "Undo last", id="history.undo_last", tooltip="Undo the last change"),
        Binding("enter", "undo_chosen", "Undo chosen", id="history.undo_chosen",
                tooltip="Undo the highlighted change"),
        Binding("escape", "back", "Back", id="history.back", tooltip="Back to the drawer"),
    ]

    def compose(self) -> ComposeResult:
        yield Header()
        yield Label("", id="history-title", classes="section-title")
        yield DataTable(id="journal", cursor_type="row", zebra_stripes=True)
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#journal", DataTable)
        table.add_columns("#", "When (UTC)", "What", "Lines", "Reason", "State")
        self.drawer_changed()
        table.focus()

    def drawer_changed(self) -> None:
        """Re-read the journal (called after every write)."""
        table = self.query_one("#journal", DataTable)
        table.clear()
        try:
            entries = self.app.store.history()
        except (OSError, ValueError) as exc:
            self.query_one("#history-title", Label).update(f"The journal cannot be read: {exc}")
            return
        undone = undone_ids(entries)
        for e in reversed(entries):
            state = f"undone by #{undone[e.id]}" if e.id in undone else ""
            if e.action == "undo" and e.undoes is not None:
                state = state or f"reverts #{e.undoes}"
            table.add_row(str(e.id), when(e.time), e.action, str(len(e.changes)), e.reason, state,
                          key=str(e.id))
        title = f"{len(entries)} change{'s' * (len(entries) != 1)} to {self.app.inventory_path.name}"
        self.query_one("#history-title", Label).update(title if entries else "No changes journaled yet.")

    def chosen_id(self) -> int | None:
        table = self.query_one("#journal", DataTable)
        if table.row_count == 0:
            return None
        return int(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)

    def action_undo_last(self) -> None:
        self.confirm_undo(None)

    def action_undo_chosen(self) -> None:
        entry_id = self.chosen_id()
        if entry_id is None:
            self.notify("Nothing to undo", severity="warning")
            return
        self.confirm_undo(entry_id)

    def confirm_undo(self, entry_id: int | None) -> None:
        from .dialogs import ConfirmDialog

        what = "the last change" if entry_id is None else f"change #{entry_id}"

        def done(yes: bool | None) -> None:
            if yes:
                self.app.write(lambda: self.app.store.undo(entry_id, reason=f"undo of {what} in the app"),
                               f"Undid {what}")

        self.app.push_screen(ConfirmDialog(f"Undo {what}?", "The drawer counts go back; the undo is "
                                           "journaled too, so it can be undone in turn.", "Undo"), done)

    def action_back(self) -> None:
        self.app.pop_screen()

    # ---- the sheet of a past build (added with the build records; the logic is in sheet.py) ----
    BINDINGS = [*BINDINGS, Binding("s", "past_sheet", "Build sheet", id="history.sheet",
                                   tooltip="Show the build sheet of the highlighted build")]

    def action_past_sheet(self) -> None:
        from .sheet import open_past_sheet

        open_past_sheet(self.app, self.chosen_id())
