"""The chain job several suites ask of the small chain drawer, solved once per test session.

A chain search runs its stage searches until their deadlines (they are not proven), so a solve costs
most of its time limit (measured on this project's busy 2-core machines: 15-16 s of a 20 s limit):
the suites that only need *some* chains to check share one solve instead of each running their own.
With `LIMIT_S` both jobs found their designs in about 5 s (a 4 s limit still found them on an idle
machine), so it keeps room for a slower machine.
"""

from __future__ import annotations

import copy
import functools
from pathlib import Path

from inventory.drawer import Drawer
from optimizer.spec import Spec

DRAWER = Path(__file__).parent / "data" / "chain_drawer.csv"  # E6-like values, four of each, two 2N3904
LIMIT_S = 10.0
JOBS = {
    # A follower behind a gain stage drives a 1 kΩ load (common practice: a low-resistance load).
    "common-emitter+emitter-follower": Spec(topology="common-emitter+emitter-follower", gain=10, source_ohms=1e3,
                                            load_ohms=1e3, swing_pp=1.0),
    # A follower in front keeps a 10 kΩ source from losing most of its signal.
    "emitter-follower+common-emitter": Spec(topology="emitter-follower+common-emitter", gain=10, source_ohms=10e3,
                                            load_ohms=22e3, swing_pp=1.0),
}
# The PNP drawer: the same, with its two 2N3904 swapped for two 2N3906 (PNP, hFE 100…300): all-PNP chains.
PNP_DRAWER = Path(__file__).parent / "data" / "chain_drawer_pnp.csv"
PNP_JOBS = {
    **JOBS,
    # Two common emitters for a gain of 50 from a 1 kΩ source into 10 kΩ (each stage about 7).
    "common-emitter+common-emitter": Spec(topology="common-emitter+common-emitter", gain=50, source_ohms=1e3,
                                          load_ohms=10e3, swing_pp=1.0),
}
# The same CE+EF job as the command line spells it.
CLI_JOB = ["design", "--topology", "common-emitter+emitter-follower", "--gain", "10", "--source", "1k", "--load",
           "1k", "--swing", "1"]


@functools.lru_cache(maxsize=None)
def _solved(kind: str) -> dict:
    from optimizer.search.select import find_designs

    return find_designs(Drawer.load(DRAWER), JOBS[kind], time_limit_s=LIMIT_S)


def solved(kind: str) -> dict:
    """`find_designs` on the chain drawer for JOBS[kind] (searched once a session; a fresh copy each call)."""
    return copy.deepcopy(_solved(kind))


@functools.lru_cache(maxsize=None)
def _solved_pnp(kind: str) -> dict:
    from optimizer.search.select import find_designs

    return find_designs(Drawer.load(PNP_DRAWER), PNP_JOBS[kind], time_limit_s=LIMIT_S)


def solved_pnp(kind: str) -> dict:
    """`find_designs` on the PNP chain drawer for PNP_JOBS[kind] (once a session; a fresh copy each call).
    Measured 2.8–3.9 s each here (the stage searches settle early)."""
    return copy.deepcopy(_solved_pnp(kind))
