"""`drawerfit design`: find the stages the drawer can build that meet a specification.

    drawerfit [--inventory F] design --topology T --gain G [--gain-tol 5%] --supply V --load R
              [--source R] [--swing V] [--low-cut HZ] [--min-rin R] [--max-current A]
              [--max-thd 1%] [--min-vce V] [--temp-range LO..HI] [--depth 1-3] [--top N]
              [--min-yield F] [--seed S] [--prefer P] [--time-limit S] [--patience S] [--no-hints] [--json]
              [--save FILE]

Exit codes: 0 designs found (optimal or not), 3 proven that nothing in the drawer meets the
spec, 4 nothing found within the time limit (not proven impossible), 2 bad input.
Every value takes the drawer file's spellings (RKM, SI prefixes, exponents): 1.8k, 4k7, 4.7e-6.
"""

from __future__ import annotations

import hashlib
import json
import math
import sys

from inventory.atomic import atomic_write
from inventory.rows import identity_key
from inventory.values import (
    format_resistance,
    parse_current,
    parse_fraction,
    parse_frequency,
    parse_number,
    parse_resistance,
    parse_temperature,
    parse_voltage,
)
from optimizer.spec import (
    ANY_TOPOLOGY,
    DEFAULT_DEPTH,
    DEFAULT_MAX_THD,
    DEFAULT_MIN_VCE_V,
    DEFAULT_PATIENCE_S,
    DEFAULT_PREFER,
    DEFAULT_TIME_LIMIT_S,
    DEFAULT_TOP,
    OPEN_LOAD_OHMS,
    PREFERENCES,
    Spec,
)
from optimizer.chain.names import CHAINS
from optimizer.physics.stage import TOPOLOGIES

from . import cmd_build
from .request_fields import parse_min_vce, parse_negative_voltage, rails_shorthand
from .cmd_common import InputError, drawer_path, load_drawer, output_path, say, value, whole

EXIT_FOUND, EXIT_INFEASIBLE, EXIT_UNPROVEN = 0, 3, 4
# `--load open`: nothing connected (a scope probe, an ADC input), as the exact solver's 1 TΩ stand-in,
# so the JSON stays finite.
OPEN_LOAD_WORDS = ("open", "none", "inf")
DEFAULTS = Spec()  # the request's defaults, shared with the app's form (tui/request_fields.py)
MAX_TIME_LIMIT_S = 24 * 3600.0


def register(sub) -> None:
    p = sub.add_parser("design", help="find the best stages buildable from the drawer",
                       description="Find the stages that meet the spec at both ends of the transistor's hFE "
                                   "range and of the temperature range, using only the parts on hand.  "
                                   "Values as on the parts: 22k, 4k7, 12V, 1.8k, 4.7e-6.")
    p.add_argument("--topology", default="common-emitter", choices=(*TOPOLOGIES, ANY_TOPOLOGY, *CHAINS),
                   help="the kind of stage, or `any`: every kind the drawer can build, one trade-off set "
                        "across them (default common-emitter), or a two-stage chain FIRST+SECOND "
                        "(e.g. emitter-follower+common-emitter)")
    p.add_argument("--gain", required=True, help="gain magnitude (a common emitter reports it negative)")
    p.add_argument("--gain-tol", default="0.05", help="allowed gain error: 5%% or 0.05 (default ±5 %%)")
    d = DEFAULTS
    p.add_argument("--supply", default=f"{d.supply_v:g}", metavar="VOLTS",
                   help=f"supply voltage (default {d.supply_v:g} V); ±12 means 12 and --negative-supply -12")
    p.add_argument("--negative-supply", default="0", metavar="VOLTS",
                   help="the negative rail of a split supply, e.g. -12 (split-supply stages only; default 0: "
                        "one supply)")
    p.add_argument("--dc-input", action="store_true",
                   help="the source is ground-referenced and joined to the base directly, no CIN "
                        "(split-supply stages)")
    p.add_argument("--load", default=format_resistance(d.load_ohms), metavar="OHMS",
                   help=f"load resistance, or `open` (default {format_resistance(d.load_ohms)})")
    p.add_argument("--source", default=format_resistance(d.source_ohms), metavar="OHMS",
                   help=f"source resistance (default {format_resistance(d.source_ohms)})")
    p.add_argument("--swing", default=f"{d.swing_pp:g}", metavar="VOLTS",
                   help=f"clip-free swing at the load, V p-p (default {d.swing_pp:g})")
    p.add_argument("--low-cut", default=f"{d.low_cut_hz:g}", metavar="HZ",
                   help=f"low cut-off at or below this, e.g. 30 or 1.8k (default {d.low_cut_hz:g} Hz)")
    p.add_argument("--min-rin", metavar="OHMS", help="minimum input resistance (default: 10 × the source, "
                                                     "at least 1k)")
    p.add_argument("--max-current", metavar="AMPS", help="largest supply current allowed (e.g. 5m)")
    p.add_argument("--max-thd", default=f"{100 * DEFAULT_MAX_THD:g}%", metavar="THD",
                   help=f"largest THD at the swing: 1%% or 0.01 (default {DEFAULT_MAX_THD:.0%}%)")
    p.add_argument("--min-vce", default=f"{DEFAULT_MIN_VCE_V:g}", metavar="VOLTS",
                   help=f"least quiescent VCE at every corner (default {DEFAULT_MIN_VCE_V:g} V)")
    t_lo, t_hi = d.temp_range_c
    p.add_argument("--temp-range", default=f"{t_lo:g}..{t_hi:g}", metavar="LO..HI",
                   help=f"°C range the design must hold over (default {t_lo:g}..{t_hi:g}; 27..27 = room only)")
    p.add_argument("--depth", default=f"{DEFAULT_DEPTH}", help=f"most parts per position, 1-3 (default {DEFAULT_DEPTH})")
    p.add_argument("--top", default=f"{DEFAULT_TOP}",
                   help=f"how many designs of the trade-off set (default {DEFAULT_TOP})")
    p.add_argument("--min-yield", metavar="F", help="least Monte Carlo yield a design must have: 90%% or 0.9")
    p.add_argument("--seed", default="1", help="Monte Carlo seed (default 1)")
    p.add_argument("--prefer", default=DEFAULT_PREFER, choices=PREFERENCES,
                   help=f"which of the trade-off set comes first (default {DEFAULT_PREFER})")
    p.add_argument("--time-limit", default=f"{DEFAULT_TIME_LIMIT_S:g}", metavar="SECONDS",
                   help=f"stop searching after this long and show the best so far (default {DEFAULT_TIME_LIMIT_S:g} s)")
    p.add_argument("--patience", default=f"{DEFAULT_PATIENCE_S:g}", metavar="SECONDS",
                   help="stop once the preferred design has not changed for this long, unproven "
                        f"(default {DEFAULT_PATIENCE_S:g} s; 0 = search to the proof or the time limit)")
    p.add_argument("--no-hints", action="store_true", help="skip the shopping hints when nothing fits")
    p.add_argument("--json", action="store_true", help="print the result document as JSON")
    p.add_argument("--save", metavar="FILE", help="also write the result (with spec and stock fingerprint) here")
    p.set_defaults(handler=run_design)
    cmd_build.register(sub)


def _temp_range(text: str) -> tuple[float, float]:
    lo, sep, hi = str(text).strip().partition("..")
    if not sep:
        raise InputError(f"--temp-range: {text!r}; expected LO..HI in °C, e.g. 0..50")
    return (value(lo, parse_temperature, "temp-range"), value(hi, parse_temperature, "temp-range"))


def spec_from(args) -> Spec:
    """The Spec the options describe; InputError naming the option for text that is no value."""
    args.supply, args.negative_supply = rails_shorthand(args.supply, args.negative_supply)
    return Spec(
        topology=args.topology,
        gain=value(args.gain, parse_number, "gain"),
        gain_tol=value(args.gain_tol, parse_fraction, "gain-tol"),
        supply_v=value(args.supply, parse_voltage, "supply"),
        load_ohms=(OPEN_LOAD_OHMS if str(args.load).strip().lower() in OPEN_LOAD_WORDS
                   else value(args.load, parse_resistance, "load")),
        source_ohms=value(args.source, parse_resistance, "source"),  # "0" is an ideal voltage source
        swing_pp=value(args.swing, parse_voltage, "swing"),
        low_cut_hz=value(args.low_cut, parse_frequency, "low-cut"),
        min_rin_ohms=value(args.min_rin, parse_resistance, "min-rin"),
        max_supply_a=value(args.max_current, parse_current, "max-current"),
        temp_range_c=_temp_range(args.temp_range),
        max_parts_per_position=whole(args.depth, "depth", 1, 3),
        max_thd=value(args.max_thd, parse_fraction, "max-thd"),
        min_vce_v=value(args.min_vce, parse_min_vce, "min-vce"),
        negative_supply_v=value(args.negative_supply, parse_negative_voltage, "negative-supply"),
        dc_input=bool(args.dc_input),
    )


def options_from(args) -> dict:
    """Solver options other than the spec (top, yield, seed, preference, time limit, patience)."""
    min_yield = value(args.min_yield, parse_fraction, "min-yield")
    if min_yield is not None and not 0 <= min_yield <= 1:
        raise InputError(f"--min-yield: {min_yield:g}; expected a share between 0 and 1 (e.g. 90% or 0.9)")
    limit = value(args.time_limit, parse_number, "time-limit")
    if not 0 < limit <= MAX_TIME_LIMIT_S:
        raise InputError(f"--time-limit: {args.time_limit!r}; expected seconds above 0 and at most a day")
    patience = value(args.patience, parse_number, "patience")
    if not 0 <= patience <= MAX_TIME_LIMIT_S:
        raise InputError(f"--patience: {args.patience!r}; expected seconds, 0 (off) up to a day")
    return {"top": whole(args.top, "top", 1, 20), "min_yield": min_yield,
            "seed": whole(args.seed, "seed", 0, 2**31 - 1), "prefer": args.prefer, "time_limit_s": limit,
            "patience_s": patience}


def fingerprint(drawer, lines) -> dict:
    """Identity and count of each used line, and a digest of them, to re-check before a build."""
    out = {}
    for line in sorted(set(lines)):
        part = drawer.part_at(line)
        out[str(line)] = None if part is None else {"identity": list(identity_key(part.identity)), "qty": part.qty}
    digest = hashlib.sha256(json.dumps(out, sort_keys=True).encode()).hexdigest()
    return {"lines": out, "sha256": digest}


def run_design(args) -> int:
    try:
        spec = spec_from(args)
        opts = options_from(args)
        save = output_path(args.save, "--save")  # a bad target said now, not after the search
        problems = spec.problems()
        if problems:
            say("; ".join(problems))  # one line, each part naming its option
            return 2
        path = drawer_path(getattr(args, "inventory", None))
        drawer = load_drawer(path)
    except InputError as exc:
        say(str(exc))
        return 2
    for prob in drawer.errors:
        say(f"warning: {prob} (line left out)")
    from optimizer.search.select import find_designs  # the solver's modules load only for a design

    from tui.cli import STARTED

    with _progress_bar() as progress:
        # The limit counts from the command's start: loading modules and the drawer spend it too.
        doc = find_designs(drawer, spec, depth=spec.max_parts_per_position, hints=not args.no_hints,
                           progress=progress, started=STARTED, **opts)
    doc["inventory"] = str(path)
    if save is not None:
        saved = dict(doc)
        saved["fingerprint"] = fingerprint(drawer, [u["line"] for d in doc["designs"] for u in d["uses"]])
        try:
            atomic_write(save, (json.dumps(saved, indent=1) + "\n").encode())
        except OSError as exc:
            say(f"--save {args.save}: {exc.strerror or exc}")
            return 2
    if args.json:
        print(json.dumps(doc))
    else:
        print(human(doc, spec))
    return exit_code(doc)


def exit_code(doc: dict) -> int:
    if doc.get("designs"):
        return EXIT_FOUND
    return EXIT_INFEASIBLE if doc.get("status") == "infeasible" else EXIT_UNPROVEN


def human(doc: dict, spec: Spec) -> str:
    """The table, the preferred design's build sheet, and the defaults that were applied."""
    from . import sheet_text

    floor = f"input resistance floor: Rin ≥ {spec.rin_floor:,.0f} Ω" + (
        " (default: 10 × the source, at least 1 kΩ)" if spec.rin_floor_is_default else " (--min-rin)")
    out = [floor]
    status = doc.get("status")
    if doc.get("designs"):
        out.append(sheet_text.table(doc))
        out += [f"  #{i}: {line}" for i, d in enumerate(doc["designs"], 1) if (line := _trade(d))]
        if not doc.get("optimal", True):
            settled = (doc.get("search") or {}).get("stopped_by") == "settled"
            out.append(("not proven optimal (--patience 0 searches to the time limit)"
                        if settled else "not proven optimal within the time limit")
                       + (f"; unexplored: {_short(doc['unexplored'])}" if doc.get("unexplored") else ""))
        spec_doc = dict(doc.get("spec") or {})
        spec_doc["min_rin_ohms"] = spec.rin_floor  # the sheet prints the floor actually applied
        out += ["", sheet_text.sheet(doc["designs"][0], spec_doc)]
        out += [f"note: {w}" for w in doc.get("why", [])]
    else:
        out.append(sheet_text.reasons(doc))
        if status != "infeasible":
            out.append("nothing found within the time limit, and not proven impossible: "
                       "try a longer --time-limit or a smaller --depth")
    return "\n".join(out)


def _trade(design: dict) -> str:
    """"best for: cleanest; THD 0.4 %, robustness 0.12, 1.9 mA" from the keys that are present."""
    score = design.get("score") or {}
    bits = []
    if design.get("best_for"):
        bits.append("best for: " + ", ".join(map(str, design["best_for"])))
    figures = []
    if _finite(score.get("thd")):
        figures.append(f"THD {100 * score['thd']:.2f} %")
    if _finite(score.get("robustness")):
        figures.append(f"robustness {score['robustness']:.3g}")
    if _finite(score.get("supply_a")):
        figures.append(f"supply {1e3 * score['supply_a']:.3g} mA")
    if figures:
        bits.append(", ".join(figures))
    return "; ".join(bits)


def _finite(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _short(x) -> str:
    text = x if isinstance(x, str) else json.dumps(x)
    return text if len(text) <= 160 else text[:157] + "..."


class _progress_bar:
    """A `progress(fraction, text)` callback drawing a bar on stderr when stderr is a terminal, else None."""

    def __enter__(self):
        if not sys.stderr.isatty():
            return None
        from rich.console import Console
        from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

        self.bar = Progress(TextColumn("searching"), BarColumn(), TextColumn("{task.percentage:>3.0f} %"),
                            TimeElapsedColumn(), TextColumn("{task.description}"),
                            console=Console(stderr=True), transient=True)
        self.bar.start()
        task = self.bar.add_task("", total=1.0)

        def progress(fraction: float, text: str = "") -> None:
            if _finite(fraction):
                self.bar.update(task, completed=min(max(float(fraction), 0.0), 1.0), description=str(text)[:60])

        return progress

    def __exit__(self, *exc) -> None:
        if getattr(self, "bar", None) is not None:
            self.bar.stop()
