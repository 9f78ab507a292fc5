"""Capacitor options from stock: single parts and parallel pairs.

Oracles: capacitors in parallel add, C = C1 + C2 (any circuits handbook); a parallel pair
sees one voltage, so its rating is the lower member's and one polarised member makes the
pair polarised (fact of the trade); worst-case bounds from the shared network_tree module;
a brute-force itertools enumeration of every option.
"""

from __future__ import annotations

import itertools
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from optimizer.parts import network_tree as nt
from optimizer.parts.capacitors import capacitor_options
from optimizer.parts.network_table import PARALLEL2, SINGLE


def stock(farads, qty, voltage_v=50.0, polarised=False, tolerance=0.1):
    n = len(farads)
    return SimpleNamespace(
        line=np.arange(2, 2 + n), farads=np.asarray(farads, float), qty=np.asarray(qty),
        tolerance=np.broadcast_to(np.asarray(tolerance, float), (n,)).copy(),
        voltage_v=np.broadcast_to(np.asarray(voltage_v, float), (n,)).copy(),
        polarised=np.broadcast_to(np.asarray(polarised, bool), (n,)).copy(),
    )


def pair(options, a, b):
    hit = np.flatnonzero((options.shape == PARALLEL2) & (options.members == [a, b]).all(axis=1))
    assert len(hit) == 1
    return int(hit[0])


def test_parallel_adds_lower_rating_and_polarity():
    s = stock([100e-9, 10e-6, 22e-6], [1, 2, 1], voltage_v=[63, 16, 25], polarised=[False, True, True],
              tolerance=[0.05, 0.2, 0.2])
    o = capacitor_options(s)
    i = pair(o, 0, 1)
    assert o.value[i] == pytest.approx(10.1e-6, rel=1e-12)  # 100n ‖ 10µ = 10.1 µ (C = C1 + C2)
    assert o.voltage_v[i] == 16  # the lower rating
    assert o.polarised[i]  # one electrolytic member: fit the pair as polarised
    assert o.value[pair(o, 1, 1)] == pytest.approx(20e-6, rel=1e-12)  # qty 2: the same line twice
    assert not ((o.members == [0, 0]).all(axis=1)).any()  # qty 1: never twice
    assert not o.polarised[(o.shape == SINGLE) & (o.members[:, 0] == 0)].any()


@settings(derandomize=True, max_examples=40, deadline=None)
@given(st.integers(1, 6).flatmap(lambda n: st.tuples(
    st.lists(st.sampled_from([1e-9, 4.7e-9, 100e-9, 1e-6, 10e-6, 47e-6, 220e-6]), min_size=n, max_size=n),
    st.lists(st.integers(0, 3), min_size=n, max_size=n),
    st.lists(st.sampled_from([6.3, 16.0, 25.0, 50.0, 100.0]), min_size=n, max_size=n),
    st.lists(st.booleans(), min_size=n, max_size=n),
    st.lists(st.sampled_from([0.05, 0.1, 0.2]), min_size=n, max_size=n),
)), st.sampled_from([0.0, 10.0, 20.0]), st.sampled_from([0.0, 0.5]))
def test_brute_force_options(s, min_v, margin):
    farads, qty, volts, pol, tol = s
    o = capacitor_options(stock(farads, qty, volts, pol, tol), min_v, voltage_margin=margin)
    ok = [i for i in range(len(farads)) if qty[i] > 0 and volts[i] >= min_v * (1 + margin)]
    expect = {(i,): farads[i] for i in ok}
    for i, j in itertools.combinations_with_replacement(ok, 2):
        if i != j or qty[i] >= 2:
            expect[(i, j)] = farads[i] + farads[j]
    got = {tuple(int(x) for x in m if x >= 0): v for m, v in zip(o.members, o.value, strict=True)}
    assert got.keys() == expect.keys()
    for k, v in expect.items():
        assert got[k] == pytest.approx(v, rel=1e-12)
    assert np.all(np.diff(o.value) >= 0)
    for i in range(len(o)):
        node = o.node(i)
        rows = [int(x) for x in o.members[i] if x >= 0]
        assert o.voltage_v[i] == min(volts[r] for r in rows)
        assert o.polarised[i] == any(pol[r] for r in rows)
        lo, hi = nt.bounds(node, "capacitor")
        assert o.tolerance[i] == pytest.approx(max(o.value[i] - lo, hi - o.value[i]) / o.value[i], rel=1e-9)
    # at_least: every adequate option, fewest parts first, then the smallest value.
    need = 30e-6
    order = o.at_least(need)
    want = sorted((i for i in range(len(o)) if o.value[i] >= need), key=lambda i: (o.parts[i], o.value[i]))
    assert [(o.parts[i], o.value[i]) for i in order] == [(o.parts[i], o.value[i]) for i in want]


def test_at_least_worst_case_and_polarity_filter():
    o = capacitor_options(stock([10e-6, 22e-6], [2, 1], polarised=[True, False], tolerance=0.2))
    # 20 µ from two 10 µ meets 20 µ nominally but not at −20 %; 22 µ·0.8 = 17.6 µ neither.
    assert [o.value[i] for i in o.at_least(20e-6)] == pytest.approx([22e-6, 20e-6, 32e-6])
    assert [o.value[i] for i in o.at_least(20e-6, worst_case=True)] == pytest.approx([32e-6])
    assert [o.value[i] for i in o.at_least(20e-6, polarised_ok=False)] == pytest.approx([22e-6])


def test_bad_input_is_named():
    with pytest.raises(ValueError, match="depth must be 1 or 2"):
        capacitor_options(stock([1e-6], [1]), depth=3)
    with pytest.raises(ValueError, match=r"row 0 \(line 2\): farads"):
        capacitor_options(stock([0.0], [1]))
