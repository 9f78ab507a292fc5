"""The design objective, as integers, shared by the CP-SAT selection and the exhaustive oracle.

Lexicographic, smaller is better (the README quotes this):

  1. the design meets the whole specification at hFE min and at hFE max (hard);
  2. fewest physical parts in total (resistors, capacitors, the transistor);
  3. smallest worst-case gain error max over hFE min/max of ||gain|/target − 1|,
     in whole steps of 0.1 % (rounded to the nearest step);
  4. largest worst-case clip-free swing margin (swing the stage can give minus the
     swing asked for, the smaller over hFE min/max), in whole mV (rounded down);
  5. smallest total capacitance (whole nF, rounded): of the capacitors that are
     enough, the smallest (coupling and bypass need at least a value, not more);
  6. leaves the most stock: fewest drawer lines emptied, then the least
     Σ over lines of used/qty (in steps of 1/10 000 per part, rounded);
  then the solver's own deterministic tie-break (one worker, fixed seed).

Every quantity here is an exact integer function of the screened physics, so the
solver and the oracle compare designs with the very same numbers.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

GAIN_STEP = 1e-3  # 0.1 %
SWING_STEP_V = 1e-3  # 1 mV
FRAC_SCALE = 10_000  # Σ used/qty resolution
NF = 1e-9
POWER_STEP_W = 1e-6  # dissipation checks compare whole µW
RESISTOR_DERATING = 0.5  # dissipation ≤ 50 % of the network's capacity (common practice, no source)
UNKNOWN_POWER_W = 0.125  # a resistor line with no rating is taken as 1/8 W (common practice, no source)


def gain_error_steps(gain_lo, gain_hi, target):
    """Worst-case gain error over the two hFE corners in 0.1 % steps (int array)."""
    err = np.maximum(np.abs(np.abs(gain_lo) / target - 1.0), np.abs(np.abs(gain_hi) / target - 1.0))
    return np.rint(err / GAIN_STEP).astype(np.int64)


def swing_margin_mv(swing_lo, swing_hi, required_pp):
    """Worst-case swing margin in whole mV (int array, rounded down)."""
    margin = np.minimum(swing_lo, swing_hi) - required_pp
    return np.floor(margin / SWING_STEP_V + 1e-9).astype(np.int64)


def power_need_uw(p_w):
    """Capacity a network must have, in whole µW: dissipation / derating, rounded up."""
    return np.ceil(np.asarray(p_w) / RESISTOR_DERATING / POWER_STEP_W - 1e-6).astype(np.int64)


def power_capacity_uw(cap_w):
    """A network's power capacity in whole µW (rounded down; unknown ratings as 1/8 W)."""
    cap = np.where(np.isnan(cap_w), UNKNOWN_POWER_W, cap_w)
    return np.floor(np.asarray(cap) / POWER_STEP_W + 1e-6).astype(np.int64)


def line_weight(qty):
    """Per-part weight of a line in the Σ used/qty term."""
    return int(round(FRAC_SCALE / int(qty)))


def line_weights(qty) -> np.ndarray:
    """line_weight per stock row (int64 array), 0 for empty rows."""
    return np.array([line_weight(q) if q > 0 else 0 for q in np.asarray(qty)], dtype=np.int64)


def stock_terms(usage: dict[int, int], qty_of: dict[int, int]) -> tuple[int, int]:
    """(lines emptied, Σ used·weight) for a usage {line: count}."""
    emptied = sum(1 for line, n in usage.items() if n >= qty_of[line])
    frac = sum(n * line_weight(qty_of[line]) for line, n in usage.items())
    return emptied, frac


def nano(farads) -> int:
    return int(round(float(farads) / NF))


@dataclass(frozen=True, order=True)
class Score:
    """The lexicographic key; tuples of these compare in objective order."""

    parts: int
    gain_error: int  # 0.1 % steps
    neg_swing_margin: int  # −mV
    cap_nf: int
    emptied: int
    used_frac: int

    def to_json(self) -> dict:
        return {"parts": self.parts, "gain_error": self.gain_error * GAIN_STEP,
                "swing_margin_v": -self.neg_swing_margin * SWING_STEP_V,
                "lines_emptied": self.emptied, "stock_used": self.used_frac / FRAC_SCALE,
                "stock_left": -self.used_frac / FRAC_SCALE, "capacitance_nf": self.cap_nf}
