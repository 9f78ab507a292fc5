"""Past builds and changes from the journal, newest first; undo the last or a chosen one."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Label

from inventory.edits import StoreError
from inventory.journal import Change, Entry, undone_ids
from inventory.problems import printable
from inventory.undo import pick

SHOWN_CHANGES = 6  # lines of a change listed in the undo dialog before "… and N more"


def when(iso: str) -> str:
    """"2026-12-01T22:40:03.512Z" -> "2026-12-01 22:40" (UTC, as journaled)."""
    return iso.replace("T", " ")[:16]


def state_text(entry: Entry, undone: dict[int, int]) -> str:
    """"undone by #12" / "reverts #3" / "": whole numbers, never cut (the column fits them)."""
    if entry.id in undone:
        return f"undone by #{undone[entry.id]}"
    if entry.action == "undo" and entry.undoes is not None:
        return f"reverts #{entry.undoes}"
    return ""


def change_text(c: Change) -> str:
    """What undoing one journaled line change does, in words."""
    if c.header:
        return "the header line goes back as it was"
    cells = " ".join(v for k in ("kind", "value", "part", "location") if (v := str(c.row.get(k, "")).strip()))
    cells = printable(cells) or "the line"
    if c.rewrite:
        return f"line {c.line}: {cells} goes back to its text before the edit"
    if c.raw_before is None:
        return f"line {c.line}: {cells} is taken out again"
    if c.raw_after is None:
        return f"{cells} comes back" + (f" (qty {c.qty_before})" if c.qty_before is not None else "")
    return f"line {c.line}: {cells}  qty {c.qty_after} → {c.qty_before}"


def undo_detail(entry: Entry) -> str:
    """The undo dialog's text: which change, when, why, and what goes back."""
    head = f"Change #{entry.id}, {entry.action}, {when(entry.time)} UTC"
    reason = f"\n“{printable(entry.reason)}”" if entry.reason else ""
    lines = [f"  {change_text(c)}" for c in entry.changes[:SHOWN_CHANGES]]
    if len(entry.changes) > SHOWN_CHANGES:
        lines.append(f"  … and {len(entry.changes) - SHOWN_CHANGES} more lines")
    body = "\n".join(lines) if lines else "  (it changed no line)"
    return (f"{head}{reason}\n{body}\n"
            "The undo is journaled too, so it can be undone in turn.")


class HistoryScreen(Screen):
    """The drawer file's journal."""

    BINDINGS = [
        Binding("u", "undo_last", "Undo last", id="history.undo_last", tooltip="Undo the last change"),
        Binding("enter", "undo_chosen", "Undo chosen", id="history.undo_chosen",
                tooltip="Undo the highlighted change"),
        Binding("escape", "back", "Back", id="history.back", tooltip="Back to the drawer"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.entries: list[Entry] = []

    def compose(self) -> ComposeResult:
        yield Header()
        yield Label("", id="history-title", classes="section-title", markup=False)
        yield DataTable(id="journal", cursor_type="row", zebra_stripes=True)
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#journal", DataTable)
        # State before Reason: a long reason may run off a narrow terminal, the change numbers must not.
        table.add_columns("#", "When (UTC)", "What", "Lines", "State", "Reason")
        self.drawer_changed()
        table.focus()

    def drawer_changed(self) -> None:
        """Re-read the journal (called after every write)."""
        table = self.query_one("#journal", DataTable)
        keep = self.chosen_id()
        table.clear()
        try:
            self.entries = self.app.store.history()
        except (OSError, ValueError) as exc:
            self.entries = []
            self.query_one("#history-title", Label).update(f"The journal cannot be read: {exc}")
            return
        undone = undone_ids(self.entries)
        for e in reversed(self.entries):
            cells = (str(e.id), when(e.time), e.action, str(len(e.changes)), state_text(e, undone), printable(e.reason))
            table.add_row(*(Text(c) for c in cells), key=str(e.id))  # Text: a reason is never markup
        if keep is not None and str(keep) in table.rows:
            table.move_cursor(row=table.get_row_index(str(keep)))
        n = len(self.entries)
        title = f"{n} change{'s' * (n != 1)} to {self.app.inventory_path.name}; enter undoes the highlighted one"
        title = title if self.entries else "No changes journaled yet."
        damaged = self.app.store.journal.damaged
        if damaged:  # named, so the user can look at them; the other entries are all listed
            where = ", ".join(f"{self.app.store.journal.path.name}:{n}" for n in damaged[:5])
            title += f" (damaged journal line{'s' * (len(damaged) > 1)} left out: {where}{' …' * (len(damaged) > 5)})"
        self.query_one("#history-title", Label).update(title)

    def chosen_id(self) -> int | None:
        table = self.query_one("#journal", DataTable)
        if table.row_count == 0:
            return None
        try:
            return int(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        except Exception:  # noqa: BLE001 - no row under the cursor means nothing chosen
            return None

    @on(DataTable.RowSelected, "#journal")
    def row_chosen(self, event: DataTable.RowSelected) -> None:
        # The table takes Enter itself (to select the row), so the binding above never sees it.
        event.stop()
        self.action_undo_chosen()

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

        try:
            target = pick(self.entries, entry_id)
        except StoreError as exc:
            self.notify(str(exc), title="Nothing undone", severity="warning", markup=False)
            return

        def done(yes: bool | None) -> None:
            if yes:
                self.app.write(lambda: self.app.store.undo(target.id, reason=f"undo of #{target.id} in the app"),
                               f"Undid change #{target.id}")

        self.app.push_screen(ConfirmDialog(f"Undo change #{target.id} ({target.action})?",
                                           undo_detail(target), "Undo"), done)

    def action_back(self) -> None:
        self.app.pop_screen()

    # ---- the sheet of a past build (added with the build records; the logic is in sheet.py) ----
    BINDINGS = [*BINDINGS, Binding("s", "past_sheet", "Build sheet", id="history.sheet",
                                   tooltip="Show the build sheet of the highlighted build")]

    def action_past_sheet(self) -> None:
        from .sheet import open_past_sheet

        open_past_sheet(self.app, self.chosen_id())
