"""Independent oracles for the stage model, written straight from the schematic.

Nothing here uses optimizer.physics.bias/smallsignal/swing: the DC point comes from
nested scalar root-finds (scipy.optimize.brentq) on Kirchhoff's current law at
each node, and the signal circuit (capacitors held at their DC charge, as
midband) from scipy.optimize.root on the node equations.  Only the transistor
equations (optimizer.physics.transistor.terminal_currents) are shared, on purpose: they
are the model ngspice also evaluates.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq, root

from optimizer.physics.transistor import Transistor, terminal_currents


@dataclass
class Oracle:
    topology: str
    r: dict
    supply_v: float = 12.0
    source_ohms: float = 1e3
    load_ohms: float = np.inf
    transistor: Transistor = field(default_factory=Transistor)
    temp_c: float = 27.0

    def __post_init__(self):
        is_a, bf, br, vt = self.transistor.at(self.temp_c)
        self.model = (float(is_a), float(bf), float(br), self.transistor.vaf_v, float(vt))

    def currents(self, vbe, vbc):
        is_a, bf, br, vaf, vt = self.model
        return terminal_currents(vbe, vbc, is_a, bf, br, vaf, vt)

    def _re_total(self):
        return self.r.get("RE", 0.0) + self.r.get("RE1", 0.0) + self.r.get("RE2", 0.0)

    # DC point: outer root in VBE (base KCL), inner root in VBC (collector KCL).
    def _nodes(self, vbe, vbc):
        ic, ib = self.currents(vbe, vbc)
        ve = (ic + ib) * self._re_total()
        vb = ve + vbe
        return ic, ib, vb, vb - vbc, ve

    def _collector_kcl(self, vbe, vbc):
        ic, ib, vb, vc, ve = self._nodes(vbe, vbc)
        v, r = self.supply_v, self.r
        if self.topology == "collector-feedback":
            return (v - vc) / r["RC"] - ic - (vc - vb) / r["RB"]
        return (v - vc) / r["RC"] - ic

    def _vbc(self, vbe):
        if self.topology == "emitter-follower":  # the collector is the supply
            return brentq(lambda x: self._nodes(vbe, x)[3] - self.supply_v, -self.supply_v - 2, 2.0, xtol=1e-14)
        return brentq(lambda x: self._collector_kcl(vbe, x), -self.supply_v - 2, 1.2, xtol=1e-14)

    def _base_kcl(self, vbe):
        vbc = self._vbc(vbe)
        ic, ib, vb, vc, ve = self._nodes(vbe, vbc)
        v, r = self.supply_v, self.r
        if self.topology == "collector-feedback":
            return (vc - vb) / r["RB"] - ib
        return (v - vb) / r["R1"] - vb / r["R2"] - ib

    def dc(self) -> dict:
        vbe = brentq(self._base_kcl, 0.0, 1.2, xtol=1e-14)
        vbc = self._vbc(vbe)
        ic, ib, vb, vc, ve = self._nodes(vbe, vbc)
        return {"vbe": vbe, "vbc": vbc, "ic": ic, "ib": ib, "vb": vb, "vc": vc, "ve": ve,
                "vn": (ic + ib) * self.r.get("RE2", 0.0)}

    # Midband large-signal circuit: CIN, COUT and CE are batteries at their DC voltage.
    def signal(self, vs, inject_a=0.0, loaded=True, guess=None) -> dict:
        """Node voltages with source EMF vs (V) and `inject_a` (A) pushed into the output node."""
        q = self.q if hasattr(self, "q") else self._hold()
        v, r, rs = self.supply_v, self.r, self.source_ohms
        rl = self.load_ohms if loaded else np.inf
        follower = self.topology == "emitter-follower"

        def kcl(x):
            with np.errstate(over="ignore", invalid="ignore"):  # root may probe far-off points
                return _kcl(x)

        def _kcl(x):
            vb, vc, ve = x
            if follower:
                vc = v
            ic, ib = self.currents(vb - ve, vb - vc)
            fb = (vc - vb) / r["RB"] if self.topology == "collector-feedback" else 0.0
            if rs == 0:  # the source drives the base directly
                base = (vs + q["vb"] - vb) * 1e-3
            elif self.topology == "collector-feedback":
                base = (vs + q["vb"] - vb) / rs + fb - ib
            else:
                base = (vs + q["vb"] - vb) / rs + (v - vb) / r["R1"] - vb / r["R2"] - ib
            if follower:
                coll = (vc - x[1]) * 1e-3  # x[1] is unused: pin it
                emit = ic + ib - ve / r["RE"] - (ve - q["ve"]) / rl + inject_a
            else:
                coll = (v - vc) / r["RC"] - fb - ic - (vc - q["vc"]) / rl + inject_a
                re1 = r.get("RE1", 0.0)
                if re1 == 0:  # the emitter is the held RE1–RE2 node (or ground)
                    emit = (ve - q["vn"]) * 1e-3
                else:
                    emit = ic + ib - (ve - q["vn"]) / re1
            return [base * 1e3, coll * 1e3, emit * 1e3]

        def met(x):  # KCL met to 1 pA per mA flowing (at least 1 pA)
            vb, vc, ve = x
            ic = self.currents(vb - ve, vb - (v if follower else vc))[0]
            return np.max(np.abs(kcl(x))) < 1e-9 * max(1.0, abs(ic) * 1e3)

        x0 = guess if guess is not None else [q["vb"], q["vc"], q["ve"]]
        sol = root(kcl, x0, method="hybr", options={"xtol": 1e-13})
        if not met(sol.x):
            sol = root(kcl, sol.x, method="lm", options={"xtol": 1e-15, "ftol": 1e-15})
        assert met(sol.x), sol.message
        vb, vc, ve = sol.x
        if follower:
            vc = v
        ic, ib = self.currents(vb - ve, vb - vc)
        i_src = (vs + q["vb"] - vb) / rs if rs > 0 else np.nan
        return {"vb": vb, "vc": vc, "ve": ve, "ic": ic, "i_src": i_src, "x": sol.x}

    def _hold(self):
        self.q = self.dc()
        return self.q

    def out_node(self):
        return "ve" if self.topology == "emitter-follower" else "vc"

    def small_signal(self, dv=1e-4, di=1e-7) -> dict:
        """Gain, rin, rout by central differences of the held-capacitor circuit."""
        o = self.out_node()
        p, m = self.signal(dv), self.signal(-dv)
        gain = (p[o] - m[o]) / (2 * dv)
        rin = (p["vb"] - m["vb"]) / (p["i_src"] - m["i_src"])
        pu, mu = self.signal(0.0, di, loaded=False), self.signal(0.0, -di, loaded=False)
        rout = (pu[o] - mu[o]) / (2 * di)
        return {"gain": gain, "rin": rin, "rout": rout}

    def swing(self, vs_max=None, steps=120) -> tuple[float, float]:
        """(up, down): output excursion at the load (V peak) where the sweep first meets
        VCE < 0.2 V or IC < 1 % of its bias, driving the source both ways, the edge
        found by bisection on the source EMF."""
        q = self._hold()
        o = self.out_node()
        # Sweep far enough to swing the output over the whole supply, in small steps.
        # (plus 0.5 V for the ~0.1 V the junction needs to cut off, however high the gain).
        vs_max = vs_max or 1.5 * self.supply_v / abs(self.small_signal()["gain"]) + 0.5

        def clipped(s):
            return (s["vc"] - s["ve"]) < 0.2 or s["ic"] < 0.01 * q["ic"]

        found = {}
        for sign in (1.0, -1.0):
            clean, guess = 0.0, None
            for vs in sign * np.linspace(0.0, vs_max, steps + 1)[1:]:
                s = self.signal(vs, guess=guess)
                if clipped(s):
                    lo, hi = clean, vs
                    for _ in range(40):
                        mid = 0.5 * (lo + hi)
                        sm = self.signal(mid, guess=guess)
                        if clipped(sm):
                            hi = mid
                        else:
                            lo, guess = mid, sm["x"]
                    edge = self.signal(lo, guess=guess)[o] - q[o]
                    found["up" if edge > 0 else "down"] = abs(edge)
                    break
                clean, guess = vs, s["x"]
        return found.get("up", np.nan), found.get("down", np.nan)
