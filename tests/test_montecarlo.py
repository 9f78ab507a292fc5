"""Monte Carlo against the vertex worst case, seeded; the model's temperature laws."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.parts import network_tree as nt
from optimizer.physics.montecarlo import monte_carlo, worst_case
from optimizer.spec import Spec
from optimizer.physics.transistor import Transistor, beta_at, saturation_current, thermal_voltage

Q = Transistor(hfe_min=100.0, hfe_max=400.0)
NETWORKS = {
    "R1": nt.Series((nt.Leaf(39e3, 0.05, 1), nt.Leaf(8.2e3, 0.05, 2))),
    "R2": nt.Leaf(10e3, 0.01, 3),
    "RC": nt.Parallel((nt.Leaf(10e3, 0.05, 4), nt.Leaf(10e3, 0.05, 4))),
    "RE1": nt.Leaf(220.0, 0.05, 5),
    "RE2": nt.Leaf(820.0, 0.1, 6),
}
COMMON = {"transistor": Q, "supply_v": 12.0, "source_ohms": 600.0, "load_ohms": 22e3, "temp_range_c": (0.0, 50.0)}


def test_vbe_falls_about_2mv_per_degree_and_beta_rises():
    # Facts of the trade (common practice, no source): VBE at fixed IC drifts ≈ −2 mV/°C, β rises with T.
    ic = 1e-3

    def vbe(t):
        return float(thermal_voltage(t) * np.log1p(ic / saturation_current(Q.is_a, t, Q.xti, Q.eg_ev)))

    slope = (vbe(50.0) - vbe(0.0)) / 50.0
    assert -2.5e-3 < slope < -1.5e-3
    assert beta_at(200.0, 50.0) > 200.0 > beta_at(200.0, 0.0)


def test_seeded_runs_repeat_and_seeds_differ():
    a = monte_carlo("common-emitter", NETWORKS, n=2000, seed=5, **COMMON)
    b = monte_carlo("common-emitter", NETWORKS, n=2000, seed=5, **COMMON)
    c = monte_carlo("common-emitter", NETWORKS, n=2000, seed=6, **COMMON)
    np.testing.assert_array_equal(a.gain, b.gain)
    assert not np.array_equal(a.gain, c.gain)
    assert a.converged.all()


def test_samples_lie_inside_the_worst_case_and_approach_it():
    # Independent check of both: the vertex enumeration bounds every sample (gain, IC, VC are
    # monotonic in each parameter) and 20 000 samples reach within 20 % of the range of each end.
    mc = monte_carlo("common-emitter", NETWORKS, n=20_000, seed=1, **COMMON)
    wc = worst_case("common-emitter", NETWORKS, **COMMON)
    for key in ("gain", "ic", "vc"):
        lo, hi = wc[key]
        s = mc.samples[key]
        span = hi - lo
        assert lo - 1e-12 * abs(lo) <= s.min() and s.max() <= hi + 1e-12 * abs(hi), key
        assert s.min() - lo < 0.2 * span and hi - s.max() < 0.2 * span, key
    # Only the low end of the swing is a bound (see montecarlo's note).  It sits at a corner where
    # the bias point nears saturation and the swing falls steeply, so samples stay well above it.
    lo, _ = wc["swing_pp"]
    assert lo - 1e-9 <= mc.swing_pp.min()


def test_share_meeting_counts_the_spec():
    mc = monte_carlo("common-emitter", NETWORKS, n=5000, seed=2, **COMMON)
    nominal = float(np.median(np.abs(mc.gain)))
    tight = Spec(gain=nominal, gain_tol=0.01, swing_pp=1.0, min_rin_ohms=0.0)
    loose = Spec(gain=nominal, gain_tol=0.5, swing_pp=1.0, min_rin_ohms=0.0)
    assert 0.0 < mc.share_meeting(tight) < mc.share_meeting(loose) == 1.0
    # a swing beyond what any sample reaches fails every sample
    assert mc.share_meeting(Spec(gain=nominal, gain_tol=0.5, swing_pp=float(mc.swing_pp.max()) + 0.1)) == 0.0
    assert mc.share_meeting(Spec(gain=nominal, gain_tol=0.5, min_rin_ohms=float(mc.rin.max()) + 1)) == 0.0


def test_hfe_range_must_make_sense():
    with pytest.raises(ValueError, match="hFE"):
        monte_carlo("common-emitter", NETWORKS, n=10, hfe_min=300.0, hfe_max=100.0, **COMMON)
