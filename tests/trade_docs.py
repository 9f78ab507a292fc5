"""Design documents for the app tests: the demo job solved once, plus the trade-off keys added by hand.

The solver's trade-off set ("best_for", score "thd"/"robustness"/"supply_a", "status",
"optimal", "unexplored") is written here by hand, so the screens are tested on the shape
they must read whatever the solver of the day returns; the physics figures are the
solver's own.
"""

from __future__ import annotations

import copy
import functools
import json
from pathlib import Path

from inventory.drawer import Drawer
from optimizer.search.select import find_designs

from .demo_job import DEMO, JOB

FIXED = Path(__file__).resolve().parent / "data" / "trade_doc.json"

# Hand-made trade figures for up to three designs: (best_for, thd, robustness, supply current A).
TRADE = (
    (["balanced"], 0.0042, 0.31, 0.9e-3),
    (["parts", "frugal"], 0.0110, 0.12, 0.4e-3),
    (["clean", "robust"], 0.0018, 0.48, 2.1e-3),
)


@functools.lru_cache(maxsize=1)
def _solved() -> str:
    return json.dumps(find_designs(Drawer.load(DEMO), JOB, top=3, depth=1, patience_s=0))  # to the end: ~2 s


def solved_doc() -> dict:
    """The demo job's design document as the solver returns it (a fresh copy each call)."""
    return json.loads(_solved())


def with_trade(doc: dict) -> dict:
    """`doc` with a hand-made trade-off set over its first three designs."""
    assert len(doc["designs"]) >= 3, doc.get("why")
    for design, (best, thd, robust, supply) in zip(doc["designs"], TRADE, strict=False):
        design["best_for"] = list(best)
        design["score"] = {**design.get("score", {}), "thd": thd, "robustness": robust, "supply_a": supply}
    doc["designs"][1]["score"]["parts"] = doc["designs"][0]["score"]["parts"] - 1
    doc["designs"][2]["score"]["parts"] = doc["designs"][0]["score"]["parts"] + 2
    doc.update(status="found", optimal=False, unexplored="networks of 3 parts for RC")
    return doc


def trade_doc() -> dict:
    """A fixed document for the screens (their snapshots must not move with the solver).

    Made once by `with_trade(solved_doc())` on the demo drawer, figures rounded; the designs'
    drawer lines are the demo drawer's.
    """
    return json.loads(FIXED.read_text(encoding="utf-8"))


def old_doc() -> dict:
    """A document as older versions saved it: none of the trade-off or status keys."""
    doc = copy.deepcopy(trade_doc())
    for key in ("status", "optimal", "unexplored"):
        doc.pop(key, None)
    for design in doc["designs"]:
        design.pop("best_for", None)
        design["score"] = {k: v for k, v in design.get("score", {}).items() if k not in ("thd", "robustness", "supply_a")}
    return doc


def save(doc: dict, path: Path) -> Path:
    path.write_text(json.dumps(doc), encoding="utf-8")
    return path
