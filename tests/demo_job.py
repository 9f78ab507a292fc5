"""The bundled demo drawer and the gain-of-10 job several suites ask of it."""

from __future__ import annotations

import copy
import functools
from pathlib import Path

from optimizer.spec import Spec

DEMO = Path(__file__).resolve().parents[1] / "inventory" / "demo" / "drawer.csv"
JOB = Spec(topology="common-emitter", gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3,
           swing_pp=5, low_cut_hz=30, min_rin_ohms=8e3)

# The limits before THD, quiescent VCE and temperature corners were part of the spec: for
# suites that test another mechanism (capacitor choice, hints) on tuples chosen under them.
LEGACY = {"max_thd": 1.0, "min_vce_v": 0.0, "temp_range_c": (27.0, 27.0)}
JOB_LEGACY = Spec(**{**JOB.__dict__, **LEGACY})


@functools.lru_cache(maxsize=1)
def _solved_top2_depth2() -> dict:
    from inventory.drawer import Drawer
    from optimizer.search.select import find_designs

    return find_designs(Drawer.load(DEMO), JOB, top=2, depth=2, hints=False)


def solved_top2_depth2() -> dict:
    """JOB on the demo drawer, top 2, depth 2, no hints, the default limits: the document the ngspice
    suites (tests/test_deck_ngspice.py, tests/test_design_ngspice.py) both simulate; searched once a
    session (about the whole 10 s default limit), a fresh copy each call."""
    return copy.deepcopy(_solved_top2_depth2())
