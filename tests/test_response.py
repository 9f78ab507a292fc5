"""Small-signal figures of the exact solver against hand formulas and brute force."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from optimizer.physics.analysis import analyze
from optimizer.physics.circuit import build, junction, operating_point
from optimizer.physics.response import capacitor_corners, lower_corner, midband, transfer
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor, thermal_voltage


def ce_stage(**kw) -> Stage:
    r = {"R1": 47e3, "R2": 10e3, "RC": 3.9e3, "RE1": 330, "RE2": 680}
    r.update(kw.pop("r", {}))
    r = {k: v for k, v in r.items() if v}
    caps = kw.pop("caps", {"CIN": 10e-6, "COUT": 10e-6, "CE": 470e-6})
    return Stage("common-emitter", r, caps, supply_v=12.0, source_ohms=kw.pop("rs", 600.0),
                 load_ohms=kw.pop("rl", 47e3), transistor=Transistor(bf=kw.pop("bf", 250.0), vaf_v=kw.pop("vaf", 100.0)), **kw)


def test_junction_derivatives_match_finite_differences():
    # Brute force: central differences of the model's own currents (independent of the analytic terms).
    c = build(ce_stage())
    vbe, vbc, h = 0.66, -4.0, 1e-6
    _, _, a1, a2, b1, b2 = junction(c, vbe, vbc)
    for exact, f, dx in ((a1, 0, (h, 0)), (a2, 0, (0, h)), (b1, 1, (h, 0)), (b2, 1, (0, h))):
        up = junction(c, vbe + dx[0], vbc + dx[1])[f]
        dn = junction(c, vbe - dx[0], vbc - dx[1])[f]
        assert exact == pytest.approx((up - dn) / (2 * h), rel=1e-5, abs=1e-15)


def test_operating_point_matches_a_one_equation_hand_solve():
    # Handbook bias loop (Thevenin divider, no Early effect): VTH − IB·RTH − VBE − IE·RE = 0 with
    # IC = IS·(e^(VBE/Vt) − 1), IB = IC/β; solved here by bisection, independently of the nodal solver.
    st = ce_stage(vaf=math.inf)
    c = build(st)
    is_a, bf, _, _, vt = c.model
    vth, rth = 12.0 * 10e3 / 57e3, 47e3 * 10e3 / 57e3
    re = 330 + 680

    def loop(vbe):
        ic = is_a * math.expm1(vbe / vt)
        return vth - ic / bf * rth - vbe - ic * (1 + 1 / bf) * re

    vbe = brentq(loop, 0.3, 0.9, xtol=1e-14)
    ic = is_a * math.expm1(vbe / vt)
    op = operating_point(c)
    assert op["base"] - op["emit"] == pytest.approx(vbe, abs=1e-9)
    assert op["coll"] == pytest.approx(12.0 - ic * 3.9e3, abs=1e-6)


def test_gain_close_to_the_textbook_formula_at_high_beta():
    # Handbook: A ≈ −(RC‖RL)/(re' + RE1) · Rin/(Rin + RS), re' = Vt/IC; within a few % when β is large.
    st = ce_stage(bf=800.0, vaf=math.inf)
    rep = analyze(st)
    rc_rl = 1 / (1 / 3.9e3 + 1 / 47e3)
    re_prime = float(thermal_voltage(27.0)) / rep.predicted["ic"]
    rin = rep.predicted["rin"]
    hand = -rc_rl / (re_prime + 330) * rin / (rin + 600)
    assert rep.predicted["gain"] == pytest.approx(hand, rel=0.02)


def test_bypassing_half_of_re_roughly_doubles_the_gain():
    # Common practice, no source: with RE split in equal halves and one half bypassed, the
    # gain roughly doubles (exactly 2× only when re' is negligible against RE).
    whole = analyze(ce_stage(r={"RE1": 1000, "RE2": None}, caps={"CIN": 10e-6, "COUT": 10e-6})).predicted
    half = analyze(ce_stage(r={"RE1": 500, "RE2": 500})).predicted
    assert 1.7 < half["gain"] / whole["gain"] < 2.1


def test_single_capacitor_corner_is_the_rc_high_pass_formula():
    # Handbook first-order high-pass: f = 1/(2π R C).  Only CIN is fitted (COUT absent = direct
    # coupling, CE absent = RE2 unbypassed), so the corner is 1/(2π CIN (RS + Rin)).
    st = ce_stage(caps={"CIN": 1e-6})
    c = build(st)
    op = operating_point(c)
    mid = midband(c, op)
    expected = 1 / (2 * math.pi * 1e-6 * (600 + mid.rin_ohms))
    assert lower_corner(c, op, mid.gain) == pytest.approx(expected, rel=1e-6)


def test_f_low_is_the_half_power_point():
    # Definition of the −3 dB corner: |H(f_low)| = |H_mid|/√2, and |H| is below it just under.
    st = ce_stage(caps={"CIN": 2.2e-6, "COUT": 1e-6, "CE": 100e-6})
    c = build(st)
    op = operating_point(c)
    g = midband(c, op).gain
    f = lower_corner(c, op, g)
    h = np.abs(transfer(c, op, [f, 0.99 * f, 1e6]))
    assert h[0] == pytest.approx(abs(g) / math.sqrt(2), rel=1e-7)
    assert h[1] < h[0]
    assert h[2] == pytest.approx(abs(g), rel=1e-4)  # no upper roll-off in this model


def test_emitter_bypass_corner_in_the_handbook_ballpark():
    # Handbook formula (from memory): CE sees RE2 ‖ (RE1 + re' + (RS‖R1‖R2)/β).
    st = ce_stage()
    c = build(st)
    op = operating_point(c)
    rep = analyze(st)
    re_prime = rep.approximations["re_prime"]
    rth = 1 / (1 / 600 + 1 / 47e3 + 1 / 10e3)
    seen = 1 / (1 / 680 + 1 / (330 + re_prime + rth / 250))
    est = 1 / (2 * math.pi * 470e-6 * seen)
    assert capacitor_corners(c, op)["CE"]["f_hz"] == pytest.approx(est, rel=0.15)


def test_follower_gain_below_one_and_low_output_resistance():
    # Handbook emitter follower: A ≈ (RE‖RL)/(RE‖RL + re'), Rout ≈ re' + (RS‖RTH)/β.
    st = Stage("emitter-follower", {"R1": 33e3, "R2": 33e3, "RE": 2.2e3}, {"CIN": 10e-6, "COUT": 47e-6},
               12.0, 1e3, 10e3, Transistor(bf=300.0, vaf_v=math.inf))
    rep = analyze(st)
    p, re_prime = rep.predicted, rep.approximations["re_prime"]
    r_ac = 1 / (1 / 2.2e3 + 1 / 10e3)
    assert 0 < p["gain"] < 1
    rin = p["rin"]
    assert p["gain"] == pytest.approx(r_ac / (r_ac + re_prime) * rin / (rin + 1e3), rel=0.01)
    rth = 1 / (1 / 1e3 + 2 / 33e3)
    assert p["rout"] == pytest.approx(1 / (1 / 2.2e3 + 1 / (re_prime + rth / 300)), rel=0.03)
