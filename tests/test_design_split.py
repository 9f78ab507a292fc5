"""Split-supply designs from the demo drawer meet their spec at every corner (independent re-check),
and the command line takes `--negative-supply` and `--dc-input`, refuses bad combinations with a
line naming the option, and prints decks that keep the netlist contract (tests/deck_lint.py).

tests/helpers/verify.py rebuilds each design from the drawer lines it names and checks it with the
exact nodal solver (node `vee` on the negative rail, a DC-coupled source in the bias) at hFE min
and max × every temperature corner.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.deck_lint import lint
from tests.demo_job import DEMO
from tests.helpers.verify import verify_design

ROOT = Path(__file__).resolve().parents[1]
SPLIT_CE_NAME = "split-common-emitter"
# Our own scenarios: the demo's gain of 10 on ±12 V from a ground-referenced source, a gain of 5 on
# ±9 V, and a follower driving 2.2 kΩ on ±9 V.
DEMO_SPLIT = Spec(topology="split-common-emitter", gain=10, supply_v=12, negative_supply_v=-12, dc_input=True)
CASES = {
    "ce-dc-12": DEMO_SPLIT,
    "ce-cin-9": Spec(topology="split-common-emitter", gain=5, supply_v=9, negative_supply_v=-9, swing_pp=2.0,
                     load_ohms=10e3, low_cut_hz=50.0),
    "follower-dc-9": Spec(topology="split-emitter-follower", gain=0.95, supply_v=9, negative_supply_v=-9,
                          load_ohms=2.2e3, swing_pp=3.0, dc_input=True, source_ohms=600.0),
}


@pytest.mark.parametrize("name", list(CASES))
def test_split_designs_meet_the_spec_at_every_corner(name):
    spec = CASES[name]
    drawer = Drawer.load(DEMO)
    doc = find_designs(drawer, spec, time_limit_s=6.0, hints=False)
    assert doc["designs"], "the demo drawer answers these; an empty answer tests nothing"
    for k, design in enumerate(doc["designs"]):
        assert verify_design(design, spec, drawer) == [], f"design #{k + 1} ({design['best_for']})"
        if spec.dc_input:
            assert "CIN" not in design["parts"]  # a DC-coupled source: no input capacitor
        assert lint(design["netlist"], design["parts"].keys()) == []
        assert "VEE vee 0 DC -" in design["netlist"]


def _cli(*args, inventory):
    return subprocess.run([sys.executable, "-m", "tui", "--inventory", str(inventory), *args],
                          capture_output=True, text=True, timeout=60, cwd=ROOT)


@pytest.fixture
def drawer(tmp_path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(DEMO.read_bytes())
    return path


def test_cli_designs_on_split_supplies(drawer):
    done = _cli("design", "--topology", "split-emitter-follower", "--gain", "0.95", "--supply", "12",
                "--negative-supply", "-12",
                "--dc-input", "--load", "10k", "--swing", "4", "--time-limit", "5", "--json", inventory=drawer)
    assert done.returncode == 0, done.stderr
    doc = json.loads(done.stdout)
    assert doc["spec"]["negative_supply_v"] == -12.0 and doc["spec"]["dc_input"] is True
    design = doc["designs"][0]
    assert lint(design["netlist"], design["parts"].keys()) == []
    assert -1.5 < design["predicted"]["ve"] < 0.0  # the emitter rests one VBE below ground
    assert 0.9 <= design["predicted"]["gain"] <= 1.0


@pytest.mark.parametrize("args,option,words", [
    (["--topology", "split-common-emitter", "--gain", "10"], "--negative-supply", "split supplies"),
    (["--topology", "common-emitter", "--gain", "10", "--negative-supply", "-12"], "--negative-supply",
     "one positive supply"),
    (["--topology", "common-emitter", "--gain", "10", "--dc-input"], "--dc-input", "CIN"),
    (["--topology", "split-common-emitter", "--gain", "10", "--negative-supply", "12"], "--negative-supply",
     "below ground"),
    (["--topology", "split-common-emitter", "--gain", "10", "--negative-supply", "-50"], "--negative-supply",
     "60 V"),
])
def test_cli_refuses_bad_rail_combinations(drawer, args, option, words):
    done = _cli("design", *args, inventory=drawer)
    assert done.returncode == 2, done.stdout
    assert option in done.stderr and words in done.stderr
    assert "Traceback" not in done.stderr


def test_analyze_on_split_supplies_writes_a_deck_with_both_rails(tmp_path):
    deck = tmp_path / "stage.cir"
    done = subprocess.run([sys.executable, "-m", "tui", "analyze", "--topology", "split-common-emitter",
                           "--rb", "56k", "--rc", "15k", "--re1", "820", "--re2", "20k", "--cout", "220n",
                           "--ce", "2u2", "--supply", "12", "--negative-supply", "-12", "--source", "1k",
                           "--load", "22k", "--json", "--netlist", str(deck)],
                          capture_output=True, text=True, timeout=60, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    p = json.loads(done.stdout)["predicted"]
    # Hand check (textbook): IE ≈ (12 − 0.65)/(820 + 20k) ≈ 0.55 mA, VC ≈ 12 − 15k·IC ≈ 3.8 V.
    assert 0.5e-3 < p["ic"] < 0.6e-3 and 3.0 < p["vc"] < 4.5
    text = deck.read_text()
    assert "VEE vee 0 DC -12" in text and "VCC vcc 0 DC 12" in text


def test_capacitor_ratings_cover_a_dc_level_below_ground():
    """A base resting 10 V below ground puts 10 V across CIN: the rating must cover the magnitude
    (capacitors rated ≥ 1.5 × their DC, README; common practice, no source)."""
    from optimizer.parts.capchoice import dc_across

    row = {"min_vb": -10.0, "min_vc": 4.0, "min_vn": -1.2, "max_vb": -9.0, "max_vc": 3.5, "max_vn": -1.1}
    got = dc_across(SPLIT_CE_NAME, row)
    assert got == {"CIN": 10.0, "COUT": 4.0, "CE": 1.2}


def test_request_form_reads_the_rails():
    from tui import request_fields as rf

    texts = {f.name: f.default for f in rf.FIELDS}
    spec, _, problems = rf.build_request({**texts, "negative_supply": "-12", "dc_input": "yes"},
                                         {"topology": SPLIT_CE_NAME})
    assert problems == {} and spec.negative_supply_v == -12.0 and spec.dc_input
    _, _, problems = rf.build_request({**texts, "negative_supply": "-12"}, {"topology": "common-emitter"})
    assert "one positive supply" in problems["negative_supply"]
    _, _, problems = rf.build_request(texts, {"topology": SPLIT_CE_NAME})
    assert "split supplies" in problems["negative_supply"]


def test_text_drawing_shows_rb_to_ground_and_the_negative_rail():
    from tui.schematic import draw_stage

    leaf = lambda line, **v: {**v, "network": {"line": line, **v}}  # noqa: E731
    design = {"topology": "split-emitter-follower",
              "parts": {"RB": leaf(2, ohms=22e3), "RE": leaf(3, ohms=3.3e3), "COUT": leaf(4, farads=1e-6),
                        "Q1": {"line": 5, "part": "BC547B"}},
              "predicted": {"vb": -0.01, "ve": -0.69, "vc": 9.0}}
    text = draw_stage(design, supply_v=9, negative_supply_v=-9, polarised=frozenset({"COUT"}))
    assert "RB 22k" in text and "R1" not in text and "R2" not in text
    assert text.splitlines()[-1].startswith("-9 V ─")  # the emitter's rail under ground
    assert "┤├+" in text  # the output rests below ground: COUT's + lead toward the load
    assert "DC-coupled" in text  # no CIN


def test_plus_minus_shorthand_is_both_rails(tmp_path):
    from tui.request_fields import rails_shorthand

    assert rails_shorthand("±12", "0") == ("12", "-12")
    assert rails_shorthand("+-9", None) == ("9", "-9")
    assert rails_shorthand("±12", "-5") == ("12", "-5")  # an explicit negative rail wins
    assert rails_shorthand("12", "0") == ("12", "0")
    done = subprocess.run([sys.executable, "-m", "tui", "analyze", "--topology", "split-emitter-follower",
                           "--rb", "22k", "--re", "3k3", "--supply", "±9", "--json"],
                          capture_output=True, text=True, timeout=60, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    # IE ≈ (9 − 0.65)/3.3k ≈ 2.5 mA (textbook); the emitter rests about one VBE below ground.
    p = json.loads(done.stdout)["predicted"]
    assert 2.2e-3 < p["ic"] < 2.6e-3 and -0.8 < p["ve"] < -0.5
