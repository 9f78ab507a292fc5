"""The design's netlist with a source, a load and analyses added: runs as written with `ngspice -b`.

The sine's amplitude gives the spec's swing at the load (optimizer.physics.distortion finds it for
one stage, optimizer.chain.figures for a chain), so `.four` reports the distortion drawerfit
predicts; `.ac` prints the response in dB.
"""

from __future__ import annotations

from optimizer.physics.crosscheck import bench
from optimizer.physics.deck import deck_nodes
from optimizer.physics.distortion import drive_for_swing

from .content import Sheet, SheetInputError

CHAIN_SAVED = ("x", "vcc")  # a chain's interstage node beside in and out


def _chain_drive(sheet: Sheet, swing: float) -> float:
    from optimizer.chain.figures import figures

    chain = sheet.chain
    try:
        f = figures(chain, [(chain.first.transistor.bf, chain.second.transistor.bf, 27.0)], swing, low_cut=False)
    except (RuntimeError, ValueError) as exc:
        raise SheetInputError(f"{sheet.source}: design {sheet.pick} cannot be simulated ({exc})") from None
    return float(f.amplitude[0]) if f.reached[0] else 0.01


def render(sheet: Sheet) -> str:
    swing = float(sheet.spec.get("swing_pp") or 0.0)
    if sheet.chain is not None:
        amp = _chain_drive(sheet, swing) if swing > 0 else 0.01
        load, nodes = sheet.chain.second.load_ohms, CHAIN_SAVED
    else:
        try:
            amp = drive_for_swing(sheet.stage, swing) if swing > 0 else 0.01
        except (RuntimeError, ValueError):
            amp = 0.01  # the stage cannot reach the swing: a small test level still runs
        load = sheet.stage.load_ohms
        nodes = tuple(deck_nodes(sheet.stage)[n] for n in ("base", "emit", "coll", "vcc"))
    deck = sheet.netlist.replace("\n.end", f"\n* Source level {amp:.4g} V peak: {swing:g} V p-p at the load.\n.end", 1)
    return bench(deck, source_ohms=float(sheet.spec.get("source_ohms") or 0.0), load_ohms=load,
                 amplitude_v=amp, signal_hz=1e3, save_nodes=nodes)
