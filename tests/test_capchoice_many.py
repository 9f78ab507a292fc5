"""capchoice.fewest_parts_many (vectorised, for many rows) against capchoice.fewest_parts (per row).

The per-row search is itself checked against the exhaustive oracle (tests/test_select_oracle.py,
tests/test_capchoice.py).  Here every row a whole search makes exact is asked both ways: where the
vectorised witnesses decide a row, the count must be the per-row one.  Tight capacitor stock (one
or two of a value) makes the stock test matter; rows of several kinds and spec shapes are taken.
"""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.parts import capchoice
from optimizer.search import select
from optimizer.spec import Spec
from tests.test_select_oracle import CAPS, CASES, QS, capacitors, resistors

# A second, deeper capacitor drawer: one part of the largest value, so the top witness often fails
# on stock and the greedy one is needed.
ONE_BIG = capacitors([(40, 47e-6, 25.0, True, 2), (41, 2.2e-6, 50.0, False, 2), (42, 220e-6, 16.0, True, 1),
                      (43, 10e-6, 6.3, True, 3), (44, 100e-9, 50.0, False, 4)])
SPECS = [
    Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=2, low_cut_hz=30,
         min_rin_ohms=8e3),
    Spec(gain=8, gain_tol=0.1, supply_v=9, load_ohms=10e3, source_ohms=600, swing_pp=1, low_cut_hz=10),
    Spec(topology="emitter-follower", gain=0.95, gain_tol=0.05, supply_v=12, load_ohms=2e3, source_ohms=1e3,
         swing_pp=2, low_cut_hz=20),
    Spec(topology="collector-feedback", gain=5, gain_tol=0.1, supply_v=12, load_ohms=22e3, source_ohms=1e3,
         swing_pp=1, low_cut_hz=20),
]


@pytest.mark.parametrize("caps", [CAPS, ONE_BIG], ids=["tight", "one-big"])
@pytest.mark.parametrize("spec", SPECS, ids=lambda s: f"{s.topology}-{s.gain:g}")
def test_vectorised_count_equals_the_per_row_search(monkeypatch, spec, caps):
    calls = []
    real = capchoice.fewest_parts_many

    def record(*args):
        calls.append(args)
        return real(*args)

    monkeypatch.setattr(capchoice, "fewest_parts_many", record)
    select.search(resistors(CASES[0][0] + [(10, 4.7e3, 2), (11, 470.0, 2), (12, 100e3, 1)]), caps, QS, spec,
                  depth=1, patience=0)
    rows_seen = decided = 0
    for topology, rows, sp, options, qty in calls:
        fast = real(topology, rows, sp, options, qty)
        for i in np.flatnonzero(fast >= 0):
            one = {k: v[i] for k, v in rows.items()}
            assert fast[i] == capchoice.fewest_parts(topology, one, sp, options, qty), one
        rows_seen += len(fast)
        decided += int((fast >= 0).sum())
    assert rows_seen, "the search made no row exact: the comparison would be empty"
    assert decided, "no row was decided by the vectorised witnesses"
