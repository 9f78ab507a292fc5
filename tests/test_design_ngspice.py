"""Designs the solver returns, re-simulated in ngspice at hFE min and max.

ngspice (an independent simulator) runs the netlist of each returned demo design
with the transistor's BF at the line's hFE min and hFE max; the midband gain
(AC at 10 kHz, well above every corner) must agree with the solver's figure
within 1 % and the DC node voltages within 10 mV.
"""

from __future__ import annotations


import pytest

from inventory.drawer import Drawer
from optimizer.physics.netlist import node_names, to_netlist
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor
from tests import spice
from tests.demo_job import DEMO, JOB, solved_top2_depth2



@pytest.fixture(scope="module")
def designs():
    # Shared with tests/test_deck_ngspice.py (tests/demo_job.py): one search a session.
    return Drawer.load(DEMO), solved_top2_depth2()["designs"]


@pytest.mark.ngspice
@pytest.mark.parametrize("corner", ["min", "max"])
def test_designs_match_ngspice(designs, corner, ngspice):
    drawer, found = designs
    assert found
    for design in found:
        part = drawer.part_at(design["parts"]["Q1"]["line"])
        bf = part.hfe_min if corner == "min" else part.hfe_max
        q = Transistor(name=part.part, polarity=part.polarity, bf=bf)
        res = {p: v["ohms"] for p, v in design["parts"].items() if "ohms" in v}
        caps = {p: v["farads"] for p, v in design["parts"].items() if "farads" in v}
        stage = Stage(JOB.topology, res, caps, JOB.supply_v, JOB.source_ohms, JOB.load_ohms, q)
        names = node_names(stage)
        deck = to_netlist(stage, analyses="")
        out = f"v({names['out']})"
        nodes = {"vb": names["base"], "ve": names["emit"], "vc": names["coll"]}
        probe = [n for n in nodes.values() if n != "0"]
        res_op, res_ac = spice.run(deck, [("op", [f"v({n})" for n in probe]), ("ac lin 1 1e4 1e4", [out])])
        want = design["at_hfe"][corner]
        gain = complex(res_ac[out][0]).real
        assert gain == pytest.approx(want["gain"], rel=0.01)
        for key, node in nodes.items():
            sim = 0.0 if node == "0" else float(res_op[f"v({node})"][0].real)
            assert abs(sim - want[key]) < 0.010, (key, sim, want[key])
