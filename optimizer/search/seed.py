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
parts (one below and one above each).  When none of those meets the spec, the same procedure is
tried again at the usual small-signal operating currents of `IC_LADDER_A`: the least current the
load needs is not always the one a drawer's values suit.
"""

from __future__ import annotations

import itertools
import math

import numpy as np

from optimizer import kinds
from optimizer.physics.stage import RESISTOR_POSITIONS

VBE_V = 0.65  # a small-signal silicon junction at about 1 mA (common practice, no source)
DIVIDER_STIFFNESS = 10.0  # divider current / base current at hFE min (common practice, no source)
SWING_ROOM = 1.25  # the load-line swing asked of a seed, over the swing asked of the stage
MIN_IC_A = 0.2e-3
IC_LADDER_A = (0.5e-3, 1e-3, 2e-3)  # second-round seed currents (common practice, no source)
NEIGHBOURS = 2  # stocked values taken on each side of an ideal value


def ideal_values(topology, spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A) -> dict[str, float]:
    """Position → ideal ohms (0.0 = leave the position out) for `spec` with a transistor of that hFE,
    the operating current at least ic_floor (A) (each kind's own procedure, `Kind.ideal_values`)."""
    return kinds.get(topology).ideal_values(spec, hfe_min, hfe_typ, ic_floor)


def capped(i, spec):
    return min(i, spec.max_supply_a / 1.3) if spec.max_supply_a is not None else i


def divider(vcc, vb, ic, hfe_min, hfe_typ, r_emitter_ac, spec):
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


def seed_tuples(topology, spec, q, pool, ic_floor=MIN_IC_A) -> dict[str, np.ndarray]:
    """A chunk (position → ohms arrays) of the stocked neighbours of the ideal values for line `q`
    at an operating current of at least ic_floor (A)."""
    t = q.transistor
    ideal = ideal_values(topology, spec, float(t.hfe_min), math.sqrt(float(t.hfe_min) * float(t.hfe_max)), ic_floor)
    values = pool.distinct.value
    single = pool.group(1)  # single parts too: a bench's first choice, and the fewest-parts designs
    choices = []
    for p in RESISTOR_POSITIONS[topology]:
        near = np.union1d(neighbours(values, ideal.get(p, 0.0), 1), neighbours(single, ideal.get(p, 0.0), 1))
        if p in kinds.get(topology).optional:
            near = np.append(near, 0.0)  # leaving it out is a neighbour too
        if not len(near):
            return {p: np.zeros(0) for p in RESISTOR_POSITIONS[topology]}
        choices.append(near)
    grid = np.array(list(itertools.product(*choices)), dtype=float)
    return {p: grid[:, k] for k, p in enumerate(RESISTOR_POSITIONS[topology])}
