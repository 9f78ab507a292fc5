"""The settled stop rule (`find_designs(patience_s=…)`, `drawerfit design --patience`).

The search is anytime: it may stop once its trade-off set has not changed for the patience
period.  Such a stop must say so (optimal false, the reason in "unexplored", "stopped_by":
"settled"), and the designs it returns must still meet the spec at every corner, re-checked by
the exact solver (tests/helpers/verify.py).  No timing is asserted: a patience of a microsecond
stops at the first check after the set first changes, whatever the machine's speed, and
patience 0 never stops the search.
"""

from __future__ import annotations

import threading

import pytest

from inventory.drawer import Drawer
from optimizer.search import stopwatch
from optimizer.search.oracle import oracle_front
from optimizer.search.select import find_designs, search
from optimizer.spec import Spec
from tests.demo_job import DEMO
from tests.helpers.verify import verify_design
from tests.test_select_oracle import CAPS, CASES, QS, SPEC_CLEAN, resistors

# Our own scenario: a sensor preamp on a 9 V battery.  Depth 2 on the demo drawer has far more
# value tuples than any search proves within a minute, so only the rule (or the limit) ends it.
SPEC = Spec(gain=10, supply_v=9)


@pytest.fixture(scope="module")
def settled():
    drawer = Drawer.load(DEMO)
    return drawer, find_designs(drawer, SPEC, hints=False, time_limit_s=120.0, patience_s=1e-6)


def test_a_settled_stop_says_so(settled):
    _, doc = settled
    assert doc["search"]["stopped_by"] == "settled"
    assert doc["optimal"] is False and doc["search"]["exhaustive"] is False
    assert doc["unexplored"].startswith("settled: the preferred design had not changed for 1e-06 s (--patience)")
    assert "resistor parts" in doc["unexplored"]  # and what was left
    assert doc["status"] == "found"  # designs in hand: exit 0, as for any stop with designs
    assert doc["search"]["patience_s"] == 1e-6
    assert 0 <= doc["search"]["last_change_s"] <= doc["search"]["seconds"]


def test_designs_of_a_settled_stop_meet_the_spec_at_every_corner(settled):
    drawer, doc = settled
    assert doc["designs"], "the rule only stops a search that has designs"
    for k, design in enumerate(doc["designs"]):
        assert verify_design(design, SPEC, drawer) == [], f"design #{k + 1} ({design['best_for']})"
    assert doc["designs"][0]["best_for"]


def test_patience_zero_never_stops_the_search():
    # The same search with the rule off runs until something else stops it: here a cancel given
    # by the progress callback once the first budget is screened (no clock involved).
    drawer = Drawer.load(DEMO)
    stop = threading.Event()
    seen = []

    def progress(fraction, text):
        seen.append(text)
        if fraction < 1.0:
            stop.set()

    doc = find_designs(drawer, SPEC, hints=False, time_limit_s=600.0, patience_s=0, cancel=stop, progress=progress)
    assert doc["search"]["stopped_by"] == "cancelled" and seen


def test_the_rule_needs_a_design_in_hand():
    # Nothing meets this spec (a gain the supply cannot give), so the set stays empty and the
    # rule never fires: the search ends with its proof, however short the patience.
    doc = find_designs(Drawer.load(DEMO), Spec(gain=2000, supply_v=5), hints=False, patience_s=1e-6, depth=1)
    assert doc["status"] == "infeasible" and doc["optimal"] is True
    assert doc["search"]["stopped_by"] is None


def test_a_small_drawer_is_still_proven_with_the_rule_on():
    # Where the proof comes before the patience runs out, the rule does not spoil it: the set is
    # the exhaustive oracle's (optimizer/search/oracle.py), and the trace's last entry is that set.
    lines, depth, size = CASES[0]
    rs = resistors(lines)
    sol = search(rs, CAPS, QS, SPEC_CLEAN, top=5, depth=depth, patience=3600.0)
    assert sol.exhaustive and sol.stopped_by is None
    got = sorted({tuple(int(x) for x in r) for r in sol.front_counts})
    assert got == oracle_front(rs, CAPS, QS, SPEC_CLEAN, depth=depth) and len(got) == size
    assert sorted(map(tuple, sol.front_trace[-1][1].tolist())) == got
    changes = [tuple(map(tuple, c.tolist())) for _, c in sol.front_trace]
    assert len(set(changes)) == len(changes)  # an entry is recorded only when the set changes


def test_poll_raises_settled_only_when_the_watch_is_quiet():
    quiet = [False]
    with stopwatch.watch(quiet=lambda: quiet[0]):
        stopwatch.poll()
        quiet[0] = True
        with pytest.raises(stopwatch.Settled):
            stopwatch.poll()
        with stopwatch.watch():  # a nested watch (realising a design) is never cut short by the rule
            stopwatch.poll()
    assert issubclass(stopwatch.Settled, stopwatch.Stopped)


@pytest.mark.parametrize("prefer", ["balanced", "clean"])
def test_the_patience_runs_from_the_last_change_of_the_preferred_design(prefer):
    # The clock restarts only when designs[0] (the design --prefer hands over first) changes, not
    # when another member joins the set.  Read off the full trace of a proven search: the last
    # entry whose preferred counts differ from the entry before is when the rule last restarted.
    from optimizer.search import tradeoff

    lines, depth, _ = CASES[0]
    sol = search(resistors(lines), CAPS, QS, SPEC_CLEAN, top=5, depth=depth, patience=3600.0, prefer=prefer)
    best = [tuple(c[tradeoff.preference_order(c, prefer)[0]].tolist()) for _, c in sol.front_trace]
    changes = [t for k, (t, _) in enumerate(sol.front_trace) if k == 0 or best[k] != best[k - 1]]
    assert sol.last_change_s == pytest.approx(changes[-1], abs=1e-9)
    assert len(sol.front_trace) > len(changes)  # members the rule ignored did join (else nothing is tested)
