"""The sheet files of a two-stage chain: the pick list (csv) and the SPICE bench (cir).

The other formats (html, svg, md) draw one stage and do not cover chains yet; they say so.
"""

from __future__ import annotations

from .content import SheetInputError, _parts_tree, pick_list
from .pick_csv import COLUMNS

FORMATS = ("csv", "cir")


def render(doc: dict, pick: int, fmt: str, source: str) -> str:
    design = doc["designs"][pick - 1]
    spec = doc.get("spec") or {}
    if fmt not in FORMATS:
        raise SheetInputError(f"{source}: design {pick} is a two-stage chain; the {fmt} sheet does not cover chains "
                              "yet (csv and cir do; `drawerfit design` without --json prints a chain's build sheet)")
    if fmt == "csv":
        import csv
        import io

        networks = {pos: _parts_tree(part["network"], pos, "ohms" if "ohms" in part else "farads", [0])
                    for pos, part in design["parts"].items() if "network" in part}
        buf = io.StringIO()
        w = csv.DictWriter(buf, fieldnames=COLUMNS, extrasaction="ignore", lineterminator="\n")
        w.writeheader()
        for row in pick_list(design, networks):
            w.writerow(row)
        return buf.getvalue()
    from optimizer.chain.deck import chain_of_design
    from optimizer.chain.figures import figures
    from optimizer.physics.crosscheck import bench

    try:
        chain = chain_of_design(design, spec)
        swing = float(spec.get("swing_pp") or 0.0)
        amp = 0.01
        if swing > 0:
            f = figures(chain, [(chain.first.transistor.bf, chain.second.transistor.bf, 27.0)], swing, low_cut=False)
            amp = float(f.amplitude[0]) if f.reached[0] else 0.01
    except (KeyError, TypeError, ValueError, RuntimeError) as exc:
        raise SheetInputError(f"{source}: design {pick} cannot be read back ({exc})") from None
    note = f"\n* Source level {amp:.4g} V peak: {swing:g} V p-p at the load.\n.end"
    deck = design["netlist"].replace("\n.end", note, 1)
    return bench(deck, source_ohms=float(spec.get("source_ohms") or 0.0), load_ohms=chain.second.load_ohms,
                 amplitude_v=amp, signal_hz=1e3, save_nodes=("x", "vcc"))
