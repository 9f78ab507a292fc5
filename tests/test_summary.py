"""Counts per location against a plain count of the same drawer."""

from __future__ import annotations

from collections import Counter

from inventory.drawer import Drawer
from inventory.summary import parts_frame, per_location
from tests.demo_job import DEMO



def test_per_location_matches_a_plain_count_of_the_demo_drawer():
    parts = Drawer.load(DEMO).parts
    lines = Counter(p.location for p in parts)
    pieces = Counter()
    for p in parts:
        pieces[p.location] += p.qty
    rows = per_location(parts)
    assert [r[0] for r in rows] == sorted(loc or "(none)" for loc in lines)
    for loc, n_lines, n_pieces, kinds in rows:
        assert n_lines == lines[loc] and n_pieces == pieces[loc]
        for kind in {p.kind for p in parts if p.location == loc}:
            total = sum(p.qty for p in parts if p.location == loc and p.kind == kind)
            assert f"{total} {kind}s" in kinds
    assert sum(r[1] for r in rows) == len(parts)


def test_empty_drawer_has_no_locations():
    assert per_location([]) == []
    assert parts_frame([]).empty
