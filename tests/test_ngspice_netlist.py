"""The netlist as a user would run it: `ngspice -b deck.cir`, nothing added.

Oracle: ngspice 39's own operating point printout and its `.four` Fourier analysis
(THD over the last period of the .tran), against optimizer.physics.analysis.
"""

from __future__ import annotations

import re
import subprocess

import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.netlist import to_netlist
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor
from tests.conftest import need_program

pytestmark = pytest.mark.ngspice

STAGES = {
    "common-emitter": Stage("common-emitter", {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE1": 470, "RE2": 680},
                            {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 220e-6}, 12.0, 1e3, 22e3, Transistor(bf=180.0), 25.0),
    "emitter-follower": Stage("emitter-follower", {"R1": 27e3, "R2": 33e3, "RE": 2.2e3},
                              {"CIN": 1e-6, "COUT": 22e-6}, 12.0, 600.0, 10e3, Transistor(bf=120.0), 40.0),
    "collector-feedback": Stage("collector-feedback", {"RB": 220e3, "RC": 4.7e3, "RE1": 220, "RE2": 470},
                                {"CIN": 1e-6, "COUT": 10e-6, "CE": 100e-6}, 9.0, 600.0, 10e3,
                                Transistor(bf=300.0), 10.0),
}


@pytest.mark.parametrize("name", sorted(STAGES))
def test_deck_runs_as_written(name, tmp_path):
    ngspice = need_program("ngspice")
    stage = STAGES[name]
    report = analyze(stage, 2.0)
    deck = tmp_path / "stage.cir"
    deck.write_text(to_netlist(stage, swing_pp=2.0, periods=10))
    run = subprocess.run([ngspice, "-b", str(deck)], capture_output=True, text=True, timeout=60)
    text = run.stdout + run.stderr
    assert run.returncode == 0 and "error" not in text.lower(), text[-3000:]
    volts = dict(re.findall(r"^\s+(\w+)\s+([-+0-9.e]+)\s*$", text, flags=re.M))
    p = report.predicted
    out_of = {"base": p["vb"], "emit": p["ve"]}
    if name != "emitter-follower":
        out_of["coll"] = p["vc"]
    for node, v in out_of.items():
        assert float(volts[node]) == pytest.approx(v, abs=10e-3), node
    thd = float(re.search(r"THD:\s*([0-9.e+-]+)\s*%", text)[1]) / 100
    # ngspice interpolates onto its own grid and its capacitors drift a little: 20 % relative.
    assert p["thd"] == pytest.approx(thd, rel=0.2)
