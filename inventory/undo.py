"""Undo: the inverse of a journal entry, planned against the file as it is now.

Parts are found by identity (or, for a line that had errors, by its exact text), so an undo
still lands after the file was edited elsewhere.  Counts are restored by the inverse delta
(undoing "take 2" gives 2 back even if other takes happened since); when the line is exactly
as the entry left it, its old text comes back byte for byte.
"""

from __future__ import annotations

from . import csvfile
from .edits import ConflictError, Edit, NothingToUndo, StoreError, Txn, change_for, find_again
from .journal import Change, Entry, undone_ids
from .rows import identity_key


def pick(entries: list[Entry], entry_id: int | None) -> Entry:
    """The entry to revert: `entry_id`, or the last change not yet undone."""
    undone = undone_ids(entries)
    if entry_id is None:
        target = next((e for e in reversed(entries) if e.action != "undo" and e.id not in undone), None)
        if target is None:
            raise NothingToUndo("nothing to undo: every change in the journal is already undone")
        return target
    target = next((e for e in entries if e.id == entry_id), None)
    if target is None:
        raise StoreError(f"there is no change {entry_id} in the journal (see `drawerfit history`)")
    if target.id in undone:
        raise StoreError(f"change {entry_id} was already undone by change {undone[target.id]}")
    return target


def plan_undo(txn: Txn, entries: list[Entry], entry_id: int | None) -> None:
    target = pick(entries, entry_id)
    txn.undoes = target.id
    try:
        _plan(txn, target)
    except (IndexError, KeyError, TypeError, ValueError, AttributeError) as exc:
        # Field types are checked on reading (journal.from_json); a hand-edited entry can still
        # hold text that is no drawer line, or lines that do not fit together.
        txn.edits.clear()
        raise StoreError(f"cannot undo change {target.id}: its journal entry does not describe a change "
                         f"this file can take back ({type(exc).__name__}); nothing was written") from None


def _plan(txn: Txn, target: Entry) -> None:
    for c in reversed(target.changes):
        what = _name(c, target.id)
        if c.header:
            _undo_header(txn, c)
        elif c.rewrite:
            _undo_rewrite(txn, c, what)
        elif c.raw_before is not None and c.raw_after is not None:
            _undo_count(txn, c, what)
        elif c.raw_before is None and c.raw_after is not None:
            _undo_add(txn, c, what)
        elif c.raw_before is not None:
            _undo_remove(txn, c, what)


def _name(c: Change, entry_id: int) -> str:
    cells = " ".join(v for k in ("kind", "value", "part") if (v := c.row.get(k, "").strip()))
    where = c.row.get("location", "").strip()
    return f"the {cells or 'line'}{' in ' + where if where else ''} of change {entry_id}"


def _undo_count(txn: Txn, c: Change, what: str) -> None:
    fresh = txn.fresh
    idx = find_again(fresh, c.identity, c.raw_after, what, c.line)
    rec = fresh.records[idx]
    part = fresh.part_at(rec.line)
    if part is None or c.qty_before is None or c.qty_after is None:
        raise ConflictError(f"cannot undo: {what} (line {rec.line}) now has errors; fix them first")
    qty = part.qty + c.qty_before - c.qty_after
    if qty < 0:
        raise ConflictError(f"cannot undo: {what} (line {rec.line}) holds {part.qty}, "
                            f"undoing would leave {qty}")
    if rec.raw == c.raw_after and qty == c.qty_before:
        raw = c.raw_before  # untouched since: its old text exactly
    else:
        raw = csvfile.with_cell(rec, fresh.columns["qty"], str(qty), fresh.dialect.delimiter).raw
    txn.edits.append(Edit("replace", idx, raw, change_for(fresh, idx, rec.raw, raw, part.qty, qty)))


def _undo_rewrite(txn: Txn, c: Change, what: str) -> None:
    fresh = txn.fresh
    idx = find_again(fresh, c.identity, c.raw_after, what, c.line)
    rec = fresh.records[idx]
    if rec.raw != c.raw_after or c.raw_before is None:
        raise ConflictError(f"cannot undo: {what} (line {rec.line}) was changed again since; "
                            "edit it back by hand")
    change = Change(rec.line, idx, None, {}, rec.raw, c.raw_before, c.qty_after, c.qty_before, rewrite=True)
    txn.edits.append(Edit("replace", idx, c.raw_before, change))


def _undo_add(txn: Txn, c: Change, what: str) -> None:
    fresh = txn.fresh
    idx = find_again(fresh, c.identity, c.raw_after, what, c.line)
    rec = fresh.records[idx]
    if rec.raw != c.raw_after:
        raise ConflictError(f"cannot undo: {what} (line {rec.line}) was changed after it was added; "
                            f"remove it with `drawerfit remove {rec.line}` if it should go")
    part = fresh.part_at(rec.line)
    qty = part.qty if part else None
    txn.edits.append(Edit("delete", idx, None, change_for(fresh, idx, rec.raw, None, qty, None)))


def _undo_remove(txn: Txn, c: Change, what: str) -> None:
    fresh = txn.fresh
    if c.identity is not None:
        back = fresh.find(identity_key(tuple(c.identity)))
        if back:
            raise ConflictError(f"cannot undo: {what} is already in the file again (line {back[0].line})")
    first = fresh.header + 1 if fresh.header is not None else 0
    pos = min(max(c.index, first), len(fresh.records))
    change = Change(c.line, pos, c.identity, dict(c.row), None, c.raw_before, None, c.qty_before)
    txn.edits.append(Edit("insert", pos, c.raw_before, change))


def _undo_header(txn: Txn, c: Change) -> None:
    """Take an added column out of the header again, unless the header was edited since or a
    line that stays holds something in that column (then the column stays: nothing is lost)."""
    fresh = txn.fresh
    if fresh.header is None or c.raw_before is None or fresh.records[fresh.header].raw != c.raw_after:
        return
    delim = fresh.dialect.delimiter
    width = len(csvfile.split_records(c.raw_before, delim)[0].cells)
    leaving = {e.index for e in txn.edits if e.kind == "delete"}
    planned = {e.index: e.raw for e in txn.edits if e.kind == "replace" and e.raw is not None}
    for i, rec in enumerate(fresh.records[fresh.header + 1:], start=fresh.header + 1):
        if i in planned:  # this undo already rewrites the line: look at it as it will be
            rec = csvfile.split_records(planned[i], delim)[0]
        if i not in leaving and any(cell.strip() for cell in rec.cells[width:]):
            return
    change = Change(c.line, fresh.header, None, {}, c.raw_after, c.raw_before, None, None, header=True)
    txn.edits.append(Edit("replace", fresh.header, c.raw_before, change))
