"""`drawerfit analyze --topology FIRST+SECOND`: the exact analysis of a two-stage chain given part by part.

The first stage takes the usual part options (--r1 … --cin, --ce; no --cout: the stages are coupled by
the second stage's input capacitor), the second stage the same names with -b (--r1-b … --cin-b,
--cout-b, --ce-b) and --hfe-b for Q2.  Output: the chain's figures, each stage's, and with --netlist
the chain's deck with a source, its resistance, the load and analyses (runs with `ngspice -b`).
`--polarity pnp` makes both transistors PNP (an all-PNP chain on the same positive supply, emitter
sides to +V); it needs --cin, --cin-b and --cout-b.  Mixed chains are not modelled.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from types import SimpleNamespace

from inventory.atomic import atomic_write
from inventory.values import parse_number
from optimizer.chain.names import CHAINS

FLAGS = ("r1", "r2", "rc", "re1", "re2", "re", "rb", "cin", "cout", "ce")


def add_flags(p) -> None:
    """The second stage's options (-b) on the analyze parser."""
    for flag in FLAGS:
        unit = "FARADS" if flag.startswith("c") else "OHMS"
        name = flag.upper()
        p.add_argument(f"--{flag}-b", metavar=unit, help=f"chains: the second stage's {name} ({name}_B)")
    p.add_argument("--hfe-b", help="chains: Q2's hFE (BF) at 27 °C (default: --hfe)")


def _second_args(args, topology):
    ns = {flag: getattr(args, f"{flag}_b") for flag in FLAGS}
    return SimpleNamespace(topology=topology, **ns)


def chain_from_args(args, stage_from_args, resistors, capacitors, error):
    """The Chain and the THD swing the options describe; raises `error` naming the option."""
    from dataclasses import replace

    from optimizer.chain.circuit import Chain

    first_kind, second_kind = CHAINS[args.topology]
    pnp = str(getattr(args, "polarity", "npn") or "npn").lower() == "pnp"
    if args.cout is not None:
        raise error("--cout: a chain's first stage has no COUT; the interstage capacitor is --cin-b")
    # The first stage is read as an NPN stage (a lone PNP stage would ask for its own --cout); an
    # all-PNP chain then gets its transistors' polarity, once every coupling capacitor is known.
    one = SimpleNamespace(**{**vars(args), "topology": first_kind, "polarity": "npn"})
    s1, swing = stage_from_args(one)
    two = _second_args(args, second_kind)
    try:
        r2 = resistors(two, second_kind)
        c2 = capacitors(two, second_kind)
    except error as exc:  # name the -b option the user typed
        text = str(exc)
        for flag in FLAGS:
            text = text.replace(f"--{flag}:", f"--{flag}-b:").replace(f"--{flag} (", f"--{flag}-b (")
        raise error(text) from None
    hfe_b = s1.transistor.bf
    if args.hfe_b is not None:
        try:
            hfe_b = float(parse_number(args.hfe_b))
        except ValueError:
            raise error(f"--hfe-b: {args.hfe_b!r} is not a number") from None
        if not hfe_b > 0:
            raise error(f"--hfe-b: {args.hfe_b!r} must be above 0")
    if pnp:
        missing = [flag for flag, fitted in (("--cin", "CIN" in s1.capacitors), ("--cin-b", "CIN" in c2),
                                             ("--cout-b", "COUT" in c2)) if not fitted]
        if missing:
            raise error(f"--polarity pnp: give {', '.join(missing)} (a PNP chain is modelled with the source, "
                        "the stages and the load coupled through capacitors)")
        s1 = replace(s1, transistor=replace(s1.transistor, polarity="PNP", name="generic PNP"))
    s2 = replace(s1, topology=second_kind, resistors=r2, capacitors=c2, source_ohms=0.0, load_ohms=s1.load_ohms,
                 transistor=s1.transistor.with_beta(hfe_b))
    return Chain(args.topology, replace(s1, load_ohms=float("inf")), s2), swing


def run_chain(args, stage_from_args, resistors, capacitors, error) -> int:
    from optimizer.chain.analysis import analyze_chain
    from optimizer.chain.deck import chain_netlist
    from optimizer.physics.crosscheck import bench

    try:
        chain, swing = chain_from_args(args, stage_from_args, resistors, capacitors, error)
    except error as exc:
        print(f"drawerfit analyze: {exc}", file=sys.stderr)
        return 2
    try:
        report = analyze_chain(chain, swing)
    except (RuntimeError, ValueError, ArithmeticError) as exc:
        print(f"drawerfit analyze: this chain could not be solved ({str(exc)[:160]})", file=sys.stderr)
        return 2
    if args.netlist:
        amp = (report.distortion or {}).get("source_amplitude_v") or 0.0
        deck = chain_netlist(chain, {"Q1": {"line": 0}, "Q2": {"line": 0}}, title=f"drawerfit {chain.kind} chain")
        text = bench(deck, source_ohms=chain.first.source_ohms, load_ohms=chain.second.load_ohms, amplitude_v=amp,
                     signal_hz=1e3, analyses=("op", "ac", "tran") if amp else ("op", "ac"))
        try:
            atomic_write(Path(args.netlist), text.encode())
        except OSError as exc:
            print(f"drawerfit analyze: --netlist: cannot write {args.netlist}: {exc.strerror or exc}", file=sys.stderr)
            return 2
    if args.json:
        doc = report.to_json()
        if args.netlist:
            doc["netlist"] = str(args.netlist)
        print(json.dumps(doc, indent=2, ensure_ascii=False))
        return 0
    print(text_sheet(report))
    if args.netlist:
        print(f"SPICE netlist written to {args.netlist}")
    return 0


def text_sheet(report) -> str:
    from .widgets import figures

    p = report.predicted
    out = [f"{report.chain.kind} chain",
           f"  gain {figures.gain(p['gain'])}   Rin {figures.ohms(p['rin'])}   Rout {figures.ohms(p['rout'])}   "
           f"f_low {figures.hertz(p['f_low'])}   clip-free swing {figures.volts(p['swing_pp'])} p-p"]
    if p.get("thd") is not None:
        out.append(f"  THD at the swing asked: {figures.percent(p['thd'], 2)}")
    for k, s in enumerate(report.stages, 1):
        q = s["predicted"]
        out.append(f"  stage {k} ({s['kind']}): gain {figures.gain(q['gain'])}, VB {figures.volts(q['vb'])}, "
                   f"VE {figures.volts(q['ve'])}, VC {figures.volts(q['vc'])}, IC {figures.amps(q['ic'])}, "
                   f"Rin {figures.ohms(q['rin'])}, Rout {figures.ohms(q['rout'])}")
    out += [f"  ! {w}" for w in report.warnings]
    out += [f"  * {c}" for c in report.cautions]
    return "\n".join(out)
