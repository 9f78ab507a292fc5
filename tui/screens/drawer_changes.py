"""The drawer view's changes to the file: add, edit (or fix a line with errors), count, remove.

A mixin of `DrawerScreen`, which supplies `selected_part()` and `selected_broken()`.  Every
change goes through the app's Store; texts for notifications are escaped, since a drawer
line's text is the user's and never markup.
"""

from __future__ import annotations

from textual.markup import escape

from inventory.parts import Part

from ..widgets.part_text import BrokenLine, describe, record_cells


class DrawerChanges:
    """Actions of the drawer view that write the drawer file."""

    def action_add(self) -> None:
        from .part_form import PartForm

        store = self.app.store
        self.app.push_screen(
            PartForm(None, lambda fields: store.add_part(fields, reason="added in the app")),
            lambda saved: self.saved(saved, "Added a line"),
        )

    def action_edit(self) -> None:
        from .part_form import PartForm

        bad = self.selected_broken()
        if bad is not None:
            self.app.push_screen(
                PartForm(None, lambda fields: self.fix(bad, fields), cells=bad.cells, line=bad.line,
                         problems=bad.problems),
                lambda saved: self.saved(saved, f"Line {bad.line} fixed"),
            )
            return
        part = self.selected_part()
        if part is None:
            return
        self.app.push_screen(
            PartForm(part, lambda fields: self.replace(part, fields), cells=self.cells_of(part.line)),
            lambda saved: self.saved(saved, f"Saved line {part.line}"),
        )

    def saved(self, saved: bool | None, text: str) -> None:
        self.app.reload()
        if saved:
            self.notify(text, title="Saved")

    def cells_of(self, line: int) -> dict[str, str]:
        """The line's cells as typed in the file, by column name."""
        drawer = self.app.drawer
        return record_cells(drawer, line) if drawer is not None else {}

    def replace(self, part: Part, fields: dict[str, str]) -> None:
        """Save an edited line in place: a new count alone is a count, anything else an edit.

        The store rewrites only the cells whose text changed, as one journal entry.
        """
        store = self.app.store
        before = self.cells_of(part.line)
        if all(before.get(k, "") == v for k, v in fields.items() if k != "qty"):
            store.set_qty(part.line, int(fields["qty"]), reason=f"counted {describe(part)}")
            return
        store.edit_part(part.line, fields, reason=f"edited {describe(part)}")

    def fix(self, bad: BrokenLine, fields: dict[str, str]) -> None:
        """Rewrite a line with errors; the store refuses it (reason shown in the form) unless it reads."""
        self.app.store.edit_part(bad.line, fields, reason=f"fixed line {bad.line}")

    def action_count(self) -> None:
        from .dialogs import CountDialog

        part = self.selected_part()
        if part is None:
            return

        def done(qty: int | None) -> None:
            if qty is not None and qty != part.qty:
                self.app.write(
                    lambda: self.app.store.set_qty(part.line, qty, reason=f"counted {describe(part)}"),
                    escape(f"{describe(part)}: {part.qty} → {qty}"),
                )

        self.app.push_screen(CountDialog(part), done)

    def action_remove(self) -> None:
        from .dialogs import ConfirmDialog

        bad = self.selected_broken()
        part = None if bad is not None else self.selected_part()
        if bad is None and part is None:
            return
        line = bad.line if bad is not None else part.line
        what = f"line {line} (with errors)" if bad is not None else describe(part)
        detail = bad.describe() if bad is not None else what

        def done(yes: bool | None) -> None:
            if yes:
                self.app.write(
                    lambda: self.app.store.remove_part(line, reason=f"removed {what}"), escape(f"Removed {what}"))

        self.app.push_screen(ConfirmDialog("Remove this line from the drawer file?", detail, "Remove"), done)

