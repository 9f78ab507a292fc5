"""The exact analysis of one chain: the figures the JSON, the build sheet and `analyze` report.

The chain's own figures (gain, Rin, Rout, f_low, THD, response) come from the whole-chain solver
(figures.py).  Each stage's figures (its operating point, load-line swing, dissipation, ratings
warnings) come from optimizer.physics.analysis on the stage as the chain sees it, which is exact at DC
and midband because the stages are AC-coupled: the first stage loaded by the second's input
resistance, the second driven through the first's output resistance.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from optimizer.chain.circuit import Chain
from optimizer.chain.deck import positive_nodes
from optimizer.chain.figures import figures, transfer
from optimizer.chain.names import CHAINS, second
from optimizer.physics.analysis import CAUTIONS, Report, _plain, analyze
from optimizer.physics.response import CURVE_HZ

STAGE_KEYS = ("gain", "vb", "ve", "vc", "ic", "rin", "rout", "swing_pp")
# Stage warnings that say nothing about a chain (its coupling is the interstage capacitor).
_COUPLING_WORDS = ("no CIN:", "no COUT:")


@dataclass
class ChainReport:
    chain: Chain
    predicted: dict
    stages: list  # [{"kind", "positions", "predicted"}] first stage first
    reports: tuple  # (analysis.Report of stage 1, of stage 2) as the chain sees them
    positive_nodes: dict  # capacitor → net node of its + lead (the solved net's name; deck.deck_nodes names it)
    response: dict
    distortion: dict | None = None
    warnings: list = field(default_factory=list)
    cautions: list = field(default_factory=lambda: list(CAUTIONS))

    def to_json(self) -> dict:
        return _plain({"topology": self.chain.kind, "predicted": self.predicted, "stages": self.stages,
                       "distortion": self.distortion, "response": self.response, "warnings": self.warnings,
                       "cautions": self.cautions})


def positions(chain: Chain, which: int) -> list[str]:
    """The chain design's position names of one stage (the second's suffixed; CIN_B the interstage)."""
    from optimizer.physics.stage import CAPACITOR_POSITIONS, RESISTOR_POSITIONS

    s = chain.first if which == 0 else chain.second
    names = [p for p in RESISTOR_POSITIONS[s.topology] if s.r(p) > 0]
    names += [p for p in CAPACITOR_POSITIONS[s.topology] if p in s.capacitors and not (which == 0 and p == "COUT")]
    names.append("Q1")
    return names if which == 0 else [second(p) for p in names]


def stage_reports(chain: Chain) -> tuple[Report, Report]:
    """Each stage analysed as the chain sees it (exact at DC and midband)."""
    s1, s2 = chain.first, chain.second
    temp, supply = s1.temp_c, s1.supply_v
    base2 = replace(s2, supply_v=supply, source_ohms=0.0, temp_c=temp)
    rin2 = analyze(base2).predicted["rin"]
    caps1 = {k: v for k, v in s1.capacitors.items() if k != "COUT"}
    if "CIN" in s2.capacitors:
        caps1["COUT"] = s2.capacitors["CIN"]  # the interstage capacitor, seen from the first stage
    r1 = analyze(replace(s1, capacitors=caps1, load_ohms=rin2))
    r2 = analyze(replace(base2, source_ohms=r1.predicted["rout"]))
    return r1, r2


def analyze_chain(chain: Chain, swing_pp: float | None = None) -> ChainReport:
    """Exact figures of `chain` at its transistors' own BF and the first stage's temperature;
    THD of the whole chain at `swing_pp` V p-p at the load when given."""
    s1 = chain.first
    f = figures(chain, [(s1.transistor.bf, chain.second.transistor.bf, s1.temp_c)],
                swing_pp if swing_pp and swing_pp > 0 else None)
    r1, r2 = stage_reports(chain)
    g2 = float(f.gain_second[0])
    swing = min(r2.predicted["swing_pp"], r1.predicted["swing_pp"] * abs(g2))
    (c1, b1, e1), (c2, b2, e2) = f.net.qs
    # Node voltages in real polarity (an all-PNP chain was solved as its NPN mirror, chain/polarity.py).
    predicted = {"gain": float(f.gain[0]), "vb": float(f.volts(b1)[0]), "ve": float(f.volts(e1)[0]),
                 "vc": float(f.volts(c1)[0]), "ic": float(f.ic[0][0]), "rin": float(f.rin[0]),
                 "rout": float(f.rout[0]), "f_low": float(f.f_low[0]), "swing_pp": swing, "thd": None}
    stages = []
    for k, (rep, (c, b, e), ic, gain) in enumerate(zip((r1, r2), f.net.qs, f.ic,
                                                      (float(f.gain[0]) / g2, g2), strict=True)):
        p = {"gain": gain, "vb": float(f.volts(b)[0]), "ve": float(f.volts(e)[0]), "vc": float(f.volts(c)[0]),
             "ic": float(ic[0]), "rin": rep.predicted["rin"], "rout": rep.predicted["rout"],
             "swing_pp": rep.predicted["swing_pp"]}
        stages.append({"kind": CHAINS[chain.kind][k], "positions": positions(chain, k), "predicted": p})
    warnings = []
    for k, rep in enumerate((r1, r2), 1):
        warnings += [f"stage {k}: {w}" for w in rep.warnings if not w.startswith(_COUPLING_WORDS)]
    dist = None
    if f.thd is not None:
        predicted["thd"] = float(f.thd[0]) if np.isfinite(f.thd[0]) else None
        dist = {"thd": predicted["thd"], "source_amplitude_v": float(f.amplitude[0]), "reached": bool(f.reached[0]),
                "saturates": bool(f.saturates[0]), "cuts_off": bool(f.cuts_off[0]), "min_vce_v": float(f.min_vce[0])}
        if f.clips[0]:
            warnings.append(f"the chain clips at {swing_pp:g} V p-p at the load")
        if swing_pp > swing:
            warnings.append(f"asked for {swing_pp:g} V p-p but the load lines allow {swing:.3g} V p-p clip-free")
    h = transfer(f.net, f.op, CURVE_HZ)[0]
    response = {"freq_hz": CURVE_HZ.tolist(), "gain_db": (20 * np.log10(np.abs(h))).tolist(),
                "phase_deg": np.degrees(np.angle(h)).tolist()}
    return ChainReport(chain, predicted, stages, (r1, r2), positive_nodes(f.net, f.op), response, dist, warnings)
