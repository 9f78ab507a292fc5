"""First guesses: the values a bench would start from, and their stocked neighbours.

The search screens these tuples before it starts on the part budgets, so a good design is in
hand within a fraction of a second even when the exhaustive part runs out of time.  The ideal
values follow the usual procedure for each stage (common practice, no source):

common emitter    VE = max(1 V, VCC/10) for a bias that shrugs off VBE drift; the collector
                  centred in the room the swing leaves above VE + VCE(min); IC just enough for
                  the load to take the asked swing; RE = VE/IC; RE1 = (RC‖RL)/|gain| − re'
                  (re' = Vt/IC), the rest of RE bypassed as RE2; a divider carrying 10 × the
                  base current at hFE min, loosened when the input resistance asks for it.
emitter follower  the emitter at about half the supply; IE so the emitter can fall the asked
                  half-swing into RE‖RL with room; the same divider rule.
collector feedback  as the common emitter, with RB from the collector feeding the base
                  current at the typical hFE.
Every value is then replaced by the nearest values the drawer can make and the nearest single
parts (one below and one above each).
"""

from __future__ import annotations

import itertools
import math

import numpy as np

from .stage import COLLECTOR_FEEDBACK, EMITTER_FOLLOWER, RESISTOR_POSITIONS
from .swing import VCE_SAT_V
from .transistor import thermal_voltage

VBE_V = 0.65  # a small-signal silicon junction at about 1 mA (common practice, no source)
DIVIDER_STIFFNESS = 10.0  # divider current / base current at hFE min (common practice, no source)
SWING_ROOM = 1.25  # the load-line swing asked of a seed, over the swing asked of the stage
MIN_IC_A = 0.2e-3
NEIGHBOURS = 2  # stocked values taken on each side of an ideal value


def ideal_values(topology, spec, hfe_min, hfe_typ) -> dict[str, float]:
    """Position → ideal ohms (0.0 = leave the position out) for `spec` with a transistor of that hFE."""
    vcc, swing, rl = spec.supply_v, spec.swing_pp / 2.0 * SWING_ROOM, spec.load_ohms
    vt = float(thermal_voltage(27.0))
    if topology == EMITTER_FOLLOWER:
        ve = max(vcc / 2.0 - VBE_V / 2.0, 0.5)
        ie = swing / (rl * (1.0 - swing / ve)) if swing < ve and math.isfinite(rl) else MIN_IC_A
        ie = _capped(max(ie, MIN_IC_A), spec)
        r1, r2 = _divider(vcc, ve + VBE_V, ie, hfe_min, hfe_typ, ve / ie, spec)
        return {"R1": r1, "R2": r2, "RE": ve / ie}
    ve = min(max(1.0, vcc / 10.0), vcc / 4.0)
    low = ve + max(spec.min_vce_v, VCE_SAT_V + swing)
    vc = (vcc + low) / 2.0
    room = vcc - vc
    need = 1.2 * swing
    ic = need * room / (rl * (room - need)) if room > need and math.isfinite(rl) else MIN_IC_A
    ic = _capped(max(ic, MIN_IC_A), spec)
    rc = room / ic
    rac = rc if not math.isfinite(rl) else rc * rl / (rc + rl)
    re = ve / ic
    re1 = min(max(rac / spec.gain - vt / ic, 0.0), re)
    out = {"RC": rc, "RE1": re1, "RE2": re - re1}
    if topology == COLLECTOR_FEEDBACK:
        out["RB"] = max(vc - ve - VBE_V, 0.1) / (ic / hfe_typ)
        out["RC"] = room / (ic * (1.0 + 1.0 / hfe_typ))
        return out
    out["R1"], out["R2"] = _divider(vcc, ve + VBE_V, ic, hfe_min, hfe_typ, re1 + vt / ic, spec)
    return out


def _capped(i, spec):
    return min(i, spec.max_supply_a / 1.3) if spec.max_supply_a is not None else i


def _divider(vcc, vb, ic, hfe_min, hfe_typ, r_emitter_ac, spec):
    """(R1, R2) for base voltage vb carrying DIVIDER_STIFFNESS × IB(hFE min), loosened until the
    input resistance (divider ‖ the base's hFE·(re' + RE1)) clears the spec's floor with room."""
    ib = ic / hfe_min
    i2 = DIVIDER_STIFFNESS * ib
    r2, r1 = vb / i2, (vcc - vb) / (i2 + ib)
    base = hfe_typ * r_emitter_ac
    want = 1.5 * spec.rin_floor
    rth = r1 * r2 / (r1 + r2)
    if want > 0 and 1.0 / (1.0 / rth + 1.0 / base) < want and base > want:
        scale = (1.0 / (1.0 / want - 1.0 / base)) / rth
        r1, r2 = r1 * scale, r2 * scale
    return r1, r2


def neighbours(values: np.ndarray, target: float, k: int = NEIGHBOURS) -> np.ndarray:
    """Up to k values of sorted `values` on each side of `target`."""
    if target <= 0 or not len(values):
        return np.zeros(0)
    i = int(np.searchsorted(values, target))
    return values[max(0, i - k):i + k]


def seed_tuples(topology, spec, q, pool) -> dict[str, np.ndarray]:
    """A chunk (position → ohms arrays) of the stocked neighbours of the ideal values for line `q`."""
    t = q.transistor
    ideal = ideal_values(topology, spec, float(t.hfe_min), math.sqrt(float(t.hfe_min) * float(t.hfe_max)))
    values = pool.distinct.value
    single = pool.group(1)  # single parts too: a bench's first choice, and the fewest-parts designs
    choices = []
    for p in RESISTOR_POSITIONS[topology]:
        near = np.union1d(neighbours(values, ideal.get(p, 0.0), 1), neighbours(single, ideal.get(p, 0.0), 1))
        if p in ("RE1", "RE2"):
            near = np.append(near, 0.0)  # leaving it out is a neighbour too
        if not len(near):
            return {p: np.zeros(0) for p in RESISTOR_POSITIONS[topology]}
        choices.append(near)
    grid = np.array(list(itertools.product(*choices)), dtype=float)
    return {p: grid[:, k] for k, p in enumerate(RESISTOR_POSITIONS[topology])}
