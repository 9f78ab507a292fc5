"""Ratings: is every part inside what it is rated for, and which way round do the electrolytics go?

Pure functions over `screen` outputs and rating arrays.  `usage` is the
fraction of the allowed value in use (≤ 1 is fine):
  * resistors: dissipation / (rating × derating), derating 50 % by default
    (common practice, no source);
  * transistor: p_q / PD(max), supply / VCEO (at cut-off VCE reaches the
    supply, the worst case), IC / IC(max);
  * capacitors: DC voltage across / (rating × margin), margin 80 % by default
    (common practice, no source).
DC voltages across the capacitors (the source and the load sit at 0 V DC):
CIN base − source, COUT collector (emitter for the follower) − load, CE the
RE1–RE2 node − ground (− the supply for a PNP stage, polarity.py).  A polarised
capacitor's + goes toward the higher side.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from optimizer import kinds
from optimizer.parts import network_tree
from optimizer.physics.transistor import Transistor
from optimizer.physics import polarity

RESISTOR_DERATING = 0.5  # common practice, no source
CAPACITOR_MARGIN = 0.8  # common practice, no source


@dataclass(frozen=True)
class Ratings:
    """usage: key → array of fractions; orientation: capacitor → array of "+ toward …" text."""

    usage: dict
    orientation: dict
    what: dict  # key → (noun, unit, actual array, allowed array) for the messages

    @property
    def ok(self) -> np.ndarray:
        """True where every checked part is within its allowed value."""
        flags = [np.asarray(u <= 1.0) for u in self.usage.values()]
        return np.logical_and.reduce(flags) if flags else np.asarray(True)

    def warnings(self, index=()) -> list[str]:
        """Human-readable warnings for one candidate (`index` into the arrays; () for scalars)."""
        out = []
        for key, usage in self.usage.items():
            u = float(np.asarray(usage)[index])
            if u > 1.0:
                noun, unit, actual, allowed = self.what[key]
                a, b = float(np.asarray(actual)[index]), float(np.asarray(allowed)[index])
                out.append(f"{noun}: {a:.3g} {unit} exceeds the allowed {b:.3g} {unit} ({u:.0%} of it)")
        for pos, text in self.orientation.items():
            out.append(f"{pos} is polarised: fit it with {np.asarray(text)[index]}")
        return out


def _toward(high_side, low_side, v):
    return np.where(np.asarray(v) >= 0, f"+ toward {high_side}", f"+ toward {low_side}")


def capacitor_voltages(topology, op, *, transistor=None, supply_v=None) -> dict:
    """DC voltage (V) across each capacitor, positive when the first-named side is higher.

    op is the (mirror-frame, for a PNP) screen result; a PNP `transistor` needs `supply_v`."""
    volts = {p: op[key] for p, key in kinds.get(topology).cap_nodes.items()}
    return polarity.capacitor_volts(volts, transistor, supply_v)


def orientation(topology, op, *, transistor=None, supply_v=None) -> dict:
    """"+ toward …" for each capacitor position, from the DC voltages."""
    v = capacitor_voltages(topology, op, transistor=transistor, supply_v=supply_v)
    sides = kinds.get(topology).cap_sides
    text = {p: _toward(*sides[p], v[p]) for p in v}
    if "CE" in v:  # CE's far lead goes to ground, or to +V in a PNP stage
        text["CE"] = _toward(sides["CE"][0], polarity.ce_return(transistor), v["CE"])
    return text


def check_ratings(topology, op: Mapping, *, transistor: Transistor, supply_v,
                  resistor_power_w: Mapping | None = None, capacitor_voltage_v: Mapping | None = None,
                  capacitor_polarised: Mapping | None = None,
                  resistor_derating=RESISTOR_DERATING, capacitor_margin=CAPACITOR_MARGIN) -> Ratings:
    """Check `op` (a `screen` result) against the ratings given; absent ratings are not checked.

    resistor_power_w: position → W rating (array or float); capacitor_voltage_v:
    position → V rating; capacitor_polarised: position → bool (orientation is
    reported for those only).  Transistor limits come from vceo_v, ic_max_a, pd_max_w.
    """
    usage, what = {}, {}

    def add(key, noun, unit, actual, limit):
        actual, limit = np.broadcast_arrays(np.asarray(actual, dtype=float), np.asarray(limit, dtype=float))
        usage[key] = np.abs(actual) / limit
        what[key] = (noun, unit, np.abs(actual), limit)

    for pos, rating in (resistor_power_w or {}).items():
        if rating is not None and f"p_{pos}" in op:
            add(pos, f"{pos} dissipation", "W", op[f"p_{pos}"], np.asarray(rating) * resistor_derating)
    q = transistor
    if q.pd_max_w:
        add("Q1_power", f"{q.name} dissipation", "W", op["p_q"], q.pd_max_w)
    if q.vceo_v:
        add("Q1_vceo", f"{q.name} VCE at cut-off (the supply)", "V", supply_v + 0.0 * op["ic"], q.vceo_v)
    if q.ic_max_a:
        add("Q1_ic", f"{q.name} collector current", "A", op["ic"], q.ic_max_a)
    volts = capacitor_voltages(topology, op, transistor=transistor, supply_v=supply_v)
    for pos, rating in (capacitor_voltage_v or {}).items():
        if rating is not None and pos in volts:
            add(pos, f"{pos} DC voltage", "V", volts[pos], np.asarray(rating) * capacitor_margin)
    polarised = [p for p, yes in (capacitor_polarised or {}).items() if yes]
    signs = orientation(topology, op, transistor=transistor, supply_v=supply_v)
    return Ratings(usage, {p: signs[p] for p in polarised if p in signs}, what)


def part_dissipation(node, power_w: float) -> list[tuple[network_tree.Leaf, float]]:
    """Share of a network's dissipation (W) taken by each of its parts.

    Series parts carry one current, so each takes P·R_i/R; parallel parts see
    one voltage, so each takes P·R/R_i.
    """
    if isinstance(node, network_tree.Leaf):
        return [(node, float(power_w))]
    total = network_tree.evaluate(node, "resistor")
    out = []
    for part in node.parts:
        r_i = network_tree.evaluate(part, "resistor")
        share = r_i / total if isinstance(node, network_tree.Series) else total / r_i
        out.extend(part_dissipation(part, power_w * share))
    return out
