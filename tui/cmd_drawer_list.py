"""`drawerfit list`: the drawer's parts as a table or as JSON, filtered by kind, value and place."""

from __future__ import annotations

import json
import re
import sys
from dataclasses import fields

from inventory import values
from inventory.drawer import Drawer
from inventory.parts import KINDS, Part

from inventory.problems import printable

from .cmd_common import InputError, load_drawer, refusal
from .widgets.part_text import COLUMNS, row_cells


def register(sub, guarded, find_path) -> None:
    p = sub.add_parser("list", help="list the parts in the drawer",
                       description="List parts, values in RKM spelling (4k7, 100n).")
    p.add_argument("--kind", choices=KINDS, help="only this kind")
    p.add_argument("--min", metavar="VALUE", help="smallest value, e.g. 1k or 10n (implies the kind)")
    p.add_argument("--max", metavar="VALUE", help="largest value, e.g. 100k or 1u")
    p.add_argument("--location", metavar="PLACE", help="only places starting with this (case ignored)")
    p.add_argument("--in-stock", action="store_true", help="only lines with qty > 0")
    p.add_argument("--json", action="store_true", help="print a JSON array (values in ohms / farads)")
    p.set_defaults(handler=guarded(lambda args: run_list(args, find_path(args))))


def _bound(text: str | None, flag: str, kind: str | None) -> tuple[float | None, str | None]:
    """(SI value, kind it implies) of a --min/--max value."""
    if text is None:
        return None, None
    if kind == "transistor":
        raise InputError(f"--{flag} applies to resistors and capacitors, not transistors")
    tries = [k for k in ("resistor", "capacitor") if kind in (None, k)]
    first = None
    for k in tries:
        parse = values.parse_resistance if k == "resistor" else values.parse_capacitance
        try:
            return parse(text), k
        except values.ValueFormatError as exc:
            first = first or (parse, exc)
    raise InputError(f"--{flag}: {refusal(text, *first)}")  # "-1k": "is below 0", not "is not a resistance"


def select(drawer: Drawer, args) -> list[Part]:
    lo, lo_kind = _bound(args.min, "min", args.kind)
    hi, hi_kind = _bound(args.max, "max", args.kind or lo_kind)
    if lo is not None and hi is not None and lo > hi * (1 + 1e-9):
        raise InputError(f"--min {args.min} is above --max {args.max}: no value lies between them "
                         "(swap them, or leave one out)")
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


_FIELDS = tuple(f.name for f in fields(Part))


def part_json(part: Part) -> dict:
    """Every Part field (SI values: ohms, farads, W, V, A; None where absent) plus `polarised`."""
    out = {name: getattr(part, name) for name in _FIELDS}  # every field is a plain value: no deep copy
    out["polarised"] = part.polarised
    return out


def run_list(args, path) -> int:
    drawer = load_drawer(path)
    parts = select(drawer, args)
    if args.json:
        # One object per line: valid JSON, and the C encoder (an indented dump runs in Python, 10× slower).
        out = sys.stdout
        out.write("[\n")
        last = len(parts) - 1
        for i, p in enumerate(parts):
            out.write(json.dumps(part_json(p), ensure_ascii=False) + (",\n" if i < last else "\n"))
        out.write("]\n")
    else:
        # The app's spelling of a row (tui/widgets/part_text.py), plus the notes; each cell on one line.
        _table([c.lower() for c in COLUMNS] + ["notes"], [[one_line(c) for c in (*row_cells(p), p.notes)]
                                                         for p in parts])
        print(f"{len(parts)} of {len(drawer.parts)} lines in {drawer.path}"
              + (f" ({len(drawer.errors)} with errors: drawerfit check)" if drawer.errors else ""),
              file=sys.stderr)
    return 0


def one_line(text: str) -> str:
    """A cell as one line of the table: line breaks shown as " / ", other control characters (tabs,
    text-direction controls) escaped as the checks print them (\\t, \\u202e).  The file keeps its text."""
    return text if text.isprintable() else printable(_BREAKS.sub(" / ", text))  # the common case stays fast


_BREAKS = re.compile(r"\r\n|[\r\n\v\f\x1c-\x1e\x85\u2028\u2029]")


def _table(head: list[str], rows: list[list[str]]) -> None:
    widths = [max(len(r[i]) for r in [head, *rows]) for i in range(len(head))]
    right = {0, head.index("qty")}  # numbers line up on the right
    for r in [head, *rows]:
        print("  ".join(c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths))).rstrip())


