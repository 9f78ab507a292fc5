"""The split-supply kinds: the solver against brute force (as tests/test_select_topologies.py).

  * optimizer.search.oracle.oracle_front: every network per position, every capacitor combination, every
    transistor line, the same physics and trade-off counts, no pruning (equal trade-off sets show
    the box search of optimizer/kinds/split_bounds.py, the lazy front and CP-SAT are exact), with
    CIN and with the source DC-coupled (no CIN);
  * the full mesh of value tuples through feasible.check: the box search must pass every tuple
    that meets the spec, on value sets far larger than the oracle can take.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from optimizer.search.feasible import check
from optimizer.kinds.split_bounds import split_ce_chunks, split_follower_chunks
from optimizer.spec import Spec
from optimizer.search import tradeoff
from optimizer.search.oracle import TooBig, oracle_front
from tests.test_select_oracle import CAPS, QS, check_preferred, check_stock, resistors, solver_front
from tests.test_select_topologies import _values

SPLIT_CE, SPLIT_FOLLOWER = "split-common-emitter", "split-emitter-follower"
# Our own scenarios: a gain-of-10 stage and a follower on ±12 V.
CE = Spec(topology=SPLIT_CE, gain=10, gain_tol=0.05, supply_v=12, negative_supply_v=-12, load_ohms=22e3,
          source_ohms=1e3, swing_pp=2, low_cut_hz=30, min_rin_ohms=8e3)
FOLLOWER = Spec(topology=SPLIT_FOLLOWER, gain=0.95, gain_tol=0.05, supply_v=12, negative_supply_v=-12,
                load_ohms=10e3, source_ohms=1e3, swing_pp=3, low_cut_hz=30, min_rin_ohms=5e3)
CE_DRAWER = [(680.0, 2), (820.0, 2), (1e3, 1), (6.8e3, 1), (10e3, 2), (12e3, 1), (15e3, 2), (22e3, 1), (47e3, 1),
             (100e3, 1)]
FOLLOWER_DRAWER = [(10e3, 2), (22e3, 1), (47e3, 1), (100e3, 1), (4.7e3, 1)]


def _tied(want, prefer) -> bool:
    """Two designs of the set equal on every key of `prefer` (tradeoff.preference_order): either may lead."""
    c = np.array(want)
    if len(c) < 2:
        return False
    first, second = tradeoff.preference_order(c, prefer)[:2]
    bal = tradeoff.balanced_score(c)
    return bool(np.isclose(bal[first], bal[second]) and (c[first] == c[second]).sum() >= 2)


def _against_oracle(entries, depth, spec, max_combos=1_500_000, prefer="balanced"):
    """Equal trade-off sets (solver vs oracle); None when the oracle cannot take the drawer."""
    rs = resistors([(i + 2, v, q) for i, (v, q) in enumerate(entries)])
    try:
        want = oracle_front(rs, CAPS, QS, spec, depth=depth, max_combos=max_combos)
    except TooBig:
        return None
    got, sol = solver_front(rs, CAPS, QS, spec, depth, prefer=prefer)
    assert got == want
    assert sol.exhaustive
    if not _tied(want, prefer):
        check_preferred(sol, want, prefer)
    check_stock(sol, rs, CAPS, QS)
    return got


def dc(spec, **more):
    return dataclasses.replace(spec, dc_input=True, **more)


@pytest.mark.parametrize("spec,entries,depth,size", [
    (CE, CE_DRAWER, 1, 4),
    (dc(CE), CE_DRAWER, 1, 4),
    (FOLLOWER, FOLLOWER_DRAWER, 1, 9),
    (dc(FOLLOWER), FOLLOWER_DRAWER, 2, 18),
], ids=["ce", "ce-dc", "follower", "follower-dc-depth2"])
@pytest.mark.parametrize("prefer", ["balanced", "clean", "frugal"])
def test_matches_oracle(spec, entries, depth, size, prefer):
    got = _against_oracle(entries, depth, spec, max_combos=3_000_000, prefer=prefer)
    assert got is not None and len(got) == size  # the case is what it claims: a set of this size


@pytest.mark.fuzz
@pytest.mark.parametrize("spec,entries,size", [
    (CE, [(820.0, 1), (10e3, 3), (47e3, 1), (6.8e3, 1), (1e3, 1)], 5),
    (dc(CE, gain=5, gain_tol=0.1), [(820.0, 1), (10e3, 3), (47e3, 1), (6.8e3, 1), (1e3, 1)], 20),
], ids=["ce-depth2", "ce-dc-depth2"])
def test_matches_oracle_depth2(spec, entries, size):
    got = _against_oracle(entries, 2, spec, max_combos=3_000_000)
    assert got is not None and len(got) == size


def _spec(kind, data):
    vee = data.draw(st.sampled_from([-5.0, -12.0]))
    common = {"topology": kind, "supply_v": data.draw(st.sampled_from([5.0, 12.0])), "negative_supply_v": vee,
              "low_cut_hz": 30, "dc_input": data.draw(st.booleans()),
              "source_ohms": data.draw(st.sampled_from([0.0, 1e3])),
              "min_rin_ohms": data.draw(st.sampled_from([0.0, 5e3])),
              "max_supply_a": data.draw(st.sampled_from([None, 2e-3]))}
    if kind == SPLIT_FOLLOWER:
        return Spec(gain=data.draw(st.sampled_from([0.8, 0.9, 0.95])), gain_tol=data.draw(st.sampled_from([0.05, 0.1])),
                    load_ohms=data.draw(st.sampled_from([1e3, 10e3])),
                    swing_pp=data.draw(st.sampled_from([0.0, 2.0, 4.0])), **common)
    return Spec(gain=data.draw(st.sampled_from([3.0, 5.0, 10.0])), gain_tol=data.draw(st.sampled_from([0.1, 0.2])),
                load_ohms=data.draw(st.sampled_from([10e3, 22e3])), swing_pp=data.draw(st.sampled_from([0.0, 2.0])),
                **common)


POOL = (470.0, 820.0, 1e3, 2.2e3, 4.7e3, 6.8e3, 10e3, 15e3, 22e3, 47e3, 100e3, 220e3)


def _drawer(data):
    return data.draw(st.lists(st.tuples(st.sampled_from(POOL), st.integers(1, 3)), min_size=3, max_size=5))


@settings(max_examples=4, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([SPLIT_CE, SPLIT_FOLLOWER]), st.data())
def test_random_drawers_quick(kind, data):
    _against_oracle(_drawer(data), 1, _spec(kind, data))


@pytest.mark.fuzz
@settings(max_examples=30, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([1, 2]), st.sampled_from([SPLIT_CE, SPLIT_FOLLOWER]), st.data())
def test_random_drawers_fuzz(depth, kind, data):
    _against_oracle(_drawer(data), depth, _spec(kind, data))


# --- the box search alone against the full mesh of value tuples ---------------------------------

def _mesh_case(kind, data):
    spec = _spec(kind, data)
    q = QS[data.draw(st.integers(0, 1))]
    if kind == SPLIT_FOLLOWER:
        groups = {"RB": _values(data, 60, 1e3, 3e6), "RE": _values(data, 60, 300.0, 1e6)}
        chunks = split_follower_chunks
    else:
        groups = {"RB": _values(data, 12, 3e3, 3e6), "RC": _values(data, 14, 300.0, 100e3),
                  "RE1": _values(data, 8, 10.0, 5e3, zero=True), "RE2": _values(data, 8, 1e3, 1e6, zero=True)}
        chunks = split_ce_chunks
    positions = list(groups)
    mesh = [m.ravel() for m in np.meshgrid(*groups.values(), indexing="ij")]
    full = check(kind, dict(zip(positions, mesh, strict=True)), q, spec)
    want = set(zip(*(full[p].tolist() for p in positions)))
    got, emitted = set(), 0
    for chunk in chunks(groups, spec, q.transistor, (q.transistor.hfe_min, q.transistor.hfe_max)):
        emitted += len(chunk[positions[0]])
        rows = check(kind, chunk, q, spec)
        got |= set(zip(*(rows[p].tolist() for p in positions)))
    assert got == want
    return len(want), emitted, len(mesh[0])


@settings(max_examples=8, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([SPLIT_CE, SPLIT_FOLLOWER]), st.data())
def test_boxes_keep_every_tuple_meeting_the_spec(kind, data):
    _mesh_case(kind, data)


@pytest.mark.fuzz
@settings(max_examples=80, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([SPLIT_CE, SPLIT_FOLLOWER]), st.data())
def test_boxes_keep_every_tuple_fuzz(kind, data):
    _mesh_case(kind, data)


def test_boxes_prune_and_keep_designs():
    """The bounds must cut (else the search is the mesh) and keep the designs of a known-good case."""
    found = []

    @settings(max_examples=20, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
    @given(st.data())
    def run(data):
        found.append(_mesh_case(SPLIT_CE, data))

    run()
    assert any(w > 0 for w, _, _ in found), "no case had designs: the test would prove nothing"
    assert sum(e for _, e, _ in found) < 0.5 * sum(t for _, _, t in found)
