"""Seeded Monte Carlo of a two-stage chain, vectorised over the samples.

The stages are AC-coupled, so each stage's DC is its own, and the midband figures compose
exactly (analysis.py): per sample, the second stage is screened (physics/screen.py) with the
chain's load, which gives its input resistance Rin2 and its gain from the interstage node x
(screened with source_ohms = 0: with the base node driven directly, the gain from the EMF is the
gain from x); the first stage is then screened with that sample's Rin2 as its load, which gives
its gain from the source's EMF to x, the chain's Rin and its own swing at x.  The chain's gain is
the product of the two.

Each stage draws its own parts (network_tree.sample, part by part), its own hFE (uniform over its
transistor line's range) and its own IS-setting VBE (physics/montecarlo.draw_vbe); the
temperature is drawn once per sample and shared by both stages (one board, one room).

The samples are those of `physics.montecarlo.MonteCarlo` for the whole chain, so its `meeting`
is the per-sample test: "gain" the chain's, "rin" the first stage's, "swing_pp" the smaller of
the second stage's swing and the first stage's times |gain from x| (swing_pp ≥ the asked swing
exactly when stage 2 swings it and stage 1 delivers its drive), "i_supply" the sum, "converged"
both stages, "saturated" / "cutoff" either.  Each stage's own figures are kept as "<key>_1" and
"<key>_2" ("gain_2" is from x to the load, "rin_2" the first stage's load; "rout_2" is seen with x
driven stiffly, not the chain's Rout, which is left out), with the drawn values of each
resistor position ("RC_2": Ω of stage 2's RC).  The low cut-off is checked elsewhere (it needs the
capacitors).

An all-PNP chain is sampled as its NPN mirror (chain/polarity.py; the screen solves the mirror
frame, as for one PNP stage): gain, Rin, swing, currents and the flags are the mirror's, so the
yield is the same maths; only each stage's VB, VE, VC ("vb_1" …) are turned back into real
polarity (VCC − V).  A mixed NPN/PNP chain is refused (ValueError).
"""

from __future__ import annotations

import numpy as np

from optimizer.chain.circuit import Chain
from optimizer.chain.polarity import mirror_v
from optimizer.chain.names import split
from optimizer.parts import network_tree
from optimizer.physics.montecarlo import (
    REPORTED,
    MonteCarlo,
    draw_networks,
    draw_vbe,
    hfe_range,
    screen_samples,
)

STAGE_KEYS = REPORTED + ("beta",)


def chain_monte_carlo(chain: Chain, networks: tuple[dict, dict], *, temp_range_c=(0.0, 50.0), vbe_sigma_v=0.01,
                      hfe=(None, None), n=10_000, seed=0) -> MonteCarlo:
    """Sample `chain` n times; networks: (stage 1, stage 2) each position → network_tree node (the
    stage's own position names).  hfe: per stage (low, high) or None for the transistor line's own
    spread.  The supply and source are the first stage's, the load the second's; volts, ohms, °C.
    The same seed gives the same samples."""
    s1, s2 = chain.first, chain.second
    mirror = mirror_v(chain)  # the supply for an all-PNP chain (sampled as its mirror), else 0
    rng = np.random.default_rng(seed)
    ranges = [hfe_range(s.transistor, *(h or (None, None))) for s, h in zip((s1, s2), hfe, strict=True)]
    # Draw order (fixed, so a seed repeats): stage 1's parts and hFE, stage 2's, the temperature, the VBEs.
    r1 = draw_networks(networks[0], rng, n)
    beta1 = rng.uniform(*ranges[0], n)
    r2 = draw_networks(networks[1], rng, n)
    beta2 = rng.uniform(*ranges[1], n)
    temp = rng.uniform(temp_range_c[0], temp_range_c[1], n)
    vbe1 = draw_vbe(s1.transistor, rng, n, vbe_sigma_v)
    vbe2 = draw_vbe(s2.transistor, rng, n, vbe_sigma_v)
    supply = s1.supply_v  # both stages share the first stage's supply (circuit.Chain)
    two = screen_samples(s2.topology, r2, transistor=s2.transistor, beta=beta2, temp_c=temp, vbe_1ma=vbe2,
                         supply_v=supply, source_ohms=0.0, load_ohms=s2.load_ohms)
    # A sample whose second stage has no finite positive Rin fails on its own flags; its first stage
    # is then screened into an open load so its numbers stay numbers.
    ok2 = np.isfinite(two["rin"]) & (two["rin"] > 0)
    one = screen_samples(s1.topology, r1, transistor=s1.transistor, beta=beta1, temp_c=temp, vbe_1ma=vbe1,
                         supply_v=supply, source_ohms=s1.source_ohms, load_ohms=np.where(ok2, two["rin"], np.inf))
    samples = {
        "gain": one["gain"] * two["gain"],
        "rin": one["rin"],
        "swing_pp": np.minimum(two["swing_pp"], one["swing_pp"] * np.abs(two["gain"])),
        "i_supply": one["i_supply"] + two["i_supply"],
        "converged": one["converged"] & two["converged"] & ok2,
        "saturated": one["saturated"] | two["saturated"],
        "cutoff": one["cutoff"] | two["cutoff"],
        "temp_c": temp,
    }
    for k, stage, r in (("1", one, r1), ("2", two, r2)):
        samples.update({f"{key}_{k}": stage[key] for key in STAGE_KEYS})
        if mirror:
            samples.update({f"{key}_{k}": mirror - stage[key] for key in ("vb", "ve", "vc")})
        samples[f"vbe_1ma_{k}"] = stage["vbe_1ma"]
        samples.update({f"{pos}_{k}": np.broadcast_to(np.asarray(v, dtype=float), (n,)) for pos, v in r.items()})
    return MonteCarlo(samples, n, seed)


def networks_from_parts(parts: dict, tolerance_of) -> tuple[dict, dict]:
    """(stage 1, stage 2) position → network_tree node from a chain design's "parts" (the JSON's
    networks; second-stage positions end in "_B"); tolerance_of(line) gives each part's tolerance."""
    out = ({}, {})
    for name, part in parts.items():
        if "ohms" not in part or "network" not in part:
            continue
        k, pos = split(name)
        out[k][pos] = network_tree.from_json(part["network"], tolerance_of, "ohms")
    return out
