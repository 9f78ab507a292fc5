"""The exact analysis of one stage: everything the build sheet, the CLI and the app report.

Independent of the fast vectorised model (screen.py): here the circuit is
solved node by node (circuit.py), so the two cross-check each other and ngspice
checks both.  Only the load-line swing limits reuse swing.py's trade formulas,
fed with this module's exact operating point.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.physics.circuit import NODES, build, operating_point, q_currents, solve_small_signal
from optimizer.physics.distortion import distortion
from optimizer.physics.ratings import check_ratings
from optimizer.physics.response import capacitor_corners, curve, lower_corner, midband, small_signal_params
from optimizer.physics.stage import Stage
from optimizer.physics import polarity

PREDICTED_KEYS = ("gain", "vb", "ve", "vc", "ic", "rin", "rout", "f_low", "swing_pp", "thd")
CUTOFF_A = 1e-6  # below 1 µA the stage is not amplifying (common practice, no source)
CAUTIONS = (
    "Check the supply voltage and polarity before connecting it; stay within every part's rating.",
    "Fit polarised (electrolytic, tantalum) capacitors with + toward the node marked positive; reversed ones can vent or burst.",
    "Parts near their power rating run hot; allow for it. Local codes and licensed practice take precedence for mains-powered gear.",
)


@dataclass
class Report:
    stage: Stage
    predicted: dict
    operating_point: dict
    dissipation_w: dict
    capacitors: dict
    response: dict
    swing: dict
    small_signal: dict
    approximations: dict
    distortion: dict | None = None
    warnings: list = field(default_factory=list)
    cautions: list = field(default_factory=lambda: list(CAUTIONS))

    @property
    def corners_hz(self) -> dict[str, float]:
        return {name: c["f_hz"] for name, c in self.capacitors.items()}

    def to_json(self) -> dict:
        return _plain({
            "topology": self.stage.topology,
            "predicted": self.predicted,
            "operating_point": self.operating_point,
            "dissipation_w": self.dissipation_w,
            "corners_hz": self.corners_hz,
            "capacitors": self.capacitors,
            "swing": self.swing,
            "distortion": self.distortion,
            "small_signal": self.small_signal,
            "approximations": self.approximations,
            "response": self.response,
            "warnings": self.warnings,
            "cautions": self.cautions,
        })


def _plain(x):
    """JSON-ready copy: numpy scalars to floats, non-finite floats to None."""
    if isinstance(x, dict):
        return {k: _plain(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_plain(v) for v in x]
    if isinstance(x, (bool, np.bool_)):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        return float(x) if np.isfinite(x) else None
    return x


def analyze(stage: Stage, swing_pp: float | None = None, *, ratings: dict | None = None) -> Report:
    """Exact DC, midband, response, swing, dissipation and (if `swing_pp` V p-p is given) THD of `stage`.

    ratings (optional): {"resistor_power_w": {POS: W}, "capacitor_voltage_v": {POS: V},
    "capacitor_polarised": {POS: bool}} for optimizer.physics.ratings' checks; the transistor's own
    limits (vceo_v, ic_max_a, pd_max_w) are always checked.
    """
    circuit = build(stage)
    op = operating_point(circuit)
    ic, ib = (float(x) for x in q_currents(circuit, op)[:2])
    vb, ve, vc = op["base"], op["emit"], op["coll"]
    vce, vbe = vc - ve, vb - ve
    i_supply = sum((op[p.a] - op[p.b]) / p.value for p in circuit.parts if p.kind == "R" and p.a == "vcc")
    i_supply += ic if ("coll", "vcc") in circuit.shorts else 0.0  # a collector tied to the supply
    point = {"vb": vb, "ve": ve, "vc": vc, "vmid": op["mid"], "vce": vce, "vbe": vbe, "ic": ic, "ib": ib,
             "ie": ic + ib, "i_supply": i_supply, "saturated": vce < loadline.VCE_SAT_V, "cutoff": ic < CUTOFF_A}
    power = {p.name: (op[p.a] - op[p.b]) ** 2 / p.value for p in circuit.parts if p.kind == "R" and p.name not in ("RS", "RL")}
    power["Q1"] = vce * ic + vbe * ib

    mid = midband(circuit, op)
    caps = capacitor_corners(circuit, op)
    for name, c in caps.items():
        part = next(p for p in circuit.parts if p.name == name)
        va, vb_ = polarity.node_volts(stage, op, part.a), polarity.node_volts(stage, op, part.b)  # real polarity
        c["dc_v"] = abs(va - vb_)
        c["positive_node"] = polarity.real_node(part.a if va >= vb_ else part.b, polarity.mirrored(stage))
    f_low = lower_corner(circuit, op, mid.gain)
    limits = _swing_limits(stage, circuit, op, ic, vce)
    vt = circuit.model[4]
    approx = _textbook(stage, ic, vt)

    predicted = {"gain": mid.gain, "vb": vb, "ve": ve, "vc": vc, "ic": ic, "rin": mid.rin_ohms,
                 "rout": mid.rout_ohms, "f_low": f_low, "swing_pp": limits["pp"], "thd": None}
    warnings = _warnings(stage, point) + _rating_warnings(stage, point, power, ratings)
    dist = None
    if swing_pp is not None and (point["saturated"] or point["cutoff"]):
        warnings.append(f"distortion at {swing_pp:g} V p-p not computed: Q1 is not biased into its active region")
    elif swing_pp is not None:
        try:
            d = distortion(stage, swing_pp)
        except (RuntimeError, ValueError) as exc:
            warnings.append(f"distortion at {swing_pp:g} V p-p not computed: {exc}")
        else:
            predicted["thd"] = d.thd
            dist = {"thd": d.thd, "swing_pp": d.swing_pp, "source_amplitude_v": d.source_amplitude_v,
                    "reached": d.reached, "saturates": d.saturates, "cuts_off": d.cuts_off,
                    "min_vce_v": d.min_vce_v, "min_ic_a": d.min_ic_a, "clips": d.clips}
            if d.clips:
                why = [w for w, on in (("saturates", d.saturates), ("cuts off", d.cuts_off)) if on]
                reach = "" if d.reached else f"; it reaches only {d.swing_pp:.3g} V p-p"
                warnings.append(f"clips at {swing_pp:g} V p-p ({' and '.join(why) or 'limited'}{reach})")
        if swing_pp > limits["pp"]:
            warnings.append(f"asked for {swing_pp:g} V p-p but the load line allows {limits['pp']:.3g} V p-p clip-free")
    # A PNP stage was solved as its NPN mirror: its DC node voltages are shown in real polarity.
    return Report(stage, polarity.real_predicted(stage, predicted), polarity.real_point(stage, point), power, caps,
                  curve(circuit, op), limits, small_signal_params(circuit, op),
                  polarity.real_approximations(stage, approx), dist, warnings)


def _swing_limits(stage: Stage, circuit, op, ic, vce) -> dict:
    """Clip-free peak swings at the load along the AC load line (swing.py's formulas, exact bias)."""
    ie = ic + float(q_currents(circuit, op)[1])
    kind = stage.kind
    # Base-to-collector gain from the exact small-signal solution (the feedback kinds' load line needs it).
    v = solve_small_signal(circuit, op)[0]
    a_bc = (v[NODES.index("coll")] / v[NODES.index("base")]).real
    r = {p: stage.r(p) for p in kind.resistors}
    up, down = kind.swing(r, ic=ic, ie=ie, vce=vce, vc=op["coll"], vcc=stage.supply_v, rl=stage.load_ohms,
                          re_ac=_re_ac(stage), a_bc=a_bc)
    up, down = max(float(up), 0.0), max(float(down), 0.0)
    return {"up": up, "down": down, "pp": 2.0 * min(up, down)}


def _textbook(stage: Stage, ic: float, vt: float) -> dict:
    """Hand formulas for the explanation: re' = Vt/IC, VB ≈ VTH, gain ≈ −RC‖RL/(re' + RE1)."""
    re_prime = vt / ic if ic > 0 else float("inf")
    out = {"re_prime": re_prime}
    kind = stage.kind
    if kind.bias == "divider":
        r1, r2 = stage.r("R1"), stage.r("R2")
        out["vb_thevenin"] = stage.supply_v * r2 / (r1 + r2)
        out["r_thevenin"] = r1 * r2 / (r1 + r2)
    load = stage.load_ohms
    if kind.output == "e":  # the follower's gain: RE‖RL over re' + RE‖RL
        r_ac = 1.0 / (1.0 / stage.r(kind.emitter[0]) + 1.0 / load)
        out["gain_textbook"] = r_ac / (r_ac + re_prime)
    else:
        r_ac = 1.0 / (1.0 / stage.r("RC") + 1.0 / load)
        out["gain_textbook"] = -r_ac / (re_prime + _re_ac(stage))
    return out


def _re_ac(stage: Stage) -> float:
    """The emitter resistance signals see (Ω): CE, where fitted, shorts the last emitter part."""
    parts = stage.kind.emitter
    bypassed = len(parts) > 1 and bool(stage.capacitors.get("CE"))
    return sum(stage.r(p) for p in (parts[:-1] if bypassed else parts))


def _warnings(stage: Stage, point: dict) -> list[str]:
    out = []
    if point["saturated"]:
        out.append(f"Q1 is saturated at the operating point (VCE = {point['vce']:.3g} V)")
    if point["cutoff"]:
        out.append(f"Q1 is cut off (IC = {point['ic']:.3g} A): the bias does not turn it on")
    if "CIN" not in stage.capacitors:
        out.append("no CIN: the source is DC-coupled to the base, so its resistance is part of the bias")
    if "COUT" not in stage.capacitors:
        out.append("no COUT: the load is DC-coupled and carries the stage's DC output voltage")
    return out


def _rating_warnings(stage: Stage, point: dict, power: dict, ratings: dict | None) -> list[str]:
    """ratings.py's checks (transistor limits always; parts' ratings when given) on the exact bias."""
    op = {"vb": point["vb"], "ve": point["ve"], "vc": point["vc"], "vn": point["vmid"], "ic": point["ic"],
          "p_q": power["Q1"], **{f"p_{k}": v for k, v in power.items() if k != "Q1"}}
    r = ratings or {}
    checked = check_ratings(stage.topology, op, transistor=stage.transistor, supply_v=stage.supply_v,
                            resistor_power_w=r.get("resistor_power_w"),
                            capacitor_voltage_v=r.get("capacitor_voltage_v"),
                            capacitor_polarised=r.get("capacitor_polarised"))
    return checked.warnings()
