"""Seeded Monte Carlo and vertex worst case of one stage, part by part.

Monte Carlo draws every physical part of every network independently
(`network_tree.sample`, uniform within its tolerance), hFE uniform between the
drawer line's minimum and maximum (taken as BF at 27 °C), the temperature
uniform over the range, and the IS-setting VBE (the VBE giving 1 mA at 27 °C)
as a normal spread truncated at ±3σ, so that the ±3σ worst case bounds it.
The transistor model's own laws then move VBE (≈ −2 mV/°C) and β with
temperature.  The low cut-off is checked elsewhere (it needs the capacitors).

The worst case sets every position to its `network_tree.bounds` end, hFE to
its ends, VBE to ±3σ and the temperature to its ends, and evaluates all
2^(positions + 3) vertices at once.  Gain, IC and VC are monotonic in each of
these, so their vertex extremes bound the samples; the swing's lower bound too
(it is the smaller of two monotonic limits), but its upper bound may lie
inside the box.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from optimizer.parts import network_tree
from optimizer.physics.screen import screen
from optimizer.spec import Spec
from optimizer.physics.transistor import TNOM_C, Transistor, is_from_vbe, thermal_voltage

VBE_SIGMA_LIMIT = 3.0  # the spread is truncated here; the worst case uses the same limit
REPORTED = ("gain", "ic", "vc", "ve", "vb", "vce", "swing_pp", "rin", "rout", "i_supply", "saturated", "cutoff", "converged")


def _vbe_at_1ma(transistor: Transistor) -> float:
    """The VBE (V) the nominal IS gives at 1 mA and 27 °C (the inverse of `is_from_vbe`)."""
    return float(thermal_voltage(TNOM_C) * np.log1p(1e-3 / transistor.is_a))


def _truncated_normal(rng, n, sigma, limit=VBE_SIGMA_LIMIT):
    z = rng.standard_normal(n)
    bad = np.abs(z) > limit
    while bad.any():  # redraw the tails; a few rounds at most
        z[bad] = rng.standard_normal(int(bad.sum()))
        bad = np.abs(z) > limit
    return z * sigma


@dataclass(frozen=True)
class MonteCarlo:
    """Per-sample arrays (SI units) of one Monte Carlo run, and its inputs."""

    samples: dict
    n: int
    seed: int

    def __getattr__(self, name):
        if name == "samples":  # not yet set (copy, unpickling): no recursion
            raise AttributeError(name)
        try:
            return self.samples[name]
        except KeyError:
            raise AttributeError(name) from None

    def meeting(self, spec: Spec) -> np.ndarray:
        """Per-sample bool: gain within spec.gain·(1 ± gain_tol), swing ≥ spec.swing_pp,
        rin ≥ spec.rin_floor, supply current within spec.max_supply_a (when set),
        converged and neither saturated nor cut off.  The low cut-off is not checked here."""
        s = self.samples
        mag = np.abs(s["gain"])
        ok = (mag >= spec.gain * (1 - spec.gain_tol)) & (mag <= spec.gain * (1 + spec.gain_tol))
        ok &= s["swing_pp"] >= spec.swing_pp
        ok &= s["rin"] >= spec.rin_floor
        if spec.max_supply_a is not None:
            ok &= s["i_supply"] <= spec.max_supply_a
        return ok & s["converged"] & ~s["saturated"] & ~s["cutoff"]

    def share_meeting(self, spec: Spec) -> float:
        """Fraction (0…1) of samples meeting `spec` (see `meeting`)."""
        return float(np.mean(self.meeting(spec)))


def hfe_range(transistor, hfe_min=None, hfe_max=None) -> tuple[float, float]:
    """(low, high) hFE a run draws from: the given ends, else the transistor's own spread, else its bf."""
    lo = transistor.hfe_min if hfe_min is None else hfe_min
    hi = transistor.hfe_max if hfe_max is None else hfe_max
    lo = transistor.bf if lo is None else lo
    hi = transistor.bf if hi is None else hi
    if not 0 < lo <= hi:
        raise ValueError(f"hFE range {lo:g}…{hi:g} is empty or not positive")
    return float(lo), float(hi)


def draw_networks(networks: dict, rng, n: int) -> dict:
    """position → n sampled values (Ω) of each network, part by part, positions in sorted order."""
    return {pos: network_tree.sample(node, "resistor", rng, n) for pos, node in sorted(networks.items())}


def draw_vbe(transistor: Transistor, rng, n: int, vbe_sigma_v: float) -> np.ndarray:
    """n IS-setting VBE values (V at 1 mA, 27 °C): the nominal one plus a ±3σ-truncated normal spread."""
    return _vbe_at_1ma(transistor) + _truncated_normal(rng, n, vbe_sigma_v)


def screen_samples(topology, r: dict, *, transistor: Transistor, beta, temp_c, vbe_1ma, supply_v, source_ohms,
                   load_ohms, negative_supply_v=0.0, dc_input=False) -> dict:
    """The REPORTED figures of one stage for each drawn sample (arrays; load_ohms may be per sample too),
    with the draws themselves (beta, temp_c, vbe_1ma)."""
    out = screen(topology, r, transistor=transistor, supply_v=supply_v, source_ohms=source_ohms,
                 load_ohms=load_ohms, temp_c=temp_c, beta=beta, is_a=is_from_vbe(vbe_1ma),
                 negative_supply_v=negative_supply_v, dc_input=dc_input)
    samples = {k: out[k] for k in REPORTED}
    samples.update(beta=beta, temp_c=temp_c, vbe_1ma=vbe_1ma)
    return samples


def monte_carlo(topology, networks: dict, *, transistor: Transistor, hfe_min=None, hfe_max=None,
                supply_v, source_ohms, load_ohms, temp_range_c=(0.0, 50.0), vbe_sigma_v=0.01, negative_supply_v=0.0,
                dc_input=False,
                n=10_000, seed=0) -> MonteCarlo:
    """Sample the stage `n` times; `networks` maps each resistor position to a network_tree node.

    hfe_min/hfe_max default to the transistor's own spread (or its bf).
    Volts, ohms, °C; the same seed gives the same samples.
    """
    rng = np.random.default_rng(seed)
    lo, hi = hfe_range(transistor, hfe_min, hfe_max)
    r = draw_networks(networks, rng, n)
    beta = rng.uniform(lo, hi, n)
    temp = rng.uniform(temp_range_c[0], temp_range_c[1], n)
    vbe = draw_vbe(transistor, rng, n, vbe_sigma_v)
    samples = screen_samples(topology, r, transistor=transistor, beta=beta, temp_c=temp, vbe_1ma=vbe,
                             supply_v=supply_v, source_ohms=source_ohms, load_ohms=load_ohms,
                             negative_supply_v=negative_supply_v, dc_input=dc_input)
    return MonteCarlo(samples, n, seed)


def worst_case(topology, networks: dict, *, transistor: Transistor, hfe_min=None, hfe_max=None,
               supply_v, source_ohms, load_ohms, temp_range_c=(0.0, 50.0), vbe_sigma_v=0.01, negative_supply_v=0.0,
               dc_input=False,
               keys=("gain", "ic", "vc", "swing_pp")) -> dict[str, tuple[float, float]]:
    """(low, high) of each of `keys` over every vertex of the tolerance box (see the module note)."""
    positions = sorted(networks)
    ends = [network_tree.bounds(networks[p], "resistor") for p in positions]
    lo, hi = hfe_range(transistor, hfe_min, hfe_max)
    v0 = _vbe_at_1ma(transistor)
    axes = ends + [(lo, hi), (v0 - VBE_SIGMA_LIMIT * vbe_sigma_v, v0 + VBE_SIGMA_LIMIT * vbe_sigma_v),
                   tuple(temp_range_c)]
    grid = np.array(list(itertools.product(*axes)), dtype=float)
    r = {p: grid[:, i] for i, p in enumerate(positions)}
    k = len(positions)
    out = screen(topology, r, transistor=transistor, supply_v=supply_v, source_ohms=source_ohms,
                 load_ohms=load_ohms, temp_c=grid[:, k + 2], beta=grid[:, k], is_a=is_from_vbe(grid[:, k + 1]),
                 negative_supply_v=negative_supply_v, dc_input=dc_input)
    return {key: (float(np.min(out[key])), float(np.max(out[key]))) for key in keys}
