"""Changing the drawer file safely: lock, re-read, re-find parts by identity, atomic save, journal.

Every change runs as one transaction under `<file>.lock`: the file is read again, and when
it differs from what this Store loaded (someone saved it from a spreadsheet meanwhile) each
targeted line is found again by `Part.identity`.  A part that is gone, ambiguous or whose
count was changed under an absolute `set_qty` is refused with a ConflictError — never
overwritten.  Only the records a change means to touch are re-written; every other byte of
the file is kept.  Undo works on the current file by identity, so it survives other edits.
"""

from __future__ import annotations

import json
import os
from collections import defaultdict
from collections.abc import Callable, Iterable
from pathlib import Path

from . import csvfile
from .atomic import LockBusy, atomic_write, interrupts_deferred, locked, remove_stale_temporaries
from .drawer import Drawer
from .edits import (
    ConflictError, Edit, NothingToUndo, StockError, StoreError, Txn, apply_edits, change_for, describe,
    find_again, identity_and_row, lines_at, qty_edit, record_alone,
)
from .journal import Entry, Journal, journal_path, now_iso
from .parts import Part
from .rewrite import normalise, plan_add, plan_edit
from .undo import plan_undo

__all__ = ["Store", "StoreError", "StockError", "ConflictError", "NothingToUndo", "describe"]


class Store:
    """The drawer file at `path`, changed only through journaled, locked, atomic transactions."""

    def __init__(self, path: str | Path, *, lock_timeout_s: float = 10.0) -> None:
        self.path = Path(path)
        # Lock and journal sit beside the real file, so a symlink and its target share them.
        self._real = Path(os.path.realpath(self.path))
        self.journal = Journal(journal_path(self._real))
        self.lock_timeout_s = lock_timeout_s
        self._base: bytes | None = None
        self._drawer: Drawer | None = None

    def load(self) -> Drawer:
        self._base = self._read()
        self._drawer = Drawer.from_bytes(self._base, str(self.path))
        return self._drawer

    def base_on(self, drawer: Drawer) -> None:
        """Treat `drawer` (read earlier, e.g. the one a design was made from) as what this Store
        loaded, so line numbers taken from it are checked against the file as it is now."""
        self._base, self._drawer = drawer.to_bytes(), drawer

    @property
    def drawer(self) -> Drawer:
        return self._drawer if self._drawer is not None else self.load()

    def history(self) -> list[Entry]:
        return self.journal.read()

    def _read(self) -> bytes:
        try:
            return self.path.read_bytes()
        except OSError as exc:
            raise StoreError(f"{self.path}: cannot read the drawer file ({exc.strerror or exc})") from None

    # ---- the transaction -------------------------------------------------------------------

    def _transact(self, action: str, reason: str, plan: Callable[[Txn], None], design: dict | None = None) -> Entry:
        try:
            with locked(self._real, self.lock_timeout_s):
                return self._transact_locked(action, reason, plan, design)
        except LockBusy as exc:
            raise StoreError(str(exc)) from None

    def _transact_locked(self, action: str, reason: str, plan: Callable[[Txn], None],
                         design: dict | None = None) -> Entry:
        data = self._read()
        moved = self._base is not None and data != self._base
        # Unchanged since this Store read it: the parsed drawer is still right (a large file is read once).
        fresh = self._drawer if self._drawer is not None and not moved else Drawer.from_bytes(data, str(self.path))
        if fresh.trouble:
            raise StoreError(f"{self.path}: {fresh.trouble}; nothing was written")
        base = fresh
        if moved:
            base = self._drawer if self._drawer is not None else Drawer.from_bytes(self._base, str(self.path))
        txn = Txn(fresh, base, moved)
        plan(txn)
        if not txn.edits:
            return Entry(0, now_iso(), action, reason, self.path.name, [], txn.undoes)
        out, where = apply_edits(fresh, txn.edits)
        new_bytes = csvfile.encode("".join(out), fresh.dialect.bom)
        delim = fresh.dialect.delimiter
        lines = lines_at(out, {pos for pos in where if pos is not None})
        for e, pos in zip(txn.edits, where, strict=True):
            if pos is not None and e.change is not None:  # the line as saved, and where it sits
                e.change.raw_after, e.change.index = out[pos], pos
                e.change.line = lines[pos]
                if not e.change.header:
                    alone, k = record_alone(out, pos, delim, str(self.path))
                    e.change.identity, e.change.row = identity_and_row(alone, k)
        changes = [e.change for e in txn.edits if e.change is not None]  # a new file's header is not
        try:
            entry_id = self.journal.next_id()
        except OSError as exc:
            raise StoreError(f"{self.journal.path}: cannot read the journal ({exc.strerror or exc}); "
                             "nothing was written") from None
        entry = Entry(entry_id, now_iso(), action, reason, self.path.name, changes, txn.undoes, design)
        if not os.access(self._real, os.W_OK) or not self._real.stat().st_mode & 0o222:
            # os.replace would replace a read-only file regardless (the folder is what it checks)
            raise StoreError(f"{self.path} is read-only; nothing was written")
        self._commit(data, new_bytes, entry)
        self._base, self._drawer = new_bytes, None  # parsed again only when asked for (`.drawer`)
        return entry

    def _commit(self, old_bytes: bytes, new_bytes: bytes, entry: Entry) -> None:
        """Save the drawer and append its journal entry: both, or neither.

        Ctrl-C is held back until both are written; a journal that cannot be appended to puts
        the drawer's old bytes back (atomically) before the refusal is raised.
        """
        remove_stale_temporaries(self._real)  # under the lock: any temporary left is a killed writer's
        with interrupts_deferred():
            try:
                atomic_write(self.path, new_bytes)
            except OSError as exc:
                raise StoreError(f"{self.path}: cannot save ({exc.strerror or exc}); nothing was changed") from None
            try:
                self.journal.append(entry)
            except OSError as exc:
                try:
                    atomic_write(self.path, old_bytes)
                except OSError as again:
                    raise StoreError(f"{self.path}: saved, but its journal {self.journal.path.name} cannot be "
                                     f"written ({exc.strerror or exc}) and the old file could not be put back "
                                     f"({again.strerror or again})") from None
                raise StoreError(f"{self.journal.path}: cannot write the journal ({exc.strerror or exc}); "
                                 f"the change to {self.path} was not kept") from None

    def _target(self, txn: Txn, line: int, *, need_part: bool = True) -> tuple[int, Part | None]:
        """Index in the fresh file, and part, of what was on `line` when this Store loaded."""
        base = txn.base
        bi = base.record_index(line)
        if bi is None:
            raise StoreError(f"{self.path}: line {line} holds no part")
        bpart = base.part_at(line)
        if bpart is None and need_part:
            first = next((p for p in base.problems if p.line == line and p.is_error), None)
            raise StoreError(f"{self.path}: line {line} has errors; fix them first"
                             + (f" ({first.message})" if first else ""))
        if not txn.moved:
            return bi, bpart
        what = f"the {describe(bpart)} that was on line {line}" if bpart else f"line {line}"
        idx = find_again(txn.fresh, bpart.identity if bpart else None, base.records[bi].raw, what, line)
        return idx, txn.fresh.part_at(txn.fresh.records[idx].line)

    def _refuse_if_edited(self, txn: Txn, line: int, idx: int) -> None:
        """A whole-line change (remove, edit) must not overwrite an edit made elsewhere."""
        rec = txn.fresh.records[idx]
        bi = txn.base.record_index(line)
        if txn.moved and bi is not None and txn.base.records[bi].raw != rec.raw:
            raise ConflictError(f"{self.path} was changed since it was read: line {line} was edited "
                                f"(now line {rec.line}); not overwriting it — reload and try again")

    # ---- changes ---------------------------------------------------------------------------

    def set_qty(self, line: int, qty: int, reason: str = "") -> Entry:
        """Set the count on `line`; refused if someone changed that count since this Store loaded."""
        _check_count(qty, "qty")

        def plan(txn: Txn) -> None:
            idx, part = self._target(txn, line)
            before = txn.base.part_at(line)
            if txn.moved and before is not None and part.qty != before.qty:
                raise ConflictError(
                    f"{self.path} was changed since it was read: the count of the {describe(part)} "
                    f"went from {before.qty} to {part.qty}; not overwriting it — reload and try again")
            qty_edit(txn, idx, part, qty)

        return self._transact("count", reason, plan)

    def adjust_qty(self, line: int, delta: int, reason: str = "") -> Entry:
        """Add `delta` (may be negative) to the count on `line`, re-applied to the current count."""
        if not isinstance(delta, int) or isinstance(delta, bool):
            raise StoreError(f"the change of count must be a whole number, not {delta!r}")

        def plan(txn: Txn) -> None:
            idx, part = self._target(txn, line)
            if part.qty + delta < 0:
                raise StockError(str(self.path), [(line, describe(part), part.qty, -delta)])
            qty_edit(txn, idx, part, part.qty + delta)

        return self._transact("count", reason, plan)

    def take(self, uses: Iterable, reason: str = "", design: dict | None = None) -> Entry:
        """Take a build's parts: uses = [(line, qty), …] (or [{"line", "qty"}, …]); one entry for all.

        `design`: the build's record (a JSON object, e.g. the design, its rank and request), kept in
        the journal entry so the build's sheet can be shown again.  Refused with StockError naming
        every short line when any line lacks stock.
        """
        design = _json_object(design)
        wanted: dict[int, int] = defaultdict(int)
        for use in uses:
            line, qty = (use["line"], use["qty"]) if isinstance(use, dict) else use
            _check_count(qty, f"qty for line {line}", positive=True)
            wanted[int(line)] += qty
        if not wanted:
            raise StoreError("nothing to take")

        def plan(txn: Txn) -> None:
            found = [(line, *self._target(txn, line), need) for line, need in sorted(wanted.items())]
            short = [(ln, describe(p), p.qty, need) for ln, _, p, need in found if p.qty < need]
            if short:
                raise StockError(str(self.path), short)
            for _, idx, part, need in found:
                qty_edit(txn, idx, part, part.qty - need)

        return self._transact("take", reason, plan, design)

    def remove_part(self, line: int, reason: str = "") -> Entry:
        """Remove the line (a line with errors too); refused if it was edited since loading."""

        def plan(txn: Txn) -> None:
            idx, part = self._target(txn, line, need_part=False)
            self._refuse_if_edited(txn, line, idx)
            rec = txn.fresh.records[idx]
            qty = part.qty if part else None
            txn.edits.append(Edit("delete", idx, None, change_for(txn.fresh, idx, rec.raw, None, qty, None)))

        return self._transact("remove", reason, plan)

    def add_part(self, fields: dict[str, str], reason: str = "") -> Entry:
        """Append a line; fields are column → cell text as typed (e.g. {"kind": "resistor", "value": "4k7"}).

        A known column missing from the header is added to it; an unknown one is refused.
        Refused when the new line has errors or repeats a part already in the file.
        """
        cells = normalise(fields)
        return self._transact("add", reason, lambda txn: plan_add(txn, cells))

    def edit_part(self, line: int, fields: dict[str, str], reason: str = "") -> Entry:
        """Rewrite cells of `line` in place (column → new text; columns not named stay as they are).

        Only cells whose text changes are re-spelt.  Refused like add_part when the edited line
        has errors or repeats another line's part, and when the line was edited elsewhere since
        this Store loaded.  An edit that changes nothing writes nothing (an entry without changes).
        """
        cells = normalise(fields)

        def plan(txn: Txn) -> None:
            idx, _ = self._target(txn, line, need_part=False)
            self._refuse_if_edited(txn, line, idx)
            plan_edit(txn, idx, cells)

        return self._transact("edit", reason, plan)

    def undo(self, entry_id: int | None = None, reason: str = "") -> Entry:
        """Revert the last change not yet undone (or entry `entry_id`); the undo is journaled too."""
        return self._transact("undo", reason, lambda txn: plan_undo(txn, self.journal.read(), entry_id))


def _check_count(qty: object, what: str, positive: bool = False) -> None:
    if not isinstance(qty, int) or isinstance(qty, bool) or qty < (1 if positive else 0):
        least = "1 or more" if positive else "0 or more"
        raise StoreError(f"{what} must be a whole number, {least}, not {qty!r}")


def _json_object(design: object) -> dict | None:
    """A copy of `design` as the journal will hold it (strict JSON: a NaN or infinite figure becomes null),
    checked before anything is written."""
    if design is None:
        return None
    if not isinstance(design, dict):
        raise StoreError(f"a build's design record must be a JSON object, not {type(design).__name__}")
    try:
        return json.loads(json.dumps(design), parse_constant=lambda name: None)
    except (TypeError, ValueError, RecursionError) as exc:
        raise StoreError(f"a build's design record cannot be journaled ({exc})") from None
