"""Each design's own deck, with a source, a load and an analysis added, simulated in ngspice (an
independent simulator) and compared with optimizer.physics.analysis.analyze of the same stage.

Same transistor card on both sides, so the tolerances are tight: the midband gain within 0.1 %, the DC
node voltages within 1 mV, Rin within 0.5 %.  Polarised capacitors must have their first node (the +
lead) at the higher DC voltage.  The README's recipe (a bench file that .include-s the deck) must run
with `ngspice -b` without an error.
"""

from __future__ import annotations

import math
import subprocess

import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.deck import deck_nodes, design_netlist, stage_of_design
from optimizer.search.result import spec_json
from tests import spice
from tests.deck_designs import DESIGNS, SPEC
from tests.deck_lint import lint
from tests.demo_job import JOB, solved_top2_depth2

pytestmark = pytest.mark.ngspice
MIDBAND_HZ = 1e5  # far above every corner of these stages, and the model has no junction capacitance


def surroundings(deck: str, spec: dict) -> str:
    """The README's recipe: a source through RS into `in`, a load from `out` to 0."""
    added = ["VS src 0 DC 0 AC 1", f"RS src in {spec['source_ohms']:.9g}", f"RL out 0 {spec['load_ohms']:.9g}"]
    return deck.replace("\n.end\n", "\n" + "\n".join(added) + "\n.end\n")


def compare(design: dict, spec: dict) -> None:
    stage = stage_of_design(design, spec)
    want = analyze(stage).predicted
    deck = design.get("netlist") or design_netlist(stage, design["parts"])
    assert lint(deck, design["parts"].keys()) == []
    names = deck_nodes(stage)
    probes = sorted({names[n] for n in ("base", "emit", "coll", "in")} - {"0"})
    elements = [ln.split() for ln in deck.splitlines() if ln[:1] == "C"]
    for e in elements:
        probes += [n for n in e[1:3] if n != "0" and n not in probes]
    op, ac = spice.run(surroundings(deck, spec), [("op", [f"v({n})" for n in probes]),
                                                  (f"ac lin 1 {MIDBAND_HZ:g} {MIDBAND_HZ:g}", ["v(out)", "v(in)", "i(vs)"])])

    def v(node):
        return 0.0 if node == "0" else float(op[f"v({node})"][0].real)

    for key, node in (("vb", "base"), ("ve", "emit"), ("vc", "coll")):
        assert abs(v(names[node]) - want[key]) < 1e-3, (key, v(names[node]), want[key])
    gain = complex(ac["v(out)"][0])
    assert gain.real == pytest.approx(want["gain"], rel=1e-3)
    rin = (complex(ac["v(in)"][0]) / -complex(ac["i(vs)"][0])).real
    assert rin == pytest.approx(want["rin"], rel=5e-3)
    for e in elements:
        name, plus, minus = e[0], e[1], e[2]
        pos = name.split("_")[0]
        if design["parts"][pos].get("polarised"):
            assert v(plus) >= v(minus), (name, v(plus), v(minus))


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_hand_made_decks_match_the_analysis(name):
    compare(DESIGNS[name], SPEC)


@pytest.fixture(scope="module")
def demo_doc():
    return solved_top2_depth2()  # shared with tests/test_design_ngspice.py: one search a session


def test_demo_designs_decks_match_the_analysis(demo_doc):
    assert demo_doc["designs"]
    for design in demo_doc["designs"]:
        assert "netlist" in design
        compare(design, spec_json(JOB))


def test_readme_recipe_runs_in_ngspice(tmp_path, demo_doc):
    ngspice = spice.need_program("ngspice")
    (tmp_path / "stage.cir").write_text(demo_doc["designs"][0]["netlist"])
    (tmp_path / "bench.cir").write_text(
        "bench for a drawerfit stage\n.include stage.cir\nVS src 0 DC 0 AC 1 SIN(0 10m 1k)\nRS src in 1k\n"
        "RL out 0 22k\n.op\n.ac dec 10 10 100k\n.print ac vdb(out)\n.end\n")
    done = subprocess.run([ngspice, "-b", "bench.cir"], capture_output=True, text=True, timeout=60, cwd=tmp_path)
    text = done.stdout + done.stderr
    assert done.returncode == 0, text
    assert "error" not in text.lower(), text
    rows = [ln.split() for ln in done.stdout.splitlines() if ln.strip()[:1].isdigit()]
    gain_db = [float(r[2]) for r in rows if len(r) == 3 and float(r[1]) == pytest.approx(1e4)]
    assert gain_db and gain_db[0] == pytest.approx(20 * math.log10(abs(demo_doc["designs"][0]["predicted"]["gain"])), abs=0.05)
