"""Drawer-file subcommands: check, list, add, edit, count, remove, history, undo.

    drawerfit [--inventory F] check
    drawerfit [--inventory F] list [--kind K] [--min V] [--max V] [--location L] [--in-stock] [--json]
    drawerfit [--inventory F] add KIND VALUE --qty N [--tolerance T] [--power P] [--voltage V] ...
    drawerfit [--inventory F] edit LINE [--value V] [--location L] [--notes N] ...
    drawerfit [--inventory F] count LINE QTY        (QTY 7 sets the count, +3 adds, -2 takes)
    drawerfit [--inventory F] remove LINE
    drawerfit [--inventory F] history [--json]
    drawerfit [--inventory F] undo [CHANGE]

Every change takes --reason TEXT, which goes into the journal.  Exit codes: 0 done,
2 bad input (options, line numbers, a file with errors for `check`), 1 a change refused
by the drawer's state (not enough stock, edited elsewhere, nothing to undo).
"""

from __future__ import annotations

import functools
import json
import re
import sys
from pathlib import Path

from inventory.drawer import Drawer
from inventory.edits import ConflictError, NothingToUndo, StockError, StoreError
from inventory.journal import Entry, undone_ids
from inventory.locate import InventoryNotFound, find_inventory
from inventory.parts import DIELECTRICS, KINDS
from inventory.rows import APPLIES
from inventory.store import Store
from inventory.undo import pick

from . import cmd_drawer_list
from .cmd_common import InputError


def _guarded(fn):
    """Turn every refusal into `drawerfit: …` on stderr and an exit code, never a traceback."""

    @functools.wraps(fn)
    def run(args) -> int:
        try:
            return fn(args)
        except BrokenPipeError:
            raise  # the reader left: tui.cli exits quietly
        except (StockError, ConflictError, NothingToUndo) as exc:
            print(f"drawerfit: {exc}", file=sys.stderr)
            return 1
        except OSError as exc:  # "[Errno 21] Is a directory: '…'" said as the other file errors are
            where = f"{exc.filename}: " if exc.filename else ""
            print(f"drawerfit: {where}cannot use it ({exc.strerror or exc}); nothing was written", file=sys.stderr)
            return 2
        except (InputError, InventoryNotFound, StoreError, ValueError) as exc:
            print(f"drawerfit: {exc}", file=sys.stderr)
            return 2

    return run


def _path(args) -> Path:
    path, message = find_inventory(getattr(args, "inventory", None))
    if message:
        print(f"drawerfit: {message}", file=sys.stderr)
    return path


def register(sub) -> None:
    p = sub.add_parser("check", help="check the drawer file and list every problem",
                       description="Check every line of the drawer file. Exit 0 when it has no errors "
                                   "(warnings are printed), 2 when it has.")
    p.set_defaults(handler=_guarded(run_check))

    cmd_drawer_list.register(sub, _guarded, _path)

    p = sub.add_parser("add", help="add a line to the drawer file",
                       description="Add a part. VALUE is the resistance or capacitance as written on the "
                                   "part (4k7, 100n), or the type number for a transistor (BC547B).")
    p.add_argument("kind", choices=KINDS)
    p.add_argument("value", metavar="VALUE")
    p.add_argument("--qty", required=True, metavar="N", help="how many")
    _cell_options(p)
    p.set_defaults(handler=_guarded(run_add))

    p = sub.add_parser("edit", help="change cells of a line in place",
                       description="Change the named cells of LINE; the others keep their spelling.")
    p.add_argument("line", type=int, metavar="LINE")
    p.add_argument("--kind", choices=KINDS)
    p.add_argument("--value", metavar="VALUE", help="resistance or capacitance, e.g. 4k7 or 100n")
    p.add_argument("--qty", metavar="N")
    p.add_argument("--part", metavar="TYPE", help="type number, e.g. BC547B")
    _cell_options(p)
    p.set_defaults(handler=_guarded(run_edit))

    p = sub.add_parser("count", help="set or change the count on a line",
                       description="QTY 7 sets the count to 7; +3 adds 3; -2 takes 2.")
    p.add_argument("line", type=int, metavar="LINE")
    p.add_argument("qty", metavar="QTY")
    p.add_argument("--reason", default="", help="why, for the history")
    p.set_defaults(handler=_guarded(run_count))

    p = sub.add_parser("remove", help="remove a line from the drawer file")
    p.add_argument("line", type=int, metavar="LINE")
    p.add_argument("--reason", default="", help="why, for the history")
    p.set_defaults(handler=_guarded(run_remove))

    p = sub.add_parser("history", help="list the changes made to the drawer file")
    p.add_argument("--json", action="store_true", help="print the journal entries as a JSON array")
    p.add_argument("--last", type=int, metavar="N", help="only the last N changes")
    p.set_defaults(handler=_guarded(run_history))

    p = sub.add_parser("undo", help="undo the last change (or change CHANGE)")
    p.add_argument("entry", nargs="?", type=int, metavar="CHANGE", help="change number from `history`")
    p.add_argument("--reason", default="", help="why, for the history")
    p.set_defaults(handler=_guarded(run_undo))


_ADD_FLAGS = (
    ("tolerance", "e.g. 1%% (default 5%% resistors, 20%% capacitors)"),
    ("power", "resistor rating, e.g. 0.25W or 1/4W (default 0.25 W)"),
    ("voltage", "capacitor rating, e.g. 25V or 6V3"),
    ("dielectric", f"capacitor dielectric: {', '.join(DIELECTRICS)}"),
    ("polarity", "transistor: NPN or PNP"),
    ("hfe-min", "transistor: smallest hFE"), ("hfe-max", "transistor: largest hFE"),
    ("vceo", "transistor: VCEO rating, e.g. 45V"), ("ic-max", "transistor: IC rating, e.g. 100mA"),
    ("pd-max", "transistor: dissipation rating, e.g. 500mW"),
    ("location", "drawer, bin or box"), ("notes", "free text"),
)


_FLAG_CELLS = {flag.replace("-", "_") for flag, _ in _ADD_FLAGS}


def _cell_options(p) -> None:
    for flag, what in _ADD_FLAGS:
        p.add_argument(f"--{flag}", metavar=flag.split("-")[0].upper() if flag != "dielectric" else "D",
                       help=what)
    p.add_argument("--cell", action="append", default=[], metavar="COLUMN=TEXT",
                   help="set a column of your own (one the file already has)")
    p.add_argument("--reason", default="", help="why, for the history")


def _cell_fields(args) -> dict[str, str]:
    """The cells named by --tolerance … --notes and --cell, by column name."""
    fields = {}
    for flag, _ in _ADD_FLAGS:
        text = getattr(args, flag.replace("-", "_"))
        if text is not None:
            fields[flag.replace("-", "_")] = text
    for cell in args.cell:
        name, eq, text = cell.partition("=")
        if not eq or not name.strip():
            raise InputError(f"--cell: {cell!r} should be COLUMN=TEXT")
        fields[name.strip()] = text
    return fields


# ---- check ----------------------------------------------------------------------------

def run_check(args) -> int:
    path = _path(args)
    try:
        drawer = Drawer.load(path)
    except OSError as exc:
        raise InputError(f"{path}: cannot read the drawer file ({exc.strerror or exc})") from None
    for problem in drawer.problems:
        print(problem)
    n_err, n_warn = len(drawer.errors), len(drawer.warnings)
    print(f"{drawer.path}: {len(drawer.parts)} parts read, {n_err} error{'s' * (n_err != 1)}, "
          f"{n_warn} warning{'s' * (n_warn != 1)}", file=sys.stderr)
    return 2 if n_err else 0


# ---- changes -----------------------------------------------------------------------------------

def _store(args) -> Store:
    store = Store(_path(args))
    store.load()
    return store


def _change_text(c) -> str:
    """One journal Change in words: "resistor 4k7 A1  10 → 8"."""
    if c.header:
        return "header line (a column added or taken out)"
    cells = " ".join(v for k in ("kind", "value", "part", "location") if (v := c.row.get(k, "").strip()))
    qty = f", qty {c.qty_after}" if c.qty_after is not None else ""
    if c.rewrite:
        return f"edited: {cells}{qty}"
    if c.raw_before is None:
        return f"added {cells}{qty}"
    if c.raw_after is None:
        return f"removed {cells}" + (f" (qty {c.qty_before})" if c.qty_before is not None else "")
    return f"{cells}  {c.qty_before} → {c.qty_after}"


def _say(store: Store, entry: Entry) -> None:
    for c in entry.changes:
        print(f"{store.path}:{c.line}: {_change_text(c)}")
    print(f"change {entry.id} saved to {store.journal.path.name} (undo: drawerfit undo {entry.id})",
          file=sys.stderr)


def run_add(args) -> int:
    fields = {"kind": args.kind, "qty": args.qty}
    fields["part" if args.kind == "transistor" else "value"] = args.value
    cells = _cell_fields(args)
    _refuse_cells_of_other_kinds(args.kind, cells)
    fields.update(cells)
    store = _store(args)
    _say(store, store.add_part(fields, args.reason))
    return 0


def _refuse_cells_of_other_kinds(kind: str, cells: dict[str, str]) -> None:
    """A cell another kind reads (--dielectric on a resistor) would sit in the file unread: refused."""
    for name in cells:
        owners = [k for k, names in APPLIES.items() if name in names]
        if owners and kind not in owners:
            flag = f"--{name.replace('_', '-')}" if name in _FLAG_CELLS else f"--cell {name}=…"
            raise InputError(f"{flag} does not apply to a {kind} (it is for {' and '.join(k + 's' for k in owners)}); "
                             "nothing was written")


def run_edit(args) -> int:
    fields = {k: v for k in ("kind", "value", "qty", "part") if (v := getattr(args, k)) is not None}
    fields.update(_cell_fields(args))
    if not fields:
        raise InputError("edit: name at least one cell to change, e.g. --location B4")
    store = _store(args)
    entry = store.edit_part(args.line, fields, args.reason)
    if not entry.changes:
        print(f"{store.path}:{args.line}: already reads so; nothing written", file=sys.stderr)
        return 0
    _say(store, entry)
    return 0


def run_count(args) -> int:
    text = args.qty.strip()
    if not re.fullmatch(r"[+-]?[0-9]{1,9}", text):
        raise InputError(f"QTY: {args.qty!r} is not a count (expected e.g. 7, +3 or -2)")
    store = _store(args)
    if text[0] in "+-":
        entry = store.adjust_qty(args.line, int(text), args.reason)
    else:
        entry = store.set_qty(args.line, int(text), args.reason)
    if not entry.changes:  # the count it already has: no journal entry that changes nothing
        print(f"{store.path}:{args.line}: already reads so; nothing written", file=sys.stderr)
        return 0
    _say(store, entry)
    return 0


def run_remove(args) -> int:
    store = _store(args)
    _say(store, store.remove_part(args.line, args.reason))
    return 0


def _damage_warnings(store: Store, extra: str = "") -> None:
    """Name each journal line the last read left out (file:line), on stderr."""
    for note in store.journal.damage_notes():
        print(f"drawerfit: warning: {note}{extra}", file=sys.stderr)


def run_undo(args) -> int:
    store = _store(args)
    store.history()
    _damage_warnings(store, "; a change it held is not offered for undo")
    entry = store.undo(args.entry, args.reason or _undo_reason(store, args.entry))
    print(f"undid change {entry.undoes}")
    _say(store, entry)
    return 0


def _undo_reason(store: Store, entry_id: int | None) -> str:
    """The journal reason of an undo given without --reason: "undo of #N"."""
    try:
        return f"undo of #{pick(store.history(), entry_id).id}"
    except Exception:  # noqa: BLE001 - only the wording; the undo itself then says what is wrong
        return "undo"


def run_history(args) -> int:
    if args.last is not None and args.last < 1:
        raise InputError(f"--last: {args.last}; expected how many of the latest changes to show, 1 or more")
    store = Store(_path(args))
    entries = store.history()
    _damage_warnings(store)
    if args.last is not None:
        entries = entries[-args.last:]
    if args.json:
        # ASCII escapes: a journaled line may hold bytes that were not UTF-8.
        print(json.dumps([e.to_json() for e in entries], indent=1))
        return 0
    undone = undone_ids(store.history())
    for e in entries:
        what = e.action + (f" of {e.undoes}" if e.undoes else "")
        note = f"  (undone by {undone[e.id]})" if e.id in undone else ""
        print(f"{e.id:>4}  {e.time[:19].replace('T', ' ')}Z  {what:<10} {e.reason}{note}")
        for c in e.changes:
            print(f"        line {c.line}: {_change_text(c)}")
    if not entries:
        print(f"no changes recorded in {store.journal.path}", file=sys.stderr)
    return 0
