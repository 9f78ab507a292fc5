"""The pieces of a drawer-file change: refusals, record edits, finding a line again by identity.

A change is planned as a list of `Edit`s against the file as it is now (`Txn.fresh`);
`apply_edits` splices them in, leaving every other record's text untouched.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field

from . import csvfile
from .drawer import Drawer
from .journal import Change
from .parts import Part
from .rows import MAX_QTY, identity_key
from .values import format_capacitance, format_resistance


class StoreError(Exception):
    """A change that was refused; the message says why.  Nothing was written."""


class StockError(StoreError):
    """A take that asks for more than a line holds.  `.short`: (line, part text, have, need)."""

    def __init__(self, path: str, short: list[tuple[int, str, int, int]]) -> None:
        self.short = short
        lines = "; ".join(f"line {ln} ({what}) has {have}, needs {need}" for ln, what, have, need in short)
        super().__init__(f"not enough stock in {path}: {lines}; nothing was taken")


class NothingToUndo(StoreError):
    """Every change in the journal is already undone (or the journal is empty)."""


class ConflictError(StoreError):
    """The file was edited elsewhere in a way this change cannot be re-applied to."""


def describe(part: Part) -> str:
    """A short human name for a part: "resistor 4k7 5% in A1"."""
    if part.kind == "transistor":
        text = f"{part.polarity or ''} transistor {part.part or ''}".strip()
    else:
        fmt = format_resistance if part.kind == "resistor" else format_capacitance
        text = f"{part.kind} {fmt(part.value)}"
        if part.tolerance is not None:
            text += f" {part.tolerance * 100:g}%"
    return text + (f" in {part.location}" if part.location else "")


@dataclass
class Edit:
    kind: str             # "replace", "delete" or "insert" (before record `index`; len = append)
    index: int
    raw: str | None
    change: Change | None  # None for a header line, which the journal does not track


@dataclass
class Txn:
    fresh: Drawer         # the file as it is now, under the lock
    base: Drawer          # the file as the Store loaded it (== fresh when nothing moved)
    moved: bool           # the file changed on disk since the Store loaded it
    undoes: int | None = None
    edits: list[Edit] = field(default_factory=list)


def identity_and_row(drawer: Drawer, idx: int) -> tuple[list | None, dict[str, str]]:
    """Record `idx`'s part identity (None for a line with errors) and its cells by column."""
    rec = drawer.records[idx]
    part = drawer.part_at(rec.line)
    row = {name: rec.cells[i] for name, i in drawer.columns.items() if i < len(rec.cells)}
    return (list(part.identity) if part is not None else None), row


def change_for(drawer: Drawer, idx: int, before: str | None, after: str | None,
               qty_before: int | None, qty_after: int | None) -> Change:
    """A journal Change for record `idx` of `drawer` (its identity, cells and the two raw texts)."""
    identity, row = identity_and_row(drawer, idx)
    return Change(drawer.records[idx].line, idx, identity, row, before, after, qty_before, qty_after)


def qty_edit(txn: Txn, idx: int, part: Part, qty: int) -> None:
    """Re-write only the qty cell of record `idx` (every other cell keeps its spelling).

    A count past MAX_QTY is refused: written, it would make the line an error line (its qty no count).
    A count the line already has is no edit at all: nothing is written and nothing journaled."""
    if qty == part.qty:
        return
    if qty > MAX_QTY:
        raise StoreError(f"{txn.fresh.path}: line {part.line} would count {qty:,} ({describe(part)}); "
                         f"a line holds at most {MAX_QTY:,}; nothing was written")
    rec = txn.fresh.records[idx]
    new = csvfile.with_cell(rec, txn.fresh.columns["qty"], str(qty), txn.fresh.dialect.delimiter)
    txn.edits.append(Edit("replace", idx, new.raw, change_for(txn.fresh, idx, rec.raw, new.raw, part.qty, qty)))


def find_again(drawer: Drawer, identity: list | tuple | None, raw: str | None, what: str,
               line: int | None = None) -> int:
    """Record index in `drawer` of the part with `identity` (or, for a line with errors, `raw`).

    Lines holding the same part twice (a warning, not an error) are told apart by their exact
    text; identical lines are interchangeable, and `line` picks one.  ConflictError when it is
    not there or still matches more than one line.
    """
    if identity is not None:
        lines = [p.line for p in drawer.find(identity_key(tuple(identity)))]
    else:
        lines = [r.line for r in drawer.records if r.raw == raw]
    if len(lines) > 1:
        same_text = [n for n in lines if drawer.records[drawer.record_index(n)].raw == raw]
        if same_text:  # lines of identical text are interchangeable
            lines = [line if line in same_text else same_text[0]]
    if not lines:
        raise ConflictError(f"{drawer.path} was changed and {what} is no longer there "
                            "(edited or removed); nothing was written — reload and try again")
    if len(lines) > 1:
        raise ConflictError(f"{drawer.path} was changed and {what} now matches lines "
                            f"{', '.join(map(str, lines))}; nothing was written — say which one")
    idx = drawer.record_index(lines[0])
    assert idx is not None
    return idx


def apply_edits(fresh: Drawer, edits: list[Edit]) -> tuple[list[str], list[int | None]]:
    """The file's records after `edits`, and where each edit's record ended up (None: deleted)."""
    replaced = {e.index: k for k, e in enumerate(edits) if e.kind == "replace"}
    deleted = {e.index for e in edits if e.kind == "delete"}
    inserted: dict[int, list[int]] = defaultdict(list)
    for k, e in enumerate(edits):
        if e.kind == "insert":
            inserted[e.index].append(k)
    out: list[str] = []
    where: list[int | None] = [None] * len(edits)
    n = len(fresh.records)
    for i in range(n + 1):
        for k in inserted.get(i, []):
            where[k] = len(out)
            out.append(edits[k].raw or "")
        if i == n:
            break
        if i in deleted:
            continue
        if i in replaced:
            where[replaced[i]] = len(out)
            out.append(edits[replaced[i]].raw or "")
        else:
            out.append(fresh.records[i].raw)
    for j in range(len(out) - 1):  # only the old last line can lack a line ending
        if not out[j].endswith(("\n", "\r")):
            out[j] += fresh.dialect.newline
    return out, where


def header_at(out: list[str], delimiter: str) -> int | None:
    """Index of the header in a file's records as text (the first record that is not blank)."""
    blank = " \t\r\n" + delimiter
    return next((i for i, raw in enumerate(out) if raw.strip(blank)), None)


def lines_at(out: list[str], positions: set[int]) -> dict[int, int]:
    """Line number (1-based, of its first physical line) of each record index in `positions`."""
    found, line = {}, 1
    last = max(positions, default=-1)
    for i, raw in enumerate(out):
        if i in positions:
            found[i] = line
        if i >= last:
            break
        line += raw.count("\n") + raw.count("\r") - raw.count("\r\n")
    return found


def record_alone(out: list[str], pos: int, delimiter: str, path: str) -> tuple[Drawer, int]:
    """Record `pos` of a file's text, read under the file's header alone: (drawer, its index).

    Reading one line this way costs what the line costs, where re-reading the file would cost
    the file (the difference between milliseconds and a minute on a 50 MB drawer).
    """
    hi = header_at(out, delimiter)
    if hi is None or hi == pos:
        trial = Drawer.parse("".join(out), path)
        return trial, pos
    head = out[hi] if out[hi].endswith(("\n", "\r")) else out[hi] + "\n"
    trial = Drawer.parse(head + out[pos], path)
    return trial, len(trial.records) - 1
