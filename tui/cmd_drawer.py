"""Drawer-file subcommands: check, list, add, count, remove, history, undo.

    drawerfit [--inventory F] check
    drawerfit [--inventory F] list [--kind K] [--min V] [--max V] [--location L] [--in-stock] [--json]
    drawerfit [--inventory F] add KIND VALUE --qty N [--tolerance T] [--power P] [--voltage V] ...
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
import sys
from pathlib import Path

from inventory import values
from inventory.drawer import Drawer
from inventory.edits import ConflictError, NothingToUndo, StockError, StoreError, describe
from inventory.journal import Entry, undone_ids
from inventory.locate import InventoryNotFound, find_inventory
from inventory.parts import DIELECTRICS, KINDS, Part
from inventory.store import Store


class InputError(Exception):
    """Bad command-line input; the message names the option."""


def _guarded(fn):
    """Turn every refusal into `drawerfit: …` on stderr and an exit code, never a traceback."""

    @functools.wraps(fn)
    def run(args) -> int:
        try:
            return fn(args)
        except (StockError, ConflictError, NothingToUndo) as exc:
            print(f"drawerfit: {exc}", file=sys.stderr)
            return 1
        except (InputError, InventoryNotFound, StoreError, OSError, ValueError) as exc:
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

    p = sub.add_parser("list", help="list the parts in the drawer",
                       description="List parts, values in RKM spelling (4k7, 100n).")
    p.add_argument("--kind", choices=KINDS, help="only this kind")
    p.add_argument("--min", metavar="VALUE", help="smallest value, e.g. 1k or 10n (implies the kind)")
    p.add_argument("--max", metavar="VALUE", help="largest value, e.g. 100k or 1u")
    p.add_argument("--location", metavar="PLACE", help="only places starting with this (case ignored)")
    p.add_argument("--in-stock", action="store_true", help="only lines with qty > 0")
    p.add_argument("--json", action="store_true", help="print a JSON array (values in ohms / farads)")
    p.set_defaults(handler=_guarded(run_list))

    p = sub.add_parser("add", help="add a line to the drawer file",
                       description="Add a part. VALUE is the resistance or capacitance as written on the "
                                   "part (4k7, 100n), or the type number for a transistor (BC547B).")
    p.add_argument("kind", choices=KINDS)
    p.add_argument("value", metavar="VALUE")
    p.add_argument("--qty", required=True, metavar="N", help="how many")
    for flag, what in _ADD_FLAGS:
        p.add_argument(f"--{flag}", metavar=flag.split("-")[0].upper() if flag != "dielectric" else "D",
                       help=what)
    p.add_argument("--cell", action="append", default=[], metavar="COLUMN=TEXT",
                   help="set a column of your own (one the file already has)")
    p.add_argument("--reason", default="", help="why, for the history")
    p.set_defaults(handler=_guarded(run_add))

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


# ---- check and list ----------------------------------------------------------------------------

def run_check(args) -> int:
    drawer = Drawer.load(_path(args))
    for problem in drawer.problems:
        print(problem)
    n_err, n_warn = len(drawer.errors), len(drawer.warnings)
    print(f"{drawer.path}: {len(drawer.parts)} parts read, {n_err} error{'s' * (n_err != 1)}, "
          f"{n_warn} warning{'s' * (n_warn != 1)}", file=sys.stderr)
    return 2 if n_err else 0


def _bound(text: str | None, flag: str, kind: str | None) -> tuple[float | None, str | None]:
    """(SI value, kind it implies) of a --min/--max value."""
    if text is None:
        return None, None
    if kind == "transistor":
        raise InputError(f"--{flag} applies to resistors and capacitors, not transistors")
    tries = [k for k in ("resistor", "capacitor") if kind in (None, k)]
    first_error = None
    for k in tries:
        try:
            parse = values.parse_resistance if k == "resistor" else values.parse_capacitance
            return parse(text), k
        except values.ValueFormatError as exc:
            first_error = first_error or exc
    raise InputError(f"--{flag}: {first_error}")


def select(drawer: Drawer, args) -> list[Part]:
    lo, lo_kind = _bound(args.min, "min", args.kind)
    hi, hi_kind = _bound(args.max, "max", args.kind or lo_kind)
    kind = args.kind or lo_kind or hi_kind
    place = (args.location or "").lower()
    return [
        p for p in drawer.parts
        if (kind is None or p.kind == kind)
        and (lo is None or p.value >= lo * (1 - 1e-9))
        and (hi is None or p.value <= hi * (1 + 1e-9))
        and p.location.lower().startswith(place)
        and (not args.in_stock or p.qty > 0)
    ]


def part_json(part: Part) -> dict:
    return {
        "line": part.line, "kind": part.kind, "value": part.value, "qty": part.qty,
        "location": part.location, "tolerance": part.tolerance, "power_w": part.power_w,
        "voltage_v": part.voltage_v, "dielectric": part.dielectric, "polarised": part.polarised,
        "part": part.part, "polarity": part.polarity, "hfe_min": part.hfe_min, "hfe_max": part.hfe_max,
        "vceo_v": part.vceo_v, "ic_max_a": part.ic_max_a, "pd_max_w": part.pd_max_w, "notes": part.notes,
    }


def _cells(p: Part) -> list[str]:
    if p.kind == "transistor":
        hfe = f"hFE {p.hfe_min:g}–{p.hfe_max:g}" if p.hfe_min and p.hfe_max else ""
        vceo = f"{p.vceo_v:g} V" if p.vceo_v else ""
        value, tol, rating = p.part or "", p.polarity or "", " ".join(x for x in (hfe, vceo) if x)
    elif p.kind == "resistor":
        value, tol, rating = values.format_resistance(p.value), f"{p.tolerance * 100:g}%", f"{p.power_w:g} W"
    else:
        value, tol = values.format_capacitance(p.value), f"{p.tolerance * 100:g}%"
        volts = f"{p.voltage_v:g} V" if p.voltage_v else "? V"
        rating = f"{volts} {p.dielectric or ''}{' (+)' if p.polarised else ''}".strip()
    return [str(p.line), p.kind, value, tol, rating, str(p.qty), p.location, p.notes]


def run_list(args) -> int:
    drawer = Drawer.load(_path(args))
    parts = select(drawer, args)
    if args.json:
        print(json.dumps([part_json(p) for p in parts], indent=1, ensure_ascii=False))
    else:
        _table(["line", "kind", "value", "tol", "rating", "qty", "location", "notes"], [_cells(p) for p in parts])
        print(f"{len(parts)} of {len(drawer.parts)} lines in {drawer.path}"
              + (f" ({len(drawer.errors)} with errors: drawerfit check)" if drawer.errors else ""),
              file=sys.stderr)
    return 0


def _table(head: list[str], rows: list[list[str]]) -> None:
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]
    right = {0, 5}  # numbers line up on the right
    for r in [head, *rows]:
        print("  ".join(c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths))).rstrip())


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
    if c.raw_before is None:
        return f"added {cells}, qty {c.qty_after}"
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
    for flag, _ in _ADD_FLAGS:
        text = getattr(args, flag.replace("-", "_"))
        if text is not None:
            fields[flag.replace("-", "_")] = text
    for cell in args.cell:
        name, eq, text = cell.partition("=")
        if not eq or not name.strip():
            raise InputError(f"--cell: {cell!r} should be COLUMN=TEXT")
        fields[name.strip()] = text
    store = _store(args)
    _say(store, store.add_part(fields, args.reason))
    return 0


def run_count(args) -> int:
    text = args.qty.strip()
    number = text.lstrip("+-")
    if not number.isdigit():
        raise InputError(f"QTY: {args.qty!r} is not a count (expected e.g. 7, +3 or -2)")
    store = _store(args)
    if text[0] in "+-":
        entry = store.adjust_qty(args.line, int(text), args.reason)
    else:
        entry = store.set_qty(args.line, int(text), args.reason)
    _say(store, entry)
    return 0


def run_remove(args) -> int:
    store = _store(args)
    _say(store, store.remove_part(args.line, args.reason))
    return 0


def run_undo(args) -> int:
    store = _store(args)
    entry = store.undo(args.entry, args.reason)
    print(f"undid change {entry.undoes}")
    _say(store, entry)
    return 0


def run_history(args) -> int:
    store = Store(_path(args))
    entries = store.history()
    if args.last is not None:
        entries = entries[-args.last:] if args.last > 0 else []
    if args.json:
        print(json.dumps([e.to_json() for e in entries], indent=1, ensure_ascii=False))
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
