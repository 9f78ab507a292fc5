"""Every design the solver returns meets its spec at every corner, by an independent re-check.

tests/helpers/verify.py rebuilds each design from the drawer lines it names and checks it with
the exact nodal solver (not the fast screen the search prunes with) at hFE min and max × every
temperature corner: bias, gain, swing, Rin, VCE, THD at the swing, supply current, f_low,
ratings and stock.  The time-limit contract is checked here too: a search stopped by its limit
still answers within it (plus 1 s for what follows the search) and says it is not optimal.
"""

from __future__ import annotations

import time

import pytest

from inventory.drawer import Drawer
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.demo_job import DEMO
from tests.helpers.verify import verify_design

QUICK = [
    Spec(gain=10, supply_v=9),  # our own scenario: a sensor preamp on a 9 V battery
    Spec(gain=20, supply_v=12, load_ohms=10e3, source_ohms=600.0, swing_pp=2.0, low_cut_hz=20.0),
]
MORE = [
    Spec(gain=50, supply_v=12),
    Spec(gain=5, supply_v=5, load_ohms=47e3, swing_pp=1.0, temp_range_c=(-10.0, 60.0)),
    Spec(gain=30, supply_v=24, load_ohms=4.7e3, swing_pp=8.0, source_ohms=50.0, low_cut_hz=10.0),
    Spec(topology="emitter-follower", gain=0.95, supply_v=12, load_ohms=2.2e3, swing_pp=3.0, source_ohms=10e3),
    Spec(topology="collector-feedback", gain=8, gain_tol=0.1, supply_v=12, load_ohms=22e3, swing_pp=2.0),
]


def _every_design_verifies(spec, time_limit_s):
    drawer = Drawer.load(DEMO)
    doc = find_designs(drawer, spec, time_limit_s=time_limit_s, hints=False)
    assert doc["status"] in ("found", "infeasible", "unproven")
    for k, design in enumerate(doc["designs"]):
        assert verify_design(design, spec, drawer) == [], f"design #{k + 1} ({design['best_for']})"
    return doc


@pytest.mark.parametrize("spec", QUICK, ids=["g10-9V", "g20-12V"])
def test_returned_designs_meet_the_spec_at_every_corner(spec):
    doc = _every_design_verifies(spec, 6.0)
    assert doc["designs"], "the demo drawer answers these; an empty answer tests nothing"
    assert doc["designs"][0]["best_for"], "the preferred design says what it is best at"


@pytest.mark.fuzz
@pytest.mark.parametrize("spec", MORE, ids=["g50-12V", "g5-5V-wide-temp", "g30-24V", "follower", "feedback"])
def test_returned_designs_meet_the_spec_more(spec):
    _every_design_verifies(spec, 10.0)


def test_time_limit_is_kept_and_the_answer_says_not_optimal():
    # Depth 3 on the demo drawer has millions of value tuples per budget: no proof within 2 s.
    spec = Spec(gain=40, supply_v=15, load_ohms=10e3, swing_pp=4.0, max_parts_per_position=3)
    t0 = time.perf_counter()
    doc = find_designs(Drawer.load(DEMO), spec, depth=3, time_limit_s=2.0)
    took = time.perf_counter() - t0
    assert took < 3.0, f"{took:.2f} s for a 2 s limit"
    assert doc["optimal"] is False and doc["unexplored"]
    assert doc["status"] in ("found", "unproven")
