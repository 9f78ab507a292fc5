"""Saved design files for the sheet tests: the demo job through the real CLI, and one with every network shape."""

from __future__ import annotations

import json
from pathlib import Path

from tests.deck_designs import DESIGNS, SPEC, full_design
from tests.demo_job import DEMO

DEMO_ARGS = ["design", "--topology", "common-emitter", "--gain", "10", "--gain-tol", "0.05", "--supply", "12",
             "--load", "22k", "--source", "1k", "--swing", "5", "--low-cut", "30", "--min-rin", "8k", "--top", "2",
             "--depth", "2"]


def save_demo(folder: Path) -> Path:
    """`drawerfit design --save` of the demo job (tests/demo_job.py) on a copy of the demo drawer."""
    from tui.cli import main

    drawer = folder / "drawer.csv"
    drawer.write_bytes(DEMO.read_bytes())
    out = folder / "gain10.json"
    assert main(["--inventory", str(drawer), *DEMO_ARGS, "--save", str(out)]) == 0
    return out


def save_networks(folder: Path, demo: Path) -> Path:
    """A saved file whose designs are the hand-made ones (every network shape, every topology)."""
    doc = json.loads(demo.read_text())
    mc = doc["designs"][0]["mc"]
    doc["spec"] = dict(doc["spec"], **SPEC, topology="common-emitter")
    doc["designs"] = [full_design(d, SPEC, mc) for d in DESIGNS.values()]
    out = folder / "networks.json"
    out.write_text(json.dumps(doc))
    return out
