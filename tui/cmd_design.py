"""`drawerfit design` (find the best stages from the drawer) and `drawerfit build` (take a saved design's parts).

    drawerfit [--inventory F] design --topology T --gain G [--gain-tol 0.05] --supply V --load R
              [--source R] [--swing V] [--low-cut HZ] [--min-rin R] [--max-current A]
              [--temp-range LO..HI] [--depth 1-3] [--top N] [--min-yield F] [--seed S]
              [--no-hints] [--json] [--save FILE]
    drawerfit [--inventory F] build FILE [--pick N] [--reason TEXT]

Exit codes (design): 0 designs found, 3 no design meets the spec, 2 bad input.
Exit codes (build): 0 parts taken, 3 the drawer no longer holds the saved design's
parts (a line changed identity or has too few), 2 bad input (file, --pick).
"""

from __future__ import annotations

import hashlib
import json
import sys
from pathlib import Path

from inventory.atomic import atomic_write
from inventory.drawer import Drawer
from inventory.edits import StockError, StoreError
from inventory.locate import InventoryNotFound, find_inventory
from inventory.rows import identity_key
from inventory.store import Store
from inventory.values import ValueFormatError, parse_current, parse_number, parse_resistance, parse_voltage
from optimizer.spec import Spec
from optimizer.stage import TOPOLOGIES

from . import sheet_text


class InputError(Exception):
    """Bad command-line input; the message names the option."""


def register(sub) -> None:
    p = sub.add_parser("design", help="find the best stages buildable from the drawer",
                       description="Find the stages that meet the spec at both ends of the transistor's hFE "
                                   "range using only the parts on hand.  Values as on the parts: 22k, 4k7, 12V.")
    p.add_argument("--topology", default="common-emitter", choices=TOPOLOGIES)
    p.add_argument("--gain", required=True, help="gain magnitude (a common emitter reports it negative)")
    p.add_argument("--gain-tol", default="0.05", help="allowed gain error, fraction (default 0.05 = ±5 %%)")
    p.add_argument("--supply", default="12", metavar="VOLTS", help="supply voltage (default 12 V)")
    p.add_argument("--load", default="22k", metavar="OHMS", help="load resistance (default 22k)")
    p.add_argument("--source", default="0", metavar="OHMS", help="source resistance (default 0)")
    p.add_argument("--swing", default="1", metavar="VOLTS", help="clip-free swing at the load, V p-p (default 1)")
    p.add_argument("--low-cut", default="100", metavar="HZ", help="low cut-off at or below this (default 100 Hz)")
    p.add_argument("--min-rin", default="0", metavar="OHMS", help="minimum input resistance (default 0)")
    p.add_argument("--max-current", metavar="AMPS", help="largest supply current allowed (e.g. 5m)")
    p.add_argument("--temp-range", default="0..50", metavar="LO..HI", help="°C for the Monte Carlo (default 0..50)")
    p.add_argument("--depth", default="3", help="most parts per position, 1-3 (default 3)")
    p.add_argument("--top", default="3", help="how many distinct designs (default 3)")
    p.add_argument("--min-yield", metavar="F", help="least Monte Carlo yield a design must have (0..1)")
    p.add_argument("--seed", default="1", help="Monte Carlo seed (default 1)")
    p.add_argument("--no-hints", action="store_true", help="skip the shopping hints when nothing fits")
    p.add_argument("--json", action="store_true", help="print the result document as JSON")
    p.add_argument("--save", metavar="FILE", help="also write the result (with spec and stock fingerprint) here")
    p.set_defaults(handler=run_design)

    b = sub.add_parser("build", help="take a saved design's parts out of the drawer",
                       description="Mark the parts of a design saved with `design --save` as used "
                                   "(one journal entry; `drawerfit undo` puts them back).")
    b.add_argument("file", metavar="FILE")
    b.add_argument("--pick", default="1", help="which design of the file (1 = the best)")
    b.add_argument("--reason", default="", help="note for the journal")
    b.set_defaults(handler=run_build)


def _num(args, name, parse, flag):
    text = getattr(args, name)
    try:
        return parse(str(text))
    except (ValueFormatError, ValueError) as exc:
        raise InputError(f"--{flag}: {exc}") from None


def _int(args, name, flag, lo, hi):
    try:
        v = int(str(getattr(args, name)))
    except ValueError:
        raise InputError(f"--{flag}: {getattr(args, name)!r} is not a whole number") from None
    if not lo <= v <= hi:
        raise InputError(f"--{flag}: {v} is outside {lo}..{hi}")
    return v


def spec_from(args) -> Spec:
    lo_hi = str(args.temp_range).split("..")
    if len(lo_hi) != 2:
        raise InputError(f"--temp-range: {args.temp_range!r}; expected LO..HI in °C, e.g. 0..50")
    try:
        temp = (float(lo_hi[0]), float(lo_hi[1]))
    except ValueError:
        raise InputError(f"--temp-range: {args.temp_range!r}; expected LO..HI in °C, e.g. 0..50") from None
    return Spec(
        topology=args.topology,
        gain=_num(args, "gain", parse_number, "gain"),
        gain_tol=_num(args, "gain_tol", parse_number, "gain-tol"),
        supply_v=_num(args, "supply", parse_voltage, "supply"),
        load_ohms=_num(args, "load", parse_resistance, "load"),
        source_ohms=_num(args, "source", lambda t: 0.0 if t.strip() == "0" else parse_resistance(t), "source"),
        swing_pp=_num(args, "swing", parse_voltage, "swing"),
        low_cut_hz=_num(args, "low_cut", parse_number, "low-cut"),
        min_rin_ohms=_num(args, "min_rin", lambda t: 0.0 if t.strip() == "0" else parse_resistance(t), "min-rin"),
        max_supply_a=None if args.max_current is None else _num(args, "max_current", parse_current, "max-current"),
        temp_range_c=temp,
        max_parts_per_position=_int(args, "depth", "depth", 1, 3),
    )


def fingerprint(drawer: Drawer, lines) -> dict:
    """Identity and count of each used line, and a digest of them, to re-check before a build."""
    out = {}
    for line in sorted(set(lines)):
        part = drawer.part_at(line)
        out[str(line)] = None if part is None else {"identity": list(identity_key(part.identity)), "qty": part.qty}
    digest = hashlib.sha256(json.dumps(out, sort_keys=True).encode()).hexdigest()
    return {"lines": out, "sha256": digest}


def run_design(args) -> int:
    from optimizer.select import find_designs  # OR-Tools and scipy load only for a design

    try:
        spec = spec_from(args)
        top = _int(args, "top", "top", 1, 20)
        min_yield = None if args.min_yield is None else _num(args, "min_yield", parse_number, "min-yield")
        seed = _int(args, "seed", "seed", 0, 2**31 - 1)
        if min_yield is not None and not 0 <= min_yield <= 1:
            raise InputError(f"--min-yield: {min_yield:g}; expected a fraction between 0 and 1")
    except InputError as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    problems = spec.problems()
    if problems:
        for msg in problems:
            print(f"drawerfit: {msg}", file=sys.stderr)
        return 2
    try:
        path, message = find_inventory(getattr(args, "inventory", None))
    except InventoryNotFound as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    if message:
        print(f"drawerfit: {message}", file=sys.stderr)
    drawer = Drawer.load(path)
    for prob in drawer.errors if isinstance(drawer.errors, list) else drawer.errors():
        print(f"drawerfit: warning: {prob} (line left out)", file=sys.stderr)
    doc = find_designs(drawer, spec, top=top, depth=spec.max_parts_per_position, min_yield=min_yield,
                       hints=not args.no_hints, seed=seed)
    doc["inventory"] = str(path)
    if args.save:
        saved = dict(doc)
        saved["fingerprint"] = fingerprint(drawer, [u["line"] for d in doc["designs"] for u in d["uses"]])
        try:
            atomic_write(Path(args.save), (json.dumps(saved, indent=1) + "\n").encode())
        except OSError as exc:
            print(f"drawerfit: --save {args.save}: {exc}", file=sys.stderr)
            return 2
    if args.json:
        print(json.dumps(doc))
    elif doc["designs"]:
        print(sheet_text.table(doc))
        print()
        print(sheet_text.sheet(doc["designs"][0], doc.get("spec")))
        for w in doc.get("why", []):
            print(f"note: {w}")
    else:
        print(sheet_text.reasons(doc))
    return 0 if doc["designs"] else 3


def run_build(args) -> int:
    try:
        doc = json.loads(Path(args.file).read_text(encoding="utf-8"))
        designs = doc["designs"]
        pick = int(args.pick)
    except (OSError, ValueError, KeyError, TypeError) as exc:
        print(f"drawerfit: {args.file}: not a saved design file ({exc})", file=sys.stderr)
        return 2
    if not 1 <= pick <= len(designs):
        print(f"drawerfit: --pick: {args.pick}; {args.file} holds {len(designs)} design(s)", file=sys.stderr)
        return 2
    try:
        path, message = find_inventory(getattr(args, "inventory", None) or doc.get("inventory"))
    except InventoryNotFound as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    drawer = Drawer.load(path)
    uses = designs[pick - 1]["uses"]
    saved = (doc.get("fingerprint") or {}).get("lines", {})
    changed = []
    for u in uses:
        part = drawer.part_at(int(u["line"]))
        was = saved.get(str(u["line"]))
        if part is None or (was and list(identity_key(part.identity)) != was["identity"]):
            changed.append(f"line {u['line']} no longer holds the part the design was made with")
        elif part.qty < int(u["qty"]):
            changed.append(f"line {u['line']} has {part.qty} left, the design needs {u['qty']}")
    if changed:
        print(f"drawerfit: {path} changed since {args.file} was saved; not building:", file=sys.stderr)
        for c in changed:
            print(f"  {c}", file=sys.stderr)
        return 3
    try:
        entry = Store(path).take([(int(u["line"]), int(u["qty"])) for u in uses],
                                 args.reason or f"build design {pick} of {Path(args.file).name}")
    except StockError as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 3
    except (StoreError, OSError) as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    print(f"took {sum(int(u['qty']) for u in uses)} parts from {path} (change {getattr(entry, 'id', '?')}; "
          "`drawerfit undo` puts them back)")
    return 0
