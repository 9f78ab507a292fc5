"""The vectorised held-capacitor transfer curve against the independent node-equation solve."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.physics.largesignal import transfer
from optimizer.physics.screen import screen
from optimizer.physics.transistor import Transistor
from tests.screen_oracle import Oracle
from tests.test_swing import STAGES

Q = Transistor()


@pytest.mark.parametrize(("topology", "r", "rl"), STAGES)
@pytest.mark.parametrize("rs", [0.0, 600.0])
def test_transfer_matches_node_equations(topology, r, rl, rs):
    # Independent oracle: scipy.optimize.root on the held-capacitor node equations
    # (tests/screen_oracle.py), from small signal to hard clipping on both sides.
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=rs, load_ohms=rl)
    # Drive well past both clipping edges.  With RS = 0 the EMF is forced onto the base, so
    # overdrive only a little: beyond, the base current runs to amperes and the follower's
    # base is pushed above the supply.
    edge = max(float(op["swing_up"]), float(op["swing_down"])) / abs(float(op["gain"]))
    if rs:
        reach = 1.1 * edge + 0.3
    else:
        reach = edge + (0.0 if topology == "emitter-follower" else 0.1)
    emf = np.linspace(-reach, reach, 41)
    tr = transfer(topology, r, transistor=Q, supply_v=12.0, source_ohms=rs, load_ohms=rl, op=op, emf_v=emf)
    assert tr["converged"].all()
    oracle = Oracle(topology, r, source_ohms=rs, load_ohms=rl)
    o = oracle.out_node()
    q = oracle.dc()
    guess = None
    for i in np.argsort(np.abs(emf)):  # outward from the bias point, each solve starting from the last
        s = oracle.signal(emf[i], guess=guess)
        guess = s["x"]
        assert float(tr["v_out"][i]) == pytest.approx(s[o] - q[o], abs=1e-6)
    # the small-signal slope at the bias point is the screen's gain
    d = 1e-5
    slope = transfer(topology, r, transistor=Q, supply_v=12.0, source_ohms=rs, load_ohms=rl, op=op,
                     emf_v=np.array([-d, d]))["v_out"]
    assert (slope[1] - slope[0]) / (2 * d) == pytest.approx(float(op["gain"]), rel=1e-5)


@pytest.mark.parametrize(("topology", "r", "rl"), STAGES)
def test_transfer_clips_where_the_swing_formulas_say(topology, r, rl):
    # The AC load line's limits on the transfer curve: sweep the EMF finely both ways and read
    # the output where VCE first falls below 0.2 V or IC below 1 % of its bias.
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=600.0, load_ohms=rl)
    emf = np.linspace(0.0, 1.5 * 12.0 / abs(float(op["gain"])) + 0.3, 20001)
    edges = []
    for sign in (1.0, -1.0):
        tr = transfer(topology, r, transistor=Q, supply_v=12.0, source_ohms=600.0, load_ohms=rl, op=op,
                      emf_v=sign * emf)
        clipped = (tr["vce"] < 0.2) | (tr["ic"] < 0.01 * float(op["ic"]))
        first = int(np.argmax(clipped))
        assert clipped[first], "the sweep never clipped"
        edges.append(float(tr["v_out"][first - 1]))
    up = max(edges)
    down = -min(edges)
    cut, sat = (up, down) if topology != "emitter-follower" else (down, up)
    f_cut, f_sat = ((op["swing_up"], op["swing_down"]) if topology != "emitter-follower"
                    else (op["swing_down"], op["swing_up"]))
    assert 0.99 * float(f_cut) == pytest.approx(cut, rel=0.02)  # 1 % of IC is 99 % of the way
    assert float(f_sat) == pytest.approx(sat, rel=0.02)
