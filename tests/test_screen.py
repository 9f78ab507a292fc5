"""The screen's midband small signal: facts of the trade and a finite-difference oracle."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.physics.screen import screen
from optimizer.physics.transistor import Transistor
from tests.screen_oracle import Oracle
from tests.test_bias import random_stages

Q = Transistor()
BIG_BETA = Transistor(bf=1e5)


def ce(r, **kw):
    args = {"transistor": Q, "supply_v": 12.0, "source_ohms": 0.0, "load_ohms": np.inf} | kw
    return screen("common-emitter", r, **args)


@pytest.mark.parametrize("re1", [330.0, 680.0, 1.5e3])
def test_unbypassed_emitter_resistor_sets_gain_to_rc_over_re(re1):
    # Facts of the trade (common practice, no source): with IC ≥ 1 mA and RE of a few hundred
    # ohms or more, A ≈ −RC/RE within a few per cent (RL = ∞, RS = 0, large β).
    # Bias for IC ≈ 1.5 mA: VE = IC·RE, VB = VE + 0.67 V from a 10 kΩ/R1 divider on 15 V, RC = 3·RE.
    rc, ie = 3.0 * re1, 1.5e-3
    vb = ie * re1 + 0.67
    r = {"R1": 10e3 * (15.0 - vb) / vb, "R2": 10e3, "RC": rc, "RE1": re1, "RE2": 0.0}
    op = ce(r, transistor=BIG_BETA, supply_v=15.0)
    assert not op["saturated"]
    assert float(op["ic"]) >= 1e-3
    assert float(op["gain"]) == pytest.approx(-rc / re1, rel=0.08)  # "within a few per cent": 8 % covers re'/RE at 330 Ω
    assert float(op["gain"]) < 0


def test_bypassing_half_of_re_roughly_doubles_the_gain():
    # Facts of the trade (common practice, no source): the gain follows the unbypassed part.
    split = ce({"R1": 33e3, "R2": 8.2e3, "RC": 3.3e3, "RE1": 500.0, "RE2": 500.0})
    whole = ce({"R1": 33e3, "R2": 8.2e3, "RC": 3.3e3, "RE1": 1000.0, "RE2": 0.0})
    assert float(split["ic"]) == pytest.approx(float(whole["ic"]), rel=1e-9)  # same DC
    assert float(split["gain"] / whole["gain"]) == pytest.approx(2.0, rel=0.1)
    # and unbypassed (no CE) it is the whole-RE gain again
    open_ce = ce({"R1": 33e3, "R2": 8.2e3, "RC": 3.3e3, "RE1": 500.0, "RE2": 500.0}, bypassed=False)
    assert float(open_ce["gain"]) == pytest.approx(float(whole["gain"]), rel=1e-9)


def test_emitter_follower_gain_is_just_below_one():
    # Facts of the trade (common practice, no source): a follower's gain is just below 1.
    op = screen("emitter-follower", {"R1": 47e3, "R2": 47e3, "RE": 4.7e3}, transistor=Q,
                supply_v=12.0, source_ohms=0.0, load_ohms=np.inf)
    assert 0.97 < float(op["gain"]) < 1.0
    assert float(op["rout"]) < 50.0  # low output resistance (≈ re' here)


def test_textbook_estimates_are_close_to_the_exact_model():
    # Textbook CE formulas (Sedra/Smith, from memory) against the exact nodal solve.
    r = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}
    op = ce(r, load_ohms=22e3)
    assert float(op["gain_textbook"]) == pytest.approx(float(op["gain"]), rel=0.1)
    assert float(op["rin_textbook"]) == pytest.approx(float(op["rin"]), rel=0.05)
    assert float(op["ro"]) == pytest.approx((Q.vaf_v + float(op["vce"])) / float(op["ic"]), rel=0.1)


@pytest.mark.parametrize("topology", ["common-emitter", "emitter-follower", "collector-feedback"])
def test_small_signal_matches_finite_differences(topology):
    # Independent oracle: perturb the source EMF (and a test current at the output) in a
    # large-signal solve with the capacitors held at their DC charge (tests/screen_oracle.py).
    stages = random_stages(topology, 6, seed=3)
    r = {k: np.array([s[k] for s in stages]) for k in stages[0]}
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=600.0, load_ohms=10e3)
    for i, s in enumerate(stages):
        ref = Oracle(topology, s, source_ohms=600.0, load_ohms=10e3).small_signal()
        for key in ("gain", "rin", "rout"):
            assert float(op[key][i]) == pytest.approx(ref[key], rel=1e-5), (key, s)


def test_scalars_give_0d_arrays_and_arrays_broadcast():
    r = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}
    op = ce(r)
    assert all(isinstance(v, np.ndarray) and v.shape == () for v in op.values())
    grid = ce({**r, "RC": np.array([[3.3e3], [4.7e3]]), "RE1": np.array([100.0, 220.0, 470.0])})
    assert grid["gain"].shape == (2, 3)
    assert float(grid["gain"][1, 1]) == pytest.approx(float(op["gain"]), rel=1e-12)


def test_absent_positions_and_bad_input():
    r = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE2": 1e3}  # RE1 absent = short
    assert float(ce(r)["ic"]) == pytest.approx(float(ce({**r, "RE1": 0.0})["ic"]))
    with pytest.raises(ValueError, match="RC"):
        ce({"R1": 47e3, "R2": 10e3})
    with pytest.raises(ValueError, match="RB"):
        ce({**r, "RB": 1e5})
    with pytest.raises(ValueError, match="topology"):
        screen("cascode", r, transistor=Q, supply_v=12, source_ohms=0, load_ohms=np.inf)


def test_dissipation_adds_up_to_the_supply_power():
    # Conservation of energy: VCC·I_supply = Σ resistor powers + transistor power.
    r = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}
    op = ce(r)
    total = sum(float(v) for k, v in op.items() if k.startswith("p_"))
    assert total == pytest.approx(12.0 * float(op["i_supply"]), rel=1e-9)
    for topology, rr in (("emitter-follower", {"R1": 22e3, "R2": 33e3, "RE": 2.2e3}),
                         ("collector-feedback", {"RB": 220e3, "RC": 4.7e3, "RE1": 100.0, "RE2": 330.0})):
        op = screen(topology, rr, transistor=Q, supply_v=9.0, source_ohms=0.0, load_ohms=np.inf)
        total = sum(float(v) for k, v in op.items() if k.startswith("p_"))
        assert total == pytest.approx(9.0 * float(op["i_supply"]), rel=1e-9)
