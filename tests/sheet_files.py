"""Saved design files for the sheet tests: the demo job through the real CLI, and one with every network shape."""

from __future__ import annotations

import json
from pathlib import Path

from tests.deck_designs import DESIGNS, SPEC, full_design
from tests.demo_job import DEMO, JOB

# The demo job (tests/demo_job.py) as `design` options; depth 1 is searched to the end in about 2 s, so
# the designs do not depend on how busy the machine is; two designs keep the suites fast.
DEMO_ARGS = ["design", "--topology", JOB.topology, "--gain", f"{JOB.gain:g}", "--gain-tol", f"{JOB.gain_tol:g}",
             "--supply", f"{JOB.supply_v:g}", "--load", f"{JOB.load_ohms:g}", "--source", f"{JOB.source_ohms:g}",
             "--swing", f"{JOB.swing_pp:g}", "--low-cut", f"{JOB.low_cut_hz:g}", "--min-rin", f"{JOB.min_rin_ohms:g}",
             "--top", "2", "--depth", "1"]


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
