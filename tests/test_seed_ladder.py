"""Seeds at the usual operating currents (optimizer/search/seed.py IC_LADDER_A).

The first seeds run the stage at the least current the load needs.  On some drawers none of
their stocked neighbours meets the spec, while the textbook procedure at 0.5–2 mA does: a
person would try those currents next.  Before the ladder, this spec (found by the hand-method
benchmark, tests/bench/versus_hand.py, spec #101) took the exhaustive search 20 s to a first
design while a hand design met it; the ladder's seeds alone now give designs, and what they give
meets the spec at every corner, re-checked by the independent exact verifier.
"""

from __future__ import annotations

import math

import numpy as np

from optimizer.search import seed, select
from optimizer.search.candidates import POSITIONS, Pool, usable_transistors
from optimizer.search.feasible import check
from tests.bench import specs
from tests.helpers.verify import verify_design

KEY, SPEC = specs.cases(200, 9)[101]


def _seed_rows(drawer, floor):
    """Rows meeting the spec among one round of seeds (every transistor line)."""
    pool = Pool(drawer.resistor_stock(), 2)
    qlines, _ = usable_transistors(drawer.transistors())
    positions = POSITIONS[SPEC.topology]
    found = 0
    for q in qlines:
        chunk = seed.seed_tuples(SPEC.topology, SPEC, q, pool, floor)
        if len(chunk[positions[0]]):
            found += len(check(SPEC.topology, {p: chunk[p] for p in positions}, q, SPEC)["ge"])
    return found


def test_the_ladder_finds_what_the_first_seeds_miss():
    drawer = specs.drawer(KEY)
    assert _seed_rows(drawer, seed.MIN_IC_A) == 0  # the first round alone finds nothing here
    assert sum(_seed_rows(drawer, f) for f in seed.IC_LADDER_A) > 0


def test_ideal_current_rises_with_the_floor():
    # The textbook collector stage: IC = max(the load's need, floor), RE = VE / IC.
    q = usable_transistors(specs.drawer(KEY).transistors())[0][0].transistor
    hfe = (float(q.hfe_min), math.sqrt(float(q.hfe_min) * float(q.hfe_max)))
    re = [sum(seed.ideal_values(SPEC.topology, SPEC, *hfe, f)[p] for p in ("RE1", "RE2"))
          for f in (seed.MIN_IC_A,) + seed.IC_LADDER_A]
    assert np.all(np.diff(re) < 0), re


def test_seeded_designs_meet_the_spec_at_every_corner(monkeypatch):
    # Only the seeds: the budget loop is cut off at once, so what comes back is the ladder's.
    monkeypatch.setattr(select, "profiles", lambda *a, **k: iter(()))
    drawer = specs.drawer(KEY)
    doc = select.find_designs(drawer, SPEC, hints=False, time_limit_s=60, patience_s=0)
    assert doc["status"] == "found" and doc["designs"]
    for design in doc["designs"]:
        assert verify_design(design, SPEC, drawer) == []
