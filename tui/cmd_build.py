"""`drawerfit build`: take a saved design's parts out of the drawer.

    drawerfit [--inventory F] build FILE [--pick N] [--again] [--reason TEXT]

The saved file is checked whole before anything is touched (it may be hand-edited or come from
elsewhere).  A design already built from this file is refused unless `--again` asks for
another copy: the journal entry of a build carries a tag `[design <digest>]` naming the saved
design, and a build whose entry is not undone counts (tui/builds.py; the app does the same).
The entry also keeps the build's record (the design and its request) for the app's history.

Exit codes: 0 parts taken, 1 refused by the drawer's state (it changed since the design was
saved, too few parts left, already built), 2 bad input (the file, --pick).
"""

from __future__ import annotations

import json
from pathlib import Path

from inventory.edits import ConflictError, StockError, StoreError
from inventory.rows import identity_key
from inventory.store import Store

from .builds import build_record, design_tag, last_build
from .cmd_common import InputError, drawer_path, load_drawer, say, whole
from .saved_shape import shape_problem

__all__ = ["register", "read_saved", "design_tag", "run_build"]

MAX_SAVED_BYTES = 50_000_000  # a saved design is a few kB; anything this big is not one
MAX_QTY = 1_000_000_000


def register(sub) -> None:
    b = sub.add_parser("build", help="take a saved design's parts out of the drawer",
                       description="Mark the parts of a design saved with `design --save` as used "
                                   "(one journal entry; `drawerfit undo` puts them back).")
    b.add_argument("file", metavar="FILE")
    b.add_argument("--pick", default="1", help="which design of the file (1 = the preferred one)")
    b.add_argument("--again", action="store_true", help="build another copy of a design already built")
    b.add_argument("--reason", default="", help="note for the journal")
    b.set_defaults(handler=run_build)


def _count(x) -> bool:
    return isinstance(x, int) and not isinstance(x, bool) and 0 <= x <= MAX_QTY


def read_saved(file: str) -> dict:
    """The saved design document, checked in every part `build` reads; InputError saying what is wrong."""
    where = f"{file}: not a saved design file"
    try:
        raw = Path(file).read_bytes()[: MAX_SAVED_BYTES + 1]
    except OSError as exc:
        raise InputError(f"{file}: cannot read it ({exc.strerror or exc})") from None
    if len(raw) > MAX_SAVED_BYTES:
        raise InputError(f"{where} (larger than {MAX_SAVED_BYTES // 1_000_000} MB)")
    try:
        doc = json.loads(raw.decode("utf-8-sig"), parse_constant=_no_constant)
    except json.JSONDecodeError as exc:
        raise InputError(f"{file}:{exc.lineno}:{exc.colno}: not a saved design file (not JSON: {exc.msg})") from None
    except (ValueError, RecursionError) as exc:
        raise InputError(f"{where} (not JSON: {str(exc)[:80]})") from None
    if not isinstance(doc, dict) or not isinstance(doc.get("designs"), list):
        raise InputError(f'{where} (expected an object with a "designs" list, as `design --save` writes)')
    for i, d in enumerate(doc["designs"]):
        uses = d.get("uses") if isinstance(d, dict) else None
        if not isinstance(uses, list) or not uses:
            raise InputError(f'{file}: designs[{i}].uses: expected a list of drawer lines (design {i + 1} has none)')
        for j, u in enumerate(uses):
            if not (isinstance(u, dict) and _count(u.get("line")) and u["line"] >= 2
                    and _count(u.get("qty")) and u["qty"] >= 1):
                raise InputError(f'{file}: designs[{i}].uses[{j}]: expected {{"line": N ≥ 2, "qty": whole number '
                                 f"≥ 1}}, found {_shown(u)}")
    inv = doc.get("inventory")
    if inv is not None and not isinstance(inv, str):
        raise InputError(f'{where} ("inventory" must be a file name)')
    _check_fingerprint(doc.get("fingerprint"), where)
    return doc


def _no_constant(name: str):
    raise ValueError(f"{name} is not a count")


def _check_fingerprint(fp, where: str) -> None:
    if fp is None:
        return
    lines = fp.get("lines") if isinstance(fp, dict) else None
    if not isinstance(lines, dict) or not isinstance(fp.get("sha256", ""), str):
        raise InputError(f'{where} ("fingerprint" must hold "lines" and "sha256" as `design --save` writes them)')
    for key, was in lines.items():
        ok = was is None or (isinstance(was, dict) and isinstance(was.get("identity"), list)
                             and _count(was.get("qty")))
        if not ok or not key.isdigit():
            raise InputError(f'{where} (fingerprint line {_shown(key)} is not as `design --save` writes it)')


def _shown(x) -> str:
    text = json.dumps(x)
    return text if len(text) <= 60 else text[:57] + "..."


def _drawer_of(args, doc: dict) -> Path:
    """--inventory, else the drawer the saved file was made from (never another drawer silently)."""
    if getattr(args, "inventory", None) is not None:
        return drawer_path(args.inventory)
    try:
        return drawer_path(doc.get("inventory"), f"the drawer {args.file} was made from")
    except InputError as exc:
        raise InputError(f"{exc}; --inventory FILE names another drawer") from None


def run_build(args) -> int:
    try:
        doc = read_saved(args.file)
        designs = doc["designs"]
        if not designs:
            raise InputError(f"{args.file} holds no design (the spec was not met); nothing to build")
        pick = whole(args.pick, "pick", 1, len(designs))
        # The design goes into the journal (its sheet is shown from there): a damaged one is refused.
        problem = shape_problem(doc, pick, complete=False)
        if problem:
            raise InputError(f"{args.file}: {problem}")
        path = _drawer_of(args, doc)
        drawer = load_drawer(path)
    except InputError as exc:
        say(str(exc))
        return 2
    store = Store(path)
    tag = design_tag(doc, pick)
    try:
        history = store.history()
    except OSError as exc:
        say(f"{store.journal.path}: cannot read the journal ({exc.strerror or exc})")
        return 2
    built = last_build(history, tag)
    if built is not None and not args.again:
        say(f"design {pick} of {args.file} was already built (change {built.id}, {built.time[:10]}); "
            "not taking its parts twice. Use --again for another copy, or `drawerfit undo "
            f"{built.id}` if that build did not happen")
        return 1
    uses = designs[pick - 1]["uses"]
    saved = (doc.get("fingerprint") or {}).get("lines", {})
    changed = []
    for u in uses:
        part = drawer.part_at(u["line"])
        was = saved.get(str(u["line"]))
        if part is None or (was and list(identity_key(part.identity)) != was["identity"]):
            changed.append(f"line {u['line']} no longer holds the part the design was made with")
        elif part.qty < u["qty"]:
            changed.append(f"line {u['line']} has {part.qty} left, the design needs {u['qty']}")
    if changed:
        say(f"{path} changed since {args.file} was saved; not building:")
        for c in changed:
            say(f"  {c}")
        return 1
    reason = f"{args.reason or f'build design {pick} of {Path(args.file).name}'} {tag}"
    try:
        store.base_on(drawer)
        # The record lets the app show this build's sheet from the history.
        entry = store.take([(u["line"], u["qty"]) for u in uses], reason,
                           design=build_record(pick, designs[pick - 1], doc))
    except (StockError, ConflictError) as exc:  # the drawer's state: exit 1, as for every change
        say(str(exc))
        return 1
    except (StoreError, OSError) as exc:
        say(str(exc))
        return 2
    total = sum(u["qty"] for u in uses)
    print(f"took {total} parts from {path} (change {entry.id}; `drawerfit undo` puts them back)")
    return 0
