"""The chain Monte Carlo (optimizer/chain/montecarlo.py) against the whole-chain nodal solver
(optimizer/chain/figures.py), which solves both transistors together and shares no code with the
per-stage composition; ngspice on one drawn sample; yield in [0, 1], moving the right way; seeds.

Each sample's chain is rebuilt from its own draws (resistor values, each transistor's hFE and
IS-setting VBE, the shared temperature) and solved whole: gain, Rin, the second stage's gain from x
and the supply current must agree to round-off.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from optimizer.chain.circuit import Chain
from optimizer.chain.figures import figures
from optimizer.chain.montecarlo import chain_monte_carlo, networks_from_parts
from optimizer.parts import network_tree as nt
from optimizer.physics.transistor import is_from_vbe
from optimizer.spec import Spec
from tests.chain_designs import KINDS, chain

TIGHT = 1e-9  # relative: both sides are exact solutions of the same equations (measured ≈ 1.5e-13)


def networks(ch: Chain, tolerance: float) -> tuple[dict, dict]:
    """Each stage's resistors as single parts of `tolerance` (lines made up: 1, 2, …)."""
    out, line = [], 1
    for s in (ch.first, ch.second):
        nets = {}
        for pos, ohms in s.resistors.items():
            if ohms > 0:
                nets[pos] = nt.Leaf(ohms, tolerance, line)
                line += 1
        out.append(nets)
    return tuple(out)


def sample_chain(ch: Chain, mc, i: int) -> Chain:
    """The chain of sample i: its drawn resistor values and each transistor at its drawn IS (BF and
    the temperature go to figures() as the corner)."""
    stages = []
    for k, s in (("1", ch.first), ("2", ch.second)):
        res = {pos: float(mc.samples[f"{pos}_{k}"][i]) for pos in s.resistors if f"{pos}_{k}" in mc.samples}
        q = replace(s.transistor, name=f"stage {k}", is_a=float(is_from_vbe(mc.samples[f"vbe_1ma_{k}"][i])))
        stages.append(replace(s, resistors=res, transistor=q))
    return Chain(ch.kind, *stages)


@pytest.mark.parametrize("kind", KINDS)
def test_pinned_corners_equal_the_whole_chain_solver(kind):
    """No spread at all (parts exact, hFE and temperature pinned, VBE σ 0): the Monte Carlo is one
    corner of the whole-chain solver."""
    ch = chain(kind)
    exact = networks(ch, 0.0)
    for bf1, bf2, temp in ((150.0, 400.0, 0.0), (400.0, 150.0, 50.0), (245.0, 245.0, 27.0)):
        mc = chain_monte_carlo(ch, exact, temp_range_c=(temp, temp), vbe_sigma_v=0.0,
                               hfe=((bf1, bf1), (bf2, bf2)), n=4, seed=3)
        f = figures(ch, [(bf1, bf2, temp)], low_cut=False)
        np.testing.assert_allclose(mc.gain, f.gain[0], rtol=TIGHT)
        np.testing.assert_allclose(mc.rin, f.rin[0], rtol=TIGHT)
        np.testing.assert_allclose(mc.gain_2, f.gain_second[0], rtol=TIGHT)
        np.testing.assert_allclose(mc.i_supply, f.i_supply[0], rtol=TIGHT)
        assert mc.converged.all() and not (mc.saturated | mc.cutoff).any()


@pytest.mark.parametrize("kind", KINDS)
def test_drawn_samples_equal_the_whole_chain_solver(kind):
    """Parts at 5 %, both hFE over their ranges, VBE spread, temperature over 0…50 °C: each sample
    rebuilt as a chain and solved whole gives the sample's own figures."""
    ch = chain(kind)
    mc = chain_monte_carlo(ch, networks(ch, 0.05), n=6, seed=11)
    assert np.ptp(mc.temp_c) > 0 and np.ptp(mc.beta_1) > 0 and np.ptp(mc.vbe_1ma_2) > 0  # the draws did move
    for i in range(mc.n):
        f = figures(sample_chain(ch, mc, i), [(mc.beta_1[i], mc.beta_2[i], mc.temp_c[i])], low_cut=False)
        assert mc.gain[i] == pytest.approx(f.gain[0], rel=TIGHT)
        assert mc.rin[i] == pytest.approx(f.rin[0], rel=TIGHT)
        assert mc.gain_2[i] == pytest.approx(f.gain_second[0], rel=TIGHT)
        assert mc.i_supply[i] == pytest.approx(f.i_supply[0], rel=TIGHT)


def test_seeded_runs_repeat_and_seeds_differ():
    ch = chain("common-emitter+common-emitter")
    nets = networks(ch, 0.05)
    a = chain_monte_carlo(ch, nets, n=500, seed=5)
    b = chain_monte_carlo(ch, nets, n=500, seed=5)
    c = chain_monte_carlo(ch, nets, n=500, seed=6)
    for key in ("gain", "rin", "swing_pp", "i_supply"):
        np.testing.assert_array_equal(a.samples[key], b.samples[key])
    assert not np.array_equal(a.gain, c.gain)


@pytest.mark.parametrize("kind", KINDS)
def test_yield_is_a_share_and_falls_as_the_gain_window_narrows(kind):
    ch = chain(kind)
    mc = chain_monte_carlo(ch, networks(ch, 0.05), n=2000, seed=2)
    nominal = float(np.median(np.abs(mc.gain)))
    shares = [mc.share_meeting(Spec(topology=kind, gain=nominal, gain_tol=tol, swing_pp=0.5, min_rin_ohms=0.0))
              for tol in (0.5, 0.05, 0.02, 0.005)]
    assert all(0.0 <= s <= 1.0 for s in shares)
    assert shares == sorted(shares, reverse=True) and shares[0] == 1.0 and 0.0 < shares[-1] < shares[1]
    # A floor or a swing beyond every sample fails them all.
    loose = Spec(topology=kind, gain=nominal, gain_tol=0.5, min_rin_ohms=0.0)
    assert mc.share_meeting(replace(loose, min_rin_ohms=float(mc.rin.max()) * 1.01)) == 0
    assert mc.share_meeting(replace(loose, swing_pp=float(mc.swing_pp.max()) + 0.1)) == 0


def test_each_stage_must_swing_its_share():
    """The pass test, spelled out from each stage's own figures: stage 2 swings the asked swing at the
    load and stage 1 delivers the drive for it at x (swing / |gain from x|)."""
    ch = chain("common-emitter+emitter-follower")
    mc = chain_monte_carlo(ch, networks(ch, 0.05), n=2000, seed=4)
    swing = float(np.median(mc.swing_pp))  # half the samples pass on swing
    spec = Spec(topology=ch.kind, gain=float(np.median(np.abs(mc.gain))), gain_tol=0.5, swing_pp=swing,
                min_rin_ohms=0.0)
    own = (mc.swing_pp_2 >= swing) & (mc.swing_pp_1 >= swing / np.abs(mc.gain_2))
    own &= np.abs(np.abs(mc.gain) / spec.gain - 1) <= spec.gain_tol
    own &= mc.converged_1 & mc.converged_2 & ~(mc.saturated_1 | mc.saturated_2 | mc.cutoff_1 | mc.cutoff_2)
    np.testing.assert_array_equal(mc.meeting(spec), own)
    assert 0.3 < own.mean() < 0.7


def test_networks_from_a_design_keep_each_part_and_its_tolerance():
    parts = {"R1": {"ohms": 83e3, "network": {"series": [{"line": 4, "ohms": 68e3}, {"line": 5, "ohms": 15e3}]}},
             "RC_B": {"ohms": 3.4e3, "network": {"parallel": [{"line": 6, "ohms": 6.8e3}, {"line": 6, "ohms": 6.8e3}]}},
             "CIN_B": {"farads": 1e-6, "network": {"line": 9, "farads": 1e-6}}, "Q2": {"line": 2, "part": "x"}}
    one, two = networks_from_parts(parts, {4: 0.01, 5: 0.05, 6: 0.02}.get)
    assert set(one) == {"R1"} and set(two) == {"RC"}
    assert nt.bounds(one["R1"]) == pytest.approx((68e3 * 0.99 + 15e3 * 0.95, 68e3 * 1.01 + 15e3 * 1.05))
    assert nt.bounds(two["RC"]) == pytest.approx((3.4e3 * 0.98, 3.4e3 * 1.02))


@pytest.mark.ngspice
@pytest.mark.parametrize("kind", KINDS)
def test_a_drawn_sample_matches_ngspice(kind):
    """One drawn build of each chain on its own deck in ngspice (an independent simulator), each
    transistor's card at the sample's hFE and IS, at the sample's temperature: midband gain and Rin."""
    from optimizer.chain.deck import chain_netlist
    from tests import spice

    ch = chain(kind)
    mc = chain_monte_carlo(ch, networks(ch, 0.05), n=8, seed=21)
    i = int(np.argmax(np.abs(mc.temp_c - 27.0)))  # the sample farthest from 27 °C: the temperature laws count
    built = sample_chain(ch, mc, i)
    built = replace(built, first=replace(built.first, transistor=built.first.transistor.with_beta(mc.beta_1[i])),
                    second=replace(built.second, transistor=built.second.transistor.with_beta(mc.beta_2[i])))
    deck = chain_netlist(built, {"Q1": {"line": 2}, "Q2": {"line": 3}})  # two cards: each stage's own draw
    bench = deck.replace("\n.end\n", f"\nVS src 0 DC 0 AC 1\nRS src in {ch.first.source_ohms:.9g}\n"
                                     f"RL out 0 {ch.second.load_ohms:.9g}\n"
                                     f".options temp={mc.temp_c[i]:.9g} tnom=27\n.end\n")
    res = spice.run(bench, [("ac lin 1 1e5 1e5", ["v(out)", "i(VS)"])])
    gain = complex(res[0]["v(out)"][0]).real
    rin = (-1.0 / complex(res[0]["i(VS)"][0])).real - ch.first.source_ohms
    # At 100 kHz the coupling capacitors are shorts to well under 1e-4 of the gain (f_low ≈ tens of Hz).
    assert mc.gain[i] == pytest.approx(gain, rel=1e-4)
    assert mc.rin[i] == pytest.approx(rin, rel=1e-4)
