"""Cross-check a chain design in ngspice: its own netlist at both transistors' hFE min, typical and
max, beside drawerfit's figures (as optimizer.physics.crosscheck does for one stage).

The chain's deck (chain/deck.py) gets a source, its resistance and the load (physics.crosscheck.bench);
each transistor's model card gets the BF of its corner (Q1's and Q2's lines may differ).  ngspice gives
the DC points of both transistors (VB, VE, VC), the midband gain and Rin, f_low and the THD at the
spec's swing (the drive found by the chain's own large-signal solve, chain/figures.py).  drawerfit's
figures are the design document's: "predicted" (typical), "at_hfe" (both at min, both at max), each
stage's "predicted" (typical) and "corners" (min.min, max.max at 27 °C) for Q2's voltages.
"""

from __future__ import annotations

import math
import re
import shutil
import subprocess
from dataclasses import asdict, is_dataclass, replace

from optimizer.chain.circuit import build_net
from optimizer.chain.deck import chain_of_design, deck_nodes
from optimizer.chain.figures import figures
from optimizer.physics.crosscheck import CORNERS, NOT_INSTALLED, CrossCheck, simulate
from optimizer.physics.deck import model_name

# (figure key, unit, transistor): each transistor's DC points, then the chain's own figures.
FIGURES = (("vb", "V", "Q1"), ("ve", "V", "Q1"), ("vc", "V", "Q1"), ("vb_b", "V", "Q2"), ("ve_b", "V", "Q2"),
           ("vc_b", "V", "Q2"), ("gain", "", None), ("rin", "Ω", None), ("f_low", "Hz", None), ("thd", "", None))
# ngspice's default tolerances stall the transient's first step on high-gain chains ("timestep too
# small" at Q2, tests/test_chain_ngspice.py); reltol 1e-5 keeps its error far below the deviations shown.
OPTIONS = ".options reltol=1e-5 abstol=1e-12"


def with_bfs(deck: str, bf_by_line: dict[int, float]) -> str:
    """The deck with each transistor line's model card (QLINE<n>) at its own BF."""
    def one(m):
        card = m.group(0)
        for line, bf in bf_by_line.items():
            if re.match(rf"(?i)\.model\s+{re.escape(model_name(line))}\b", card):
                return re.sub(r"(?i)(\bBF=)[^\s)]+", lambda b: b.group(1) + f"{bf:.6g}", card)
        return card

    return re.sub(r"(?im)^\.model\s.*$", one, deck)


def ours(design: dict) -> dict[str, dict]:
    """drawerfit's figures at each corner (both at hFE min, typical, both at max), keyed as FIGURES."""
    at = design.get("at_hfe") or {}
    stages = design.get("stages") or [{}, {}]
    corners = design.get("corners") or {}
    out = {}
    for corner, chain_figs, q2 in (("min", at.get("min"), corners.get("min.min")),
                                   ("typical", design.get("predicted"), None),
                                   ("max", at.get("max"), corners.get("max.max"))):
        if not chain_figs:
            continue
        row = dict(chain_figs)
        if corner == "typical":
            p2 = (stages[1] if len(stages) > 1 else {}).get("predicted") or {}
            row.update(vb_b=p2.get("vb"), ve_b=p2.get("ve"), vc_b=p2.get("vc"))
        else:
            q2 = q2 or {}
            row.update(vb_b=q2.get("vb_b"), ve_b=q2.get("ve_b"), vc_b=q2.get("vc_b"))
        out[corner] = row
    return out


def _corner(ngspice: str, deck: str, chain, spec: dict, timeout_s: float) -> dict:
    net = build_net(chain)
    names = deck_nodes(net)
    (c1, b1, e1), (c2, b2, e2) = net.qs
    probes = {"vb": names[b1], "ve": names[e1], "vc": names[c1], "vb_b": names[b2], "ve_b": names[e2],
              "vc_b": names[c2]}
    swing = float(spec.get("swing_pp") or 0.0)
    amp = 0.0
    if swing > 0:
        f = figures(chain, [(chain.first.transistor.bf, chain.second.transistor.bf, chain.first.temp_c)], swing,
                    low_cut=False)
        amp = float(f.amplitude[0]) if f.reached[0] else 0.0
    return simulate(ngspice, deck, source_ohms=float(spec.get("source_ohms") or 0.0),
                    load_ohms=chain.second.load_ohms, amplitude_v=amp, probes=probes, timeout_s=timeout_s,
                    options=OPTIONS)


def crosscheck_chain(design: dict, spec, *, timeout_s: float = 60.0, ngspice: str | None = None) -> CrossCheck:
    """ngspice's figures beside drawerfit's at both transistors' hFE min, typical and max, for one chain
    design document entry.  Never raises for a missing or failing ngspice: the result says so.
    Each row carries "transistor" (Q1, Q2, or None for the chain's own figures)."""
    spec = asdict(spec) if is_dataclass(spec) else dict(spec or {})
    exe = ngspice or shutil.which("ngspice")
    if not exe:
        return CrossCheck(False, False, NOT_INSTALLED)
    mine = ours(design)
    rows = []
    try:
        chain = chain_of_design(design, spec)
        lines = (int(design["parts"]["Q1"]["line"]), int(design["parts"]["Q2"]["line"]))
        for corner in CORNERS:
            h1, h2 = (design.get("hfe") or {}).get(corner), (design.get("hfe_b") or {}).get(corner)
            if not h1 or not h2 or corner not in mine:
                continue
            at = replace(chain, first=replace(chain.first, transistor=chain.first.transistor.with_beta(float(h1))),
                         second=replace(chain.second, transistor=chain.second.transistor.with_beta(float(h2))))
            # One card per line: with both transistors on one line, its hFE ends are the same for both.
            deck = with_bfs(design["netlist"], {lines[1]: float(h2), lines[0]: float(h1)})
            sim = _corner(exe, deck, at, spec, timeout_s)
            for key, unit, q in FIGURES:
                a, b = mine[corner].get(key), sim.get(key)
                dev = None if a is None or b is None else b - a
                rel = None if dev is None or a == 0 or not math.isfinite(dev) else dev / abs(a)
                rows.append({"figure": key, "unit": unit, "corner": corner, "hfe": float(h1), "hfe_b": float(h2),
                             "transistor": q, "drawerfit": a, "ngspice": b, "deviation": dev, "relative": rel})
    except subprocess.TimeoutExpired:
        return CrossCheck(True, False, f"ngspice took longer than {timeout_s:g} s; stopped", rows)
    except (OSError, RuntimeError, ValueError, KeyError, IndexError, TypeError) as exc:
        return CrossCheck(True, False, f"ngspice cross-check failed: {exc}", rows)
    if not rows:
        return CrossCheck(True, False, "the design holds no hFE corners to simulate")
    worst = max((abs(r["relative"]) for r in rows if r["relative"] is not None), default=0.0)
    return CrossCheck(True, True, f"ngspice agrees within {100 * worst:.2g} % on every figure", rows)
