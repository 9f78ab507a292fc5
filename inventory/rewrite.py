"""Planning a new line or a rewritten one: columns to use, the line's text, and the checks.

A line is only written when it reads without errors and does not repeat a part another
line already holds.  A known column the file lacks is appended to the header (journaled,
so undo can take it out again); an unknown column is refused.
"""

from __future__ import annotations

from . import csvfile
from .edits import Edit, StoreError, Txn, apply_edits, change_for, describe, record_alone
from .journal import Change
from .rows import COLUMNS, identity_key


def normalise(fields: dict) -> dict[str, str]:
    """Column names lower-cased, cell texts stripped, None as empty."""
    return {str(k).strip().lower(): ("" if v is None else str(v).strip()) for k, v in fields.items()}


def columns_for(txn: Txn, cells: dict[str, str]) -> dict[str, int]:
    """Column name → cell index with every column `cells` names, planning a header edit if needed."""
    fresh = txn.fresh
    delim, newline = fresh.dialect.delimiter, fresh.dialect.newline
    unknown = [k for k in cells if k not in fresh.columns and k not in COLUMNS]
    if unknown:
        raise StoreError(f'{fresh.path} has no column "{unknown[0]}" '
                         f"(columns: {', '.join(fresh.columns) or 'none'})")
    if fresh.header is None:  # an empty file: start it with a header
        names = [c for c in COLUMNS if c in cells or c in ("kind", "value", "qty", "location")]
        txn.edits.append(Edit("insert", len(fresh.records), csvfile.make_raw(names, delim, newline), None))
        return {n: i for i, n in enumerate(names)}
    old = header = fresh.records[fresh.header]
    # A header that is not a drawer's (no kind, value or qty; a quote never closed) is not patched: the
    # file may be another CSV named by mistake, and columns appended after a broken quote read as nothing.
    fault = fresh.header_fault()
    if fault:
        raise StoreError(f"{fresh.path}:{header.line}: not a drawer file: the header {fault}; fix the header "
                         "first (`drawerfit check` lists every problem); nothing was written")
    columns = dict(fresh.columns)
    for k in cells:
        if k not in columns:  # a known column the file lacks: append it to the header
            header = csvfile.with_cell(header, len(header.cells), k, delim)
            columns[k] = len(header.cells) - 1
    if header is not old:
        change = Change(old.line, fresh.header, None, {}, old.raw, header.raw, None, None, header=True)
        txn.edits.append(Edit("replace", fresh.header, header.raw, change))
    return columns


def plan_add(txn: Txn, cells: dict[str, str]) -> None:
    columns = columns_for(txn, cells)
    row = [""] * (max(columns.values()) + 1)
    for k, v in cells.items():
        row[columns[k]] = v
    raw = csvfile.make_raw(row, txn.fresh.dialect.delimiter, txn.fresh.dialect.newline)
    txn.edits.append(Edit("insert", len(txn.fresh.records), raw, None))
    check_line(txn, "the new line")


def plan_edit(txn: Txn, idx: int, cells: dict[str, str]) -> None:
    """Rewrite record `idx`: only cells whose text changes are re-spelt."""
    columns = columns_for(txn, cells)
    rec = new = txn.fresh.records[idx]
    for k, v in cells.items():
        i = columns[k]
        if (rec.cells[i].strip() if i < len(rec.cells) else "") != v:
            new = csvfile.with_cell(new, i, v, txn.fresh.dialect.delimiter)
    if new.raw == rec.raw:
        return  # nothing to change: no edit, no journal entry
    txn.edits.append(Edit("replace", idx, new.raw, None))
    check_line(txn, f"line {rec.line} as edited", rec.raw)


def check_line(txn: Txn, what: str, raw_before: str | None = None) -> None:
    """Refuse the last planned edit's line if it has errors or repeats a part; journal it."""
    out, where = apply_edits(txn.fresh, txn.edits)
    # The line is read under the header alone (not the whole file again); repeats are looked up
    # among the file's other parts.
    trial, k = record_alone(out, where[-1], txn.fresh.dialect.delimiter, str(txn.fresh.path))
    rec = trial.records[k]
    errors = [p for p in trial.problems if p.line == rec.line and p.is_error]
    if errors:
        raise StoreError(f"{what} is not valid: " + "; ".join(p.message for p in errors))
    part = trial.part_at(rec.line)
    if part is None:
        raise StoreError(f"{what} is empty: give at least kind, value and qty")
    edited = txn.fresh.records[txn.edits[-1].index].line if raw_before else None
    old = txn.fresh.part_at(edited) if raw_before else None
    key = identity_key(part.identity)
    same = [p for p in txn.fresh.find(key) if p.line != edited]
    if same and (old is None or identity_key(old.identity) != key):  # a new repeat, not an old one
        raise StoreError(f"{txn.fresh.path}:{same[0].line} already holds this part ({describe(part)}); "
                         "change its count instead")
    change = change_for(trial, k, raw_before, rec.raw, old.qty if old else None, part.qty)
    change.index = where[-1]  # the Store sets line and index in the saved file
    txn.edits[-1].change = change
    change.rewrite = raw_before is not None
