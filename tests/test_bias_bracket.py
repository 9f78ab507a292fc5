"""The collector-current bracket that prunes common-emitter value tuples, against independent solves.

decompose.ibe_bracket bounds the root of the base loop; it must contain the root that
scipy's brentq finds on the same equation (to ~1e-15), from starved stages (VTH below
VBE) to stiff ones.  decompose.ic_bracket must contain the collector current of every
stage the full DC solve (screen.py, checked against ngspice in test_ngspice_stages)
puts at VCE ≥ vce_min and out of cut-off, whatever RC is: a bracket that missed one would prune a design
that meets the spec.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from optimizer.physics.bias import thevenin
from optimizer.search.decompose import ibe_bracket, ic_bracket
from optimizer.physics.screen import screen
from tests.test_select_oracle import qline

T = qline(30, "BC547B", 200, 450).transistor
IS_A, _, _, VT = (float(x) for x in T.at(27.0))


def _root(vth, a):
    # f(L) = a·e^L + Vt·ln(1 + e^L/IS) − VTH in L = ln x, increasing; brentq to machine precision.
    def f(lx):
        x = np.exp(lx)
        return a * x + VT * np.log1p(x / IS_A) - vth
    return float(np.exp(brentq(f, -200.0, np.log(vth / a) + 1.0, xtol=1e-15)))


def test_ibe_bracket_contains_the_root():
    rng = np.random.default_rng(11)
    n = 4000
    vth = rng.uniform(0.05, 11.5, n)
    rth = 10.0 ** rng.uniform(1, 6.5, n)
    re = np.where(rng.random(n) < 0.2, 0.0, 10.0 ** rng.uniform(0, 5, n))
    bf, k = 300.0, 1.1
    lo, hi = ibe_bracket(vth, rth, re, bf, k, IS_A, VT)
    width = []
    for i in range(n):
        a = rth[i] / bf + re[i] * (1.0 / bf + k)
        x = _root(vth[i], a)
        assert lo[i] <= x * (1 + 1e-9) and hi[i] >= x * (1 - 1e-9), (vth[i], rth[i], re[i], lo[i], x, hi[i])
        width.append((hi[i] - lo[i]) / x)
    assert np.max(width) <= 1.0001e-4  # tight as well as sound (BRACKET_WIDTH): a loose bracket prunes nothing


@pytest.mark.parametrize("bf", [1e5, 1e9])
def test_ibe_bracket_stays_sound_when_vth_and_the_diode_nearly_cancel(bf):
    # No emitter resistor and a huge hFE make a = RTH/BF tiny: VTH − Vt·ln(1 + x/IS) is then rounding
    # noise / a, which once crossed the bracket and sent NaN through log1p (a RuntimeWarning printed
    # by `design`; under this suite's filterwarnings=error it fails the test).  brentq is the oracle.
    rng = np.random.default_rng(12)
    n = 1500
    vth = rng.uniform(0.03, 1.0, n)  # starved stages, where the diode term takes nearly all of VTH
    rth = 10.0 ** rng.uniform(1, 6.5, n)
    re = np.zeros(n)
    lo, hi = ibe_bracket(vth, rth, re, bf, 1.1, IS_A, VT)
    assert np.all(np.isfinite(lo)) and np.all(np.isfinite(hi))
    for i in range(n):
        x = _root(vth[i], rth[i] / bf)
        assert lo[i] <= x * (1 + 1e-9) and hi[i] >= x * (1 - 1e-9), (vth[i], rth[i], lo[i], x, hi[i])
    ic_lo, ic_hi = ic_bracket(vth, rth, re, bf=bf, is_a=IS_A, vaf_v=T.vaf_v, vt=VT, supply_v=12.0, vce_min=1.0)
    assert np.all(np.isfinite(ic_lo)) and np.all(ic_lo <= ic_hi)


@pytest.mark.parametrize("beta", [T.hfe_min, T.hfe_max])
def test_ic_bracket_contains_the_dc_solution(beta):
    rng = np.random.default_rng(int(beta))
    n = 20000
    supply, swing = 12.0, 5.0
    vce_min = 0.2 + swing / 2  # swing.VCE_SAT_V + swing/2, as ce_tuples uses it
    r = {"R1": 10.0 ** rng.uniform(3, 6.3, n), "R2": 10.0 ** rng.uniform(2.5, 5.5, n),
         "RC": 10.0 ** rng.uniform(2, 5, n), "RE1": np.where(rng.random(n) < 0.2, 0.0, 10.0 ** rng.uniform(1, 3.5, n)),
         "RE2": np.where(rng.random(n) < 0.5, 0.0, 10.0 ** rng.uniform(1, 3.5, n))}
    s = screen("common-emitter", r, transistor=T, supply_v=supply, source_ohms=1e3, load_ohms=22e3, beta=beta)
    vth, rth = thevenin(supply, r["R1"], r["R2"])
    lo, hi = ic_bracket(vth, rth, r["RE1"] + r["RE2"], bf=float(beta), is_a=IS_A, vaf_v=T.vaf_v, vt=VT,
                        supply_v=supply, vce_min=vce_min)
    vce = s["vc"] - s["ve"]
    # The spec check rejects cut-off stages (IC < 1 µA, where leakage terms the bracket leaves out
    # are comparable to IC), so the bracket need only hold for the others.
    live = s["converged"] & ~s["cutoff"] & (vce >= vce_min)
    assert live.sum() > 2000  # enough stages in the region the bracket speaks for
    ic = s["ic"][live]
    assert np.all(ic >= lo[live]) and np.all(ic <= hi[live])
    # and it is narrow: the Early factor's range (1 + VCC/VAF over 1 − VBC/VAF) and 1 % slack each way
    k_span = (1 + supply / T.vaf_v) / (1 - 0.7 / T.vaf_v)
    assert np.median(hi[live] / lo[live]) < k_span * 1.021
