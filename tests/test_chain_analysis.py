"""The chain solver (optimizer/chain) against an independent route: each stage solved alone by the
single-stage exact solver (optimizer.physics.circuit) and the stages cascaded as linear two-ports,
H = H1,open · Zin2 / (Zin2 + Zout1) · H2 (a Thévenin source driving a load; any circuits textbook).
The stages are AC-coupled, so each stage's DC is its own; ngspice checks the chain itself in
tests/test_chain_ngspice.py."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.chain.analysis import analyze_chain
from optimizer.chain.circuit import Chain
from optimizer.chain.figures import _pick, figures, transfer
from optimizer.physics.circuit import NODES, build, operating_point, solve_small_signal
from optimizer.physics.stage import Stage
from tests.chain_designs import KINDS, chain

CORNERS = [(150.0, 150.0, 27.0), (400.0, 150.0, 0.0), (150.0, 400.0, 50.0)]
OUT, IN = NODES.index("out"), NODES.index("in")


def _alone(ch: Chain, bf1, bf2, temp):
    s1, s2 = ch.first, ch.second
    a = Stage(s1.topology, s1.resistors, {k: v for k, v in s1.capacitors.items() if k != "COUT"}, s1.supply_v,
              s1.source_ohms, float("inf"), s1.transistor.with_beta(bf1), temp)
    b = Stage(s2.topology, s2.resistors, s2.capacitors, s1.supply_v, 0.0, s2.load_ohms, s2.transistor.with_beta(bf2),
              temp)
    ca, cb = build(a), build(b)
    return (ca, operating_point(ca)), (cb, operating_point(cb))


def _cascade(ch, bf1, bf2, temp, freq=None):
    (ca, oa), (cb, ob) = _alone(ch, bf1, bf2, temp)
    h1 = solve_small_signal(ca, oa, freq_hz=freq)[:, OUT]
    z1 = solve_small_signal(ca, oa, freq_hz=freq, source=0.0, inject=("out", "0"), skip=("RL",))[:, OUT]
    z2 = solve_small_signal(cb, ob, freq_hz=freq, source=0.0, inject=("in", "0"), skip=("RS",))[:, IN]
    h2 = solve_small_signal(cb, ob, freq_hz=freq)[:, OUT]
    return h1 * z2 / (z2 + z1) * h2, (oa, ob)


@pytest.mark.parametrize("kind", KINDS)
def test_chain_matches_the_cascade_of_single_stages(kind):
    ch = chain(kind)
    f = figures(ch, CORNERS, None)
    for k, (bf1, bf2, temp) in enumerate(CORNERS):
        h, (oa, ob) = _cascade(ch, bf1, bf2, temp)
        assert f.gain[k] == pytest.approx(h[0].real, rel=1e-7)  # the DC points agree to ~1e-8 V
        # DC (both Newton solves stop within about 1e-8 V): the first stage's nodes carry the suffix 1, the
        # second's 2 (x and out are the joins).
        for node in ("base", "emit"):
            assert f.node(node + "1")[k] == pytest.approx(oa[node], abs=1e-6)
            assert f.node(node + "2")[k] == pytest.approx(ob[node], abs=1e-6)
        # The response at a few frequencies around the corners, complex.
        freq = np.array([1.0, 5.0, 20.0, 100.0])
        hf, _ = _cascade(ch, bf1, bf2, temp, freq)
        mine = transfer(_pick(f.net, k), f.op[k:k + 1], freq)[0]
        np.testing.assert_allclose(mine, hf, rtol=1e-7)
        # f_low: where the cascade's |H| is |H_mid|/√2.
        fl = f.f_low[k]
        at = np.abs(_cascade(ch, bf1, bf2, temp, np.array([fl]))[0][0])
        assert at == pytest.approx(abs(h[0]) / np.sqrt(2), rel=1e-6)


@pytest.mark.parametrize("kind", KINDS)
def test_stage_figures_agree_with_the_chain(kind):
    """Each stage's own report (as the chain sees it) multiplies back to the chain's gain, and the
    chain's Rin is the first stage's loaded by the second's input resistance."""
    r = analyze_chain(chain(kind), 2.0)
    g1, g2 = (s["predicted"]["gain"] for s in r.stages)
    assert g1 * g2 == pytest.approx(r.predicted["gain"], rel=1e-9)
    assert r.reports[0].predicted["gain"] == pytest.approx(g1, rel=1e-6)
    assert r.predicted["rin"] == pytest.approx(r.reports[0].predicted["rin"], rel=1e-6)
    assert r.predicted["rout"] == pytest.approx(r.reports[1].predicted["rout"], rel=1e-6)
    assert 0 < r.predicted["thd"] < 0.05
    assert [s["kind"] for s in r.stages] == kind.split("+")
    assert all(p.endswith("_B") or p == "Q2" for p in r.stages[1]["positions"])


def test_a_follower_first_has_high_input_resistance_and_the_follower_last_low_output():
    """What each chain is for (common practice): a follower in front raises Rin far above a
    common emitter's; a follower behind lowers Rout far below the collector resistor."""
    ef_ce = analyze_chain(chain("emitter-follower+common-emitter")).predicted
    ce_ce = analyze_chain(chain("common-emitter+common-emitter")).predicted
    ce_ef = analyze_chain(chain("common-emitter+emitter-follower")).predicted
    assert ef_ce["rin"] > 10 * ce_ce["rin"]
    assert ce_ef["rout"] < ce_ce["rout"] / 10
