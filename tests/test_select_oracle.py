"""The solver against the exhaustive oracle (optimizer/search/oracle.py) on small drawers.

The oracle is plain enumeration: every network per position, every capacitor
combination, every transistor line, the same physics and trade-off counts, no pruning,
no budget order, no lazy front and no CP-SAT.  Equal trade-off sets (as sets of counts:
designs with equal counts may come back either way) and the same preferred counts for
every preference show the search is exact.
"""

from __future__ import annotations

from types import SimpleNamespace as NS

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from inventory.parts import Part
from optimizer.search.candidates import QLine, transistor_of
from optimizer.search import tradeoff
from optimizer.search.oracle import TooBig, oracle_front
from optimizer.search.select import search
from optimizer.spec import Spec

# E12 values near what a gain-of-10 stage on 12 V wants; the drawers are drawn from these.
POOL = (680.0, 1e3, 1.2e3, 2.2e3, 4.7e3, 10e3, 12e3, 12.1e3, 15e3, 20e3, 22e3, 27e3, 47e3, 100e3, 110e3, 150e3, 220e3)
SPEC = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
            min_rin_ohms=8e3)


def resistors(lines):
    """lines: [(drawer line, ohms, qty)] → stock arrays (5 %, 1/4 W)."""
    return NS(line=np.array([x[0] for x in lines]), ohms=np.array([x[1] for x in lines], dtype=float),
              tolerance=np.full(len(lines), 0.05), power_w=np.full(len(lines), 0.25),
              qty=np.array([x[2] for x in lines]))


def capacitors(lines):
    """lines: [(line, farads, volts, polarised, qty)]."""
    return NS(line=np.array([x[0] for x in lines]), farads=np.array([x[1] for x in lines], dtype=float),
              tolerance=np.full(len(lines), 0.2), voltage_v=np.array([x[2] for x in lines], dtype=float),
              polarised=np.array([x[3] for x in lines], dtype=bool), qty=np.array([x[4] for x in lines]))


def qline(line, name, lo, hi, qty=5):
    part = Part(line, "transistor", None, qty, part=name, polarity="NPN", hfe_min=lo, hfe_max=hi,
                vceo_v=40.0, ic_max_a=0.1, pd_max_w=0.5)
    return QLine(line, qty, transistor_of(part), name)


CAPS = capacitors([(40, 10e-6, 25.0, True, 3), (41, 1e-6, 50.0, False, 2), (42, 100e-6, 16.0, True, 1)])
QS = [qline(50, "BC547B", 200, 450), qline(51, "2N3904", 100, 300, qty=1)]


SPEC_CLEAN = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=2,
                  low_cut_hz=30, min_rin_ohms=8e3)  # 1 % THD, 1 V VCE, 0..50 °C: the defaults
PREFERENCES = ("balanced", "parts", "clean", "robust", "frugal")


def solver_front(rs, cs, qs, spec, depth, prefer="balanced", top=5):
    sol = search(rs, cs, qs, spec, top=top, depth=depth, prefer=prefer)
    got = [] if sol.front_counts is None else sorted({tuple(int(x) for x in r) for r in sol.front_counts})
    return got, sol


def check_stock(sol, rs, cs, qs):
    """Every returned design takes no line beyond its count, across all positions together."""
    from optimizer.search.result import uses_of

    qty = {int(a): int(b) for a, b in zip(rs.line, rs.qty, strict=True)}
    qty.update({int(a): int(b) for a, b in zip(cs.line, cs.qty, strict=True)})
    qty.update({q.line: q.qty for q in qs})
    for choice, row, _ in sol.designs:
        for use in uses_of(sol, choice, row):
            assert use["qty"] <= qty[use["line"]], (use, qty[use["line"]])


def check_preferred(sol, want, prefer):
    """designs[0] is the oracle set's best for `prefer`, and each label sits on its winner."""
    if not want:
        assert sol.designs == []
        return
    c = np.array(want)
    first = sol.designs[0]
    row_counts = tuple(int(x) for x in tradeoff.counts([first[0].score.parts], [first[1]["thd"]],
                                                       [first[1]["rob"]], [first[1]["isup"]])[0])
    assert row_counts == tuple(c[tradeoff.preference_order(c, prefer)[0]])
    assert prefer in first[2]
    for choice, row, labels in sol.designs:
        mine = tuple(int(x) for x in tradeoff.counts([choice.score.parts], [row["thd"]], [row["rob"]],
                                                     [row["isup"]])[0])
        for lab in labels:
            assert mine == tuple(c[tradeoff.preference_order(c, lab)[0]]), lab


CASES = [
    ([(2, 220e3, 2), (3, 20e3, 1), (4, 12.1e3, 2), (5, 680.0, 2), (6, 1e3, 1), (7, 27e3, 1), (8, 150e3, 1),
      (9, 12e3, 1)], 1, 15),
    ([(2, 100e3, 1), (3, 10e3, 1), (4, 20e3, 1), (5, 1e3, 1), (6, 680.0, 1), (7, 12e3, 1), (8, 27e3, 1),
      (9, 12.1e3, 1)], 1, 2),  # one of each line: counts decide which tuples survive
    ([(2, 47e3, 2), (3, 10e3, 2), (4, 4.7e3, 2), (5, 470.0, 2), (6, 1e3, 1), (7, 220.0, 1)], 1, 0),  # none
]


@pytest.mark.parametrize("lines,depth,size", CASES)
@pytest.mark.parametrize("prefer", PREFERENCES)
def test_trade_off_set_matches_oracle(lines, depth, size, prefer):
    rs = resistors(lines)
    want = oracle_front(rs, CAPS, QS, SPEC_CLEAN, depth=depth)
    assert len(want) == size  # the case is what it claims (a set of this size, or none)
    got, sol = solver_front(rs, CAPS, QS, SPEC_CLEAN, depth, prefer=prefer)
    assert got == want
    assert sol.exhaustive
    check_preferred(sol, want, prefer)
    check_stock(sol, rs, CAPS, QS)


def test_networks_only_infeasible_at_depth_2():
    # 110k, 10k and 680R two at a time: the values a clean gain of 10 needs come only as networks,
    # and none meets 1 % THD at 2 V p-p with Rin ≥ 8 k; both sides must agree on "none".
    rs = resistors([(2, 110e3, 2), (3, 10e3, 2), (4, 680.0, 3)])
    want = oracle_front(rs, CAPS, QS, SPEC_CLEAN, depth=2)
    got, sol = solver_front(rs, CAPS, QS, SPEC_CLEAN, 2)
    assert got == want == []
    assert sol.exhaustive


drawer = st.lists(st.tuples(st.sampled_from(POOL), st.integers(1, 3)), min_size=2, max_size=6)


def _run_case(entries, depth, spec, prefer="balanced"):
    rs = resistors([(i + 2, v, q) for i, (v, q) in enumerate(entries)])
    try:
        want = oracle_front(rs, CAPS, QS, spec, depth=depth, max_combos=1_500_000)
    except TooBig:
        return
    got, sol = solver_front(rs, CAPS, QS, spec, depth, prefer=prefer)
    assert got == want
    check_preferred(sol, want, prefer)
    check_stock(sol, rs, CAPS, QS)


@settings(max_examples=6, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(drawer, st.sampled_from(PREFERENCES))
def test_random_drawers_depth1_quick(entries, prefer):
    _run_case(entries, 1, SPEC_CLEAN, prefer)


@pytest.mark.fuzz
@settings(max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(drawer, st.sampled_from([1, 2]), st.sampled_from([1.0, 3.0]), st.sampled_from([0.05, 0.1]),
       st.sampled_from(PREFERENCES), st.sampled_from([0.01, 0.03]))
def test_random_drawers_fuzz(entries, depth, swing, tol, prefer, thd):
    spec = Spec(gain=10, gain_tol=tol, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=swing,
                low_cut_hz=30, min_rin_ohms=8e3, max_thd=thd)
    _run_case(entries, depth, spec, prefer)


@pytest.mark.fuzz
@settings(max_examples=25, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(POOL), st.integers(1, 3)), min_size=2, max_size=7))
def test_random_followers_fuzz(entries):
    spec = Spec(topology="emitter-follower", gain=0.9, gain_tol=0.08, supply_v=12, load_ohms=10e3,
                source_ohms=1e3, swing_pp=3, low_cut_hz=30, min_rin_ohms=5e3)
    _run_case(entries, 1, spec)
