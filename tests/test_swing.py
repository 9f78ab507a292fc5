"""Swing from the AC load line against a brute-force large-signal sweep of the same model."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.physics.screen import screen
from optimizer.physics.transistor import Transistor
from tests.screen_oracle import Oracle

Q = Transistor()
STAGES = [
    ("common-emitter", {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}, 22e3),
    ("common-emitter", {"R1": 39e3, "R2": 6.8e3, "RC": 6.8e3, "RE1": 0.0, "RE2": 1.2e3}, np.inf),
    ("common-emitter", {"R1": 22e3, "R2": 10e3, "RC": 2.2e3, "RE1": 470.0, "RE2": 470.0}, 4.7e3),
    ("emitter-follower", {"R1": 22e3, "R2": 33e3, "RE": 2.2e3}, 22e3),
    ("emitter-follower", {"R1": 47e3, "R2": 22e3, "RE": 1e3}, 470.0),
    ("collector-feedback", {"RB": 220e3, "RC": 4.7e3, "RE1": 100.0, "RE2": 0.0}, 22e3),
    ("collector-feedback", {"RB": 470e3, "RC": 4.7e3, "RE1": 100.0, "RE2": 1e3}, np.inf),
]


@pytest.mark.parametrize(("topology", "r", "rl"), STAGES)
def test_swing_matches_brute_force_sweep(topology, r, rl):
    # Independent oracle: drive the source EMF both ways in the held-capacitor circuit until
    # VCE < 0.2 V or IC < 1 % of its bias (tests/screen_oracle.py), read the load's excursion.
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=600.0, load_ohms=rl)
    up, down = Oracle(topology, r, source_ohms=600.0, load_ohms=rl).swing()
    # The sweep stops at 1 % of IC, i.e. 99 % of the way to cut-off; the saturation edge is
    # the same criterion as the formula's.  3 % covers the base moving under collector feedback.
    cut_is_up = topology != "emitter-follower"
    cut, sat = (up, down) if cut_is_up else (down, up)
    f_cut, f_sat = (op["swing_up"], op["swing_down"]) if cut_is_up else (op["swing_down"], op["swing_up"])
    assert float(f_cut) * 0.99 == pytest.approx(cut, rel=0.02)
    assert float(f_sat) == pytest.approx(sat, rel=0.02)
    assert float(op["swing_pp"]) == pytest.approx(2 * min(float(op["swing_up"]), float(op["swing_down"])))


def test_saturated_or_cut_off_stage_has_no_swing():
    op = screen("common-emitter", {"R1": np.array([1e3, 1e6]), "R2": np.array([1e6, 1e3]), "RC": 4.7e3,
                                   "RE1": 100.0, "RE2": 0.0},
                transistor=Q, supply_v=12.0, source_ohms=0.0, load_ohms=np.inf)
    assert op["saturated"][0] and op["cutoff"][1]
    assert op["swing_pp"][0] == 0.0 and op["swing_pp"][1] < 1e-3


def test_swing_rises_with_a_lighter_load():
    # AC load line (common practice, no source): a heavier load (smaller RL) flattens the AC
    # load line and cuts the swing toward cut-off.
    r = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}
    op = screen("common-emitter", r, transistor=Q, supply_v=12.0, source_ohms=0.0,
                load_ohms=np.array([1e3, 4.7e3, 1e6]))
    assert np.all(np.diff(op["swing_up"]) > 0)
