"""`drawerfit analyze`: the exact analysis of one stage given part by part.

Part options are the build-sheet positions in lower case; an omitted part is
absent (an absent emitter resistor is a short, an absent CIN/COUT couples
directly, an absent CE leaves RE2 unbypassed).  Exit 2 on bad input, naming the option, and on
a stage the analysis cannot solve.
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

from inventory.atomic import atomic_write
from inventory.values import ValueFormatError, parse_capacitance, parse_number, parse_resistance, parse_voltage
from optimizer.chain.names import CHAINS
from optimizer.physics.stage import CAPACITOR_POSITIONS, OPTIONAL_POSITIONS, RESISTOR_POSITIONS, TOPOLOGIES, Stage
from optimizer.physics.transistor import Transistor, is_from_vbe
from optimizer.spec import Spec

from . import cmd_analyze_chain
from .analyze_sheet import sheet
from .cmd_common import refusal
from .request_fields import parse_negative_voltage, rails_shorthand

RESISTOR_FLAGS = ("r1", "r2", "rc", "re1", "re2", "re", "rb")
CAPACITOR_FLAGS = ("cin", "cout", "ce")


class InputError(Exception):
    """Bad command-line input; the message names the option."""


def register(sub) -> None:
    p = sub.add_parser(
        "analyze", help="analyse one stage given its parts",
        description="Solve one transistor stage exactly: bias, gain, input/output resistance, "
                    "low cut-off, swing, distortion, dissipation.  Values as on the parts: 4k7, 220u, 12V.",
    )
    p.add_argument("--topology", required=True, choices=(*TOPOLOGIES, *CHAINS))
    for flag in RESISTOR_FLAGS:
        p.add_argument(f"--{flag}", metavar="OHMS", help=f"{flag.upper()} (omit = absent)")
    for flag in CAPACITOR_FLAGS:
        p.add_argument(f"--{flag}", metavar="FARADS", help=f"{flag.upper()} (omit = absent)")
    p.add_argument("--supply", default="12", metavar="VOLTS", help="supply voltage (default 12 V)")
    p.add_argument("--negative-supply", default="0", metavar="VOLTS",
                   help="the negative rail of a split supply, e.g. -12 (split-supply stages only; default 0)")
    p.add_argument("--source", default="0", metavar="OHMS", help="source resistance (default 0 Ω)")
    p.add_argument("--load", default="open", metavar="OHMS", help="load resistance (default: open, no load)")
    p.add_argument("--polarity", default="npn", type=str.lower, choices=("npn", "pnp"),
                   help="Q1's polarity (default npn); a pnp stage has its emitter side to +V and needs --cin and --cout "
                        "(a chain: both transistors, and a pnp chain needs --cin, --cin-b and --cout-b)")
    p.add_argument("--hfe", default="200", help="Q1's hFE (BF) at 27 °C (default 200)")
    p.add_argument("--vbe", default="0.65", metavar="VOLTS", help="VBE at IC = 1 mA, 27 °C (default 0.65 V)")
    p.add_argument("--vaf", default="100", metavar="VOLTS", help="Early voltage (default 100 V)")
    p.add_argument("--temp", default="27", metavar="DEGC", help="temperature in °C (default 27)")
    p.add_argument("--swing", metavar="VOLTS", help="output swing (V p-p at the load) at which to compute THD")
    p.add_argument("--json", action="store_true", help="print the analysis as JSON")
    p.add_argument("--netlist", metavar="FILE", help="also write a SPICE netlist of the stage")
    cmd_analyze_chain.add_flags(p)
    p.set_defaults(handler=run)


def _value(args, flag: str, parse, positive=True) -> float | None:
    text = getattr(args, flag)
    if text is None:
        return None
    try:
        value = parse(text)
    except ValueFormatError as exc:
        raise InputError(f"--{flag}: {refusal(text, parse, exc)}") from None
    if not math.isfinite(value) or (positive and not value > 0) or value < 0:
        raise InputError(f"--{flag}: {text!r} must be {'above' if positive else 'at least'} 0")
    return value


def _temperature(text: str) -> float:
    try:
        t = float(text.strip().removesuffix("°C").removesuffix("C"))
    except ValueError:
        raise InputError(f'--temp: "{text}" is not a temperature (expected °C, e.g. 25 or -10)') from None
    if not -55.0 <= t <= 150.0:
        raise InputError(f"--temp: {t:g} °C is outside -55…150 °C, the range small-signal parts are rated for")
    return t


def _resistors(args, topology: str) -> dict[str, float]:
    values = {flag: _value(args, flag, parse_resistance, positive=False) for flag in RESISTOR_FLAGS}
    positions = RESISTOR_POSITIONS[topology]
    if values["re"] is not None and "RE" not in positions:
        # A single emitter resistor: bypassed (RE2) when CE is fitted, else unbypassed (RE1).
        target = "re2" if args.ce is not None else "re1"
        if values[target] is not None:
            raise InputError(f"--re: give either --re or --{target}, not both")
        values[target] = values.pop("re")
    out = {}
    for flag, v in values.items():
        if v is None:
            continue
        if flag.upper() not in positions:
            raise InputError(f"--{flag}: the {topology} stage has no {flag.upper()} (its parts: {', '.join(positions)})")
        if v > 0:
            out[flag.upper()] = v
    missing = [p for p in positions if p not in OPTIONAL_POSITIONS[topology] and p not in out]
    if missing:
        names = ", ".join(f"--{p.lower()} ({p})" for p in missing)
        raise InputError(f"the {topology} stage needs {names}: give a value above 0")
    return out


def _capacitors(args, topology: str) -> dict[str, float]:
    out = {}
    for flag in CAPACITOR_FLAGS:
        v = _value(args, flag, parse_capacitance)
        if v is None:
            continue
        if flag.upper() not in CAPACITOR_POSITIONS[topology]:
            raise InputError(f"--{flag}: the {topology} stage has no {flag.upper()}")
        out[flag.upper()] = v
    return out


def _negative_rail(args, topology: str, supply: float) -> float:
    """The negative rail (V): needed by split-supply kinds, refused by single-rail ones (Spec's rules)."""
    try:
        vee = parse_negative_voltage(str(args.negative_supply))
    except ValueError as exc:
        raise InputError(f"--negative-supply: {exc}") from None
    spec = Spec(topology=topology, supply_v=supply, negative_supply_v=vee, swing_pp=0.0, min_vce_v=0.0)
    rails = [m for m in spec.problems() if m.startswith("--negative-supply")]
    if rails:
        raise InputError(rails[0])
    return vee


def stage_from_args(args) -> tuple[Stage, float | None]:
    """The Stage and the THD swing described by the options; raises InputError."""
    topology = args.topology
    args.supply, args.negative_supply = rails_shorthand(args.supply, args.negative_supply)
    supply = _value(args, "supply", parse_voltage)
    if supply > 60:
        raise InputError(f"--supply: {supply:g} V is beyond what small-signal stages are designed for here (≤ 60 V)")
    source = _value(args, "source", parse_resistance, positive=False)
    load = math.inf if args.load.strip().lower() in ("open", "none", "inf") else _value(args, "load", parse_resistance)
    hfe = _value(args, "hfe", parse_number)
    vbe = _value(args, "vbe", parse_voltage)
    if not 0.3 <= vbe <= 1.0:
        raise InputError(f"--vbe: {vbe:g} V at 1 mA is not a silicon junction (expected 0.3…1.0 V)")
    vaf = _value(args, "vaf", parse_voltage)
    polarity = str(getattr(args, "polarity", "npn") or "npn").upper()
    q = Transistor(name=f"generic {polarity}", polarity=polarity, bf=hfe, is_a=float(is_from_vbe(vbe)), vaf_v=vaf)
    vee = _negative_rail(args, topology, supply)
    swing = _value(args, "swing", parse_voltage)
    if swing is not None and swing >= supply - vee:
        raise InputError(f"--swing: {swing:g} V p-p cannot fit on a {supply - vee:g} V supply")
    caps = _capacitors(args, topology)
    if polarity == "PNP" and vee:
        raise InputError("--polarity pnp: PNP stages are modelled on one positive supply only (leave out "
                         "--negative-supply)")
    if polarity == "PNP" and not ("CIN" in caps and "COUT" in caps):
        raise InputError("--polarity pnp: give --cin and --cout (a PNP stage is modelled with the source and "
                         "load coupled through capacitors)")
    stage = Stage(topology, _resistors(args, topology), caps, supply_v=supply,
                  source_ohms=source, load_ohms=load, transistor=q, temp_c=_temperature(args.temp),
                  negative_supply_v=vee)
    return stage, swing


def run(args) -> int:
    # Imported here: scipy and the nodal solver cost a second that other subcommands need not pay.
    from optimizer.physics.analysis import analyze
    from optimizer.physics.netlist import to_netlist

    if args.topology in CHAINS:
        return cmd_analyze_chain.run_chain(args, stage_from_args, _resistors, _capacitors, InputError)
    if any(getattr(args, f"{flag}_b", None) is not None for flag in (*cmd_analyze_chain.FLAGS, "hfe")):
        print("drawerfit analyze: the -b options are for the second stage of a chain (--topology FIRST+SECOND)",
              file=sys.stderr)
        return 2
    try:
        stage, swing = stage_from_args(args)
    except InputError as exc:
        print(f"drawerfit analyze: {exc}", file=sys.stderr)
        return 2
    try:
        report = analyze(stage, swing)
    except (RuntimeError, ValueError, ArithmeticError) as exc:  # no convergence, a singular circuit, overflow
        # Exit 2: the values given describe a stage this analysis cannot take (README: exit codes).
        print(f"drawerfit analyze: this stage could not be solved ({str(exc)[:160]})", file=sys.stderr)
        return 2
    if args.netlist:
        try:
            # Drive the .tran source as the analysis did (its large-signal amplitude for the swing).
            amp = report.distortion["source_amplitude_v"] if report.distortion else None
            if amp is None and swing:
                amp = swing / (2 * abs(report.predicted["gain"])) if report.predicted["gain"] else 0.0
            text = to_netlist(stage, source_amplitude_v=amp, title=f"drawerfit {stage.topology} stage")
            atomic_write(Path(args.netlist), text.encode())
        except OSError as exc:
            print(f"drawerfit analyze: --netlist: cannot write {args.netlist}: {exc.strerror or exc}", file=sys.stderr)
            return 2
    if args.json:
        doc = report.to_json()
        if args.netlist:
            doc["netlist"] = str(args.netlist)
        print(json.dumps(doc, indent=2, ensure_ascii=False))
    else:
        print(sheet(report))
        if args.netlist:
            print(f"SPICE netlist written to {args.netlist}")
    return 0
