"""The DC operating point: handbook divider formula, an independent root-find, model derivatives."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.physics import bias
from optimizer.physics.screen import screen
from optimizer.physics.stage import RESISTOR_POSITIONS
from optimizer.physics.transistor import Transistor, terminal_currents
from tests.screen_oracle import Oracle

Q = Transistor()


def random_stages(topology, n, seed):
    """Plausible random stages (log-uniform values) for the oracle comparisons."""
    rng = np.random.default_rng(seed)

    def lu(lo, hi):
        return float(np.exp(rng.uniform(np.log(lo), np.log(hi))))

    out = []
    for _ in range(n):
        if topology == "common-emitter":
            r = {"R1": lu(10e3, 470e3), "R2": lu(2.2e3, 100e3), "RC": lu(1e3, 22e3),
                 "RE1": lu(10, 1e3), "RE2": lu(100, 4.7e3)}
        elif topology == "emitter-follower":
            r = {"R1": lu(10e3, 220e3), "R2": lu(10e3, 220e3), "RE": lu(470, 10e3)}
        else:
            r = {"RB": lu(47e3, 1e6), "RC": lu(1e3, 10e3), "RE1": lu(10, 470), "RE2": lu(10, 1e3)}
        out.append(r)
    return out


def test_re_prime_at_one_milliamp_is_about_26_ohms():
    # Facts of the trade (common practice, no source): re' = Vt/IC ≈ 25–26 Ω at 1 mA, room temperature.
    # A stage biased to IC = 1 mA: VTH = 1.65 V, RE = 1 kΩ, stiff divider.
    op = screen("common-emitter", {"R1": 8.2e3, "R2": 1.5e3, "RC": 4.7e3, "RE1": 0.0, "RE2": 1e3},
                transistor=Q, supply_v=12.0, source_ohms=0.0, load_ohms=np.inf)
    assert 0.8e-3 < float(op["ic"]) < 1.2e-3
    re_1ma = float(op["re_prime"]) * float(op["ic"]) / 1e-3
    assert 25.0 <= re_1ma <= 26.5
    # and the exact model's 1/gm agrees with Vt/IC to the Early factor (a few per cent)
    assert float(1 / op["gm"]) == pytest.approx(float(op["re_prime"]), rel=0.05)


@pytest.mark.parametrize("beta", [1e4, 1e5])
def test_divider_bias_matches_handbook_formula(beta):
    # Handbook divider-bias analysis (Sedra/Smith, Horowitz & Hill; from memory):
    # IC ≈ α(VTH − VBE)/(RE + RTH/(β+1)), with VBE taken from the solved point.
    r = {"R1": 56e3, "R2": 12e3, "RC": 3.3e3, "RE1": 150.0, "RE2": 1e3}
    q = Transistor(vaf_v=np.inf)
    op = screen("common-emitter", r, transistor=q, supply_v=15.0, source_ohms=0.0, load_ohms=np.inf, beta=beta)
    vth, rth = 15.0 * 12e3 / 68e3, 56e3 * 12e3 / 68e3
    re = 1150.0
    ie = (vth - float(op["vbe"])) / (re + rth / (beta + 1))
    assert float(op["ie"]) == pytest.approx(ie, rel=1e-9)  # exact with VBE known
    # and with VBE = 0.65 V (the model's IS sets 0.65 V at 1 mA) within a few per cent
    assert float(op["ic"]) == pytest.approx((vth - 0.65) / re, rel=0.05)


@pytest.mark.parametrize("topology", ["common-emitter", "emitter-follower", "collector-feedback"])
def test_newton_agrees_with_independent_root_find(topology):
    # Independent oracle: nested scipy.optimize.brentq on the node equations (tests/screen_oracle.py).
    stages = random_stages(topology, 12, seed=1)
    r = {k: np.array([s[k] for s in stages]) for k in stages[0]}
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=1e3, load_ohms=np.inf)
    assert op["converged"].all()
    for i, s in enumerate(stages):
        ref = Oracle(topology, s).dc()
        for key in ("ic", "ib", "vb", "vc", "ve"):
            assert float(op[key][i]) == pytest.approx(ref[key], rel=1e-7, abs=1e-9), (key, s)
        # solved to |ΔV| < 1e-9 V in both junction voltages
        assert abs(float(op["vbe"][i]) - ref["vbe"]) < 1e-9
        assert abs(float(op["vb"][i] - op["vc"][i]) - ref["vbc"]) < 1e-9


def test_converges_for_saturated_and_cut_off_candidates():
    # Extreme candidates: hard saturation (tiny R1), cut-off (tiny R2), shorts and opens.
    r = {"R1": np.array([100.0, 1e6, 1e3, 4.7e3, 1e7]), "R2": np.array([1e6, 100.0, 1e6, np.inf, 1e3]),
         "RC": np.array([1e5, 1e3, 10.0, 1e3, 1e3]), "RE1": np.array([0.0, 0.0, 0.0, 10.0, 0.0]),
         "RE2": np.array([0.0, 1e3, 0.0, 0.0, 0.0])}
    op = screen("common-emitter", r, transistor=Q, supply_v=12.0, source_ohms=1e3, load_ohms=1e4)
    assert op["converged"].all()
    assert op["saturated"][0] and op["saturated"][3]
    assert op["cutoff"][1] and op["cutoff"][4]
    for i in (0, 1, 2):
        ref = Oracle("common-emitter", {k: float(v[i]) for k, v in r.items()}).dc()
        assert float(op["vc"][i]) == pytest.approx(ref["vc"], rel=1e-6, abs=1e-9)
        assert abs(float(op["vbe"][i]) - ref["vbe"]) < 1e-9


@pytest.mark.parametrize("topology", ["common-emitter", "emitter-follower", "collector-feedback"])
def test_converges_over_wide_random_candidates(topology):
    # Values far outside sensible design (10 Ω–100 MΩ, 0.5–60 V, −55…150 °C, β 5–2000, IS ×0.01…100):
    # every candidate converges, and Kirchhoff's laws hold at the solution.
    rng = np.random.default_rng(7)
    n = 50_000

    def lu(lo, hi):
        return np.exp(rng.uniform(np.log(lo), np.log(hi), n))

    def optional(v):
        return np.where(rng.random(n) < 0.3, 0.0, v)

    r = {"R1": lu(10, 1e8), "R2": lu(10, 1e8), "RC": lu(1, 1e6), "RE1": optional(lu(1, 1e5)),
         "RE2": optional(lu(1, 1e5)), "RE": lu(1, 1e6), "RB": lu(10, 1e8)}
    r = {k: v for k, v in r.items() if k in RESISTOR_POSITIONS[topology]}
    vcc = rng.uniform(0.5, 60, n)
    op = screen(topology, r, transistor=Q, supply_v=vcc, source_ohms=lu(1e-3, 1e6), load_ohms=lu(1, 1e9),
                temp_c=rng.uniform(-55, 150, n), beta=rng.uniform(5, 2000, n), is_a=Q.is_a * lu(0.01, 100))
    assert op["converged"].all()
    assert all(np.isfinite(v).all() for k, v in op.items() if k not in ("ro", "re_prime"))
    re = r.get("RE", 0.0) + r.get("RE1", 0.0) + r.get("RE2", 0.0)
    np.testing.assert_allclose(op["ve"], op["ie"] * re, rtol=1e-9, atol=1e-9)  # emitter: Ohm's law
    if topology == "collector-feedback":
        np.testing.assert_allclose(vcc - op["vc"], r["RC"] * op["ie"], rtol=1e-9, atol=1e-9)
        np.testing.assert_allclose((op["vc"] - op["vb"]) / r["RB"], op["ib"], rtol=1e-6, atol=1e-12)
    else:
        if topology == "common-emitter":
            np.testing.assert_allclose(vcc - op["vc"], r["RC"] * op["ic"], rtol=1e-9, atol=1e-9)
        i_div = (vcc - op["vb"]) / r["R1"] - op["vb"] / r["R2"]
        np.testing.assert_allclose(i_div, op["ib"], rtol=1e-6, atol=1e-12)


def test_junction_derivatives_match_finite_differences():
    # Numerical derivative of terminal_currents (the shared model) — independent of the analytic formulas.
    is_a, bf, br, vt = (float(x) for x in Q.at(40.0))
    h = 1e-7
    for vbe, vbc in [(0.65, -5.0), (0.7, 0.55), (0.3, -1.0), (0.72, 0.68)]:
        y = bias.junction_derivatives(vbe, vbc, is_a, bf, br, Q.vaf_v, vt)
        ip, bp = terminal_currents(vbe + h, vbc, is_a, bf, br, Q.vaf_v, vt)
        im, bm = terminal_currents(vbe - h, vbc, is_a, bf, br, Q.vaf_v, vt)
        jp, cp = terminal_currents(vbe, vbc + h, is_a, bf, br, Q.vaf_v, vt)
        jm, cm = terminal_currents(vbe, vbc - h, is_a, bf, br, Q.vaf_v, vt)
        num = ((bp - bm) / (2 * h), (cp - cm) / (2 * h), (ip - im) / (2 * h), (jp - jm) / (2 * h))
        for a, b in zip(y, num):
            assert a == pytest.approx(b, rel=1e-5, abs=1e-15)
        # the fused inner-loop evaluation is the same model
        k = (1 / vt, is_a, is_a / vt, 1 / bf, 1 / br, 1 / Q.vaf_v)
        ic, ib, *yy = bias._model_step(np.array(vbe), np.array(vbc), k)
        ic0, ib0 = terminal_currents(vbe, vbc, is_a, bf, br, Q.vaf_v, vt)
        assert ic == pytest.approx(ic0, rel=1e-9, abs=1e-18) and ib == pytest.approx(ib0, rel=1e-9, abs=1e-18)
        np.testing.assert_allclose(yy, y, rtol=1e-12)
