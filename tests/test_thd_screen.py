"""The fast THD the search screens with (thd_screen.py) against the exact distortion analysis.

The reference is `distortion.distortion`: the full nodal solver, 256 points per period and the
source amplitude solved to 1e-6 of the swing; the ngspice suites hold that one to `.four`
(tests/test_ngspice_stages.py).  The search trusts the fast figure up to feasible.THD_SAFETY, so
it must never read more than that below the exact one where THD is near a limit (0.1 … 5 %).
"""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.physics.distortion import distortion
from optimizer.search.feasible import THD_SAFETY
from optimizer.physics.screen import screen
from optimizer.physics.stage import COLLECTOR_FEEDBACK, COMMON_EMITTER, EMITTER_FOLLOWER, Stage
from optimizer.physics.thd_screen import thd_at_swing
from optimizer.physics.transistor import Transistor

RNG = np.random.default_rng(20261202)


def _random_stage(topology):
    e12 = np.array([1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2])  # IEC 60063 E12
    pick = lambda lo, hi: float(RNG.choice(e12) * 10 ** RNG.integers(lo, hi))  # noqa: E731
    if topology == COMMON_EMITTER:
        r = {"R1": pick(4, 6), "R2": pick(3, 5), "RC": pick(3, 5), "RE1": pick(1, 3), "RE2": pick(2, 4)}
    elif topology == EMITTER_FOLLOWER:
        r = {"R1": pick(4, 6), "R2": pick(4, 6), "RE": pick(3, 5)}
    else:
        r = {"RB": pick(5, 6), "RC": pick(3, 5), "RE1": pick(1, 3), "RE2": pick(2, 4)}
    return r


def _cases(n):
    out = []
    while len(out) < n:
        topology = [COMMON_EMITTER, EMITTER_FOLLOWER, COLLECTOR_FEEDBACK][len(out) % 3]
        r = _random_stage(topology)
        beta, temp = float(RNG.choice([100.0, 250.0, 450.0])), float(RNG.choice([0.0, 27.0, 50.0]))
        swing = float(RNG.choice([0.5, 1.0, 2.0, 4.0]))
        t = Transistor()
        op = screen(topology, {k: np.array([v]) for k, v in r.items()}, transistor=t, supply_v=12.0,
                    source_ohms=1e3, load_ohms=22e3, beta=beta, temp_c=temp)
        if not (op["converged"][0] and not op["saturated"][0] and not op["cutoff"][0]
                and op["swing_pp"][0] > 1.2 * swing):
            continue
        out.append((topology, r, beta, temp, swing, op))
    return out


@pytest.mark.parametrize("case", _cases(24), ids=lambda c: f"{c[0]}-b{c[2]:g}-t{c[3]:g}-s{c[4]:g}")
def test_fast_thd_tracks_the_exact_analysis(case):
    topology, r, beta, temp, swing, op = case
    t = Transistor()
    fast = float(thd_at_swing(topology, {k: np.array([v]) for k, v in r.items()}, op, transistor=t, beta=beta,
                              temp_c=temp, supply_v=12.0, source_ohms=1e3, load_ohms=22e3, swing_pp=swing)[0])
    caps = {"CIN": 1e-3, "COUT": 1e-3, **({"CE": 1e-2} if r.get("RE2") else {})}
    exact = distortion(Stage(topology, r, caps, 12.0, 1e3, 22e3, t.with_beta(beta), temp), swing)
    if not exact.reached or exact.clips or exact.thd > 0.05:
        pytest.skip("outside the range the search decides in (clipping or above 5 % THD)")
    assert fast >= THD_SAFETY * exact.thd  # never read so low that the search's margin is gone
    assert fast == pytest.approx(exact.thd, rel=0.01, abs=2e-6)


def test_many_candidates_at_once_equal_one_at_a_time():
    t = Transistor()
    cases = _cases(9)
    for topology in (COMMON_EMITTER, EMITTER_FOLLOWER, COLLECTOR_FEEDBACK):
        mine = [c for c in cases if c[0] == topology][:3]
        beta, temp, swing = mine[0][2], mine[0][3], 1.0
        r = {k: np.array([c[1][k] for c in mine]) for k in mine[0][1]}
        op = screen(topology, r, transistor=t, supply_v=12.0, source_ohms=1e3, load_ohms=22e3, beta=beta,
                    temp_c=temp)
        together = thd_at_swing(topology, r, op, transistor=t, beta=beta, temp_c=temp, supply_v=12.0,
                                source_ohms=1e3, load_ohms=22e3, swing_pp=swing)
        for i in range(len(mine)):
            one = {k: v[i:i + 1] for k, v in r.items()}
            op1 = {k: np.asarray(v)[i:i + 1] if np.ndim(v) else v for k, v in op.items()}
            alone = thd_at_swing(topology, one, op1, transistor=t, beta=beta, temp_c=temp, supply_v=12.0,
                                 source_ohms=1e3, load_ohms=22e3, swing_pp=swing)
            assert alone[0] == pytest.approx(together[i], rel=1e-9, abs=1e-12)
