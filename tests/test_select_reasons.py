"""What a design request says when nothing fits: each new limit has its place in the reasons.

Our own scenarios on the bundled demo drawer.  Figures quoted in the reasons come from the
search's near misses; these tests check that the binding limit is named with the option that
sets it, and that a proof and a time-out are told apart (exit 3 against exit 4 in the CLI).
"""

from __future__ import annotations

from inventory.drawer import Drawer
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.demo_job import DEMO


def _doc(spec, limit=20.0, depth=2):
    return find_designs(Drawer.load(DEMO), spec, time_limit_s=limit, hints=False, depth=depth)


def test_a_source_of_100k_asks_for_1M_by_default_and_is_proven_impossible():
    # The default Rin floor is 10 × RS = 1 MΩ; a divider of the drawer's resistors cannot reach it.
    doc = _doc(Spec(gain=10, supply_v=12, source_ohms=100e3))
    assert doc["status"] == "infeasible" and doc["optimal"] and doc["designs"] == []
    assert any("1 MΩ (the default: 10 × the 100 kΩ source" in w for w in doc["why"]), doc["why"]


def test_thd_binds_names_the_cleanest_stage_and_the_option():
    doc = _doc(Spec(gain=10, supply_v=12, swing_pp=5, max_thd=0.001, min_rin_ohms=8e3, source_ohms=1e3), depth=1)
    assert doc["designs"] == [] and doc["status"] == "infeasible"
    thd = [w for w in doc["why"] if w.startswith("THD binds")]
    assert thd and "--max-thd" in thd[0] and "at 5 V p-p" in thd[0], doc["why"]


def test_a_search_cut_short_says_it_is_not_a_proof():
    doc = _doc(Spec(gain=10, supply_v=12, swing_pp=5, max_thd=0.001, min_rin_ohms=8e3, source_ohms=1e3,
                    max_parts_per_position=3), limit=1.0)
    if doc["status"] == "unproven":
        assert "not proven impossible" in doc["why"][0] and doc["unexplored"]
    else:  # a fast machine may prove it; then it must say so
        assert doc["status"] == "infeasible" and doc["optimal"]
