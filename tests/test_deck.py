"""The design netlist keeps its contract (README "The netlist of a design"), checked by tests/deck_lint.py,
and the checker itself catches a deck broken in each way the contract forbids."""

from __future__ import annotations

import re

import pytest

from optimizer.parts import network_tree
from optimizer.physics.deck import design_netlist, spice_value, stage_of_design
from tests.deck_designs import DESIGNS, SPEC
from tests.deck_lint import lint

# SPICE scale factors (ngspice manual, "Scale factors"); suffixes are case-insensitive.
SCALE = {"meg": 1e6, "k": 1e3, "": 1.0, "m": 1e-3, "u": 1e-6, "n": 1e-9, "p": 1e-12}


def spice_reads(text: str) -> float:
    m = re.fullmatch(r"([+-]?[\d.]+(?:e[+-]?\d+)?)(meg|k|m|u|n|p)?", text.lower())
    assert m, text
    return float(m.group(1)) * SCALE[m.group(2) or ""]


def deck_of(name: str) -> tuple[str, dict]:
    d = DESIGNS[name]
    return design_netlist(stage_of_design(d, SPEC), d["parts"]), d


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_decks_keep_the_contract(name):
    deck, d = deck_of(name)
    assert lint(deck, d["parts"].keys()) == []


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_every_physical_part_is_one_line_with_its_drawer_line(name):
    deck, d = deck_of(name)
    elements = [ln for ln in deck.splitlines() if ln[:1] in "RC" and not ln.startswith("*")]
    want = []
    for pos, part in d["parts"].items():
        if pos != "Q1":
            unit = "ohms" if "ohms" in part else "farads"
            want += [(leaf.line, leaf.value) for leaf in network_tree.leaves(network_tree.from_json(part["network"], unit_key=unit))]
    got = [(int(ln.rsplit("line", 1)[1]), spice_reads(ln.split()[3])) for ln in elements]
    assert sorted(got) == sorted((line, pytest.approx(v, rel=1e-9)) for line, v in want)


@pytest.mark.parametrize("x", [0.47, 2.2, 10.0, 120.0, 4700.0, 68e3, 1e6, 2.2e6, 10e6, 4.7e-6, 100e-9, 47e-12, 0.5e-3, 12.0])
def test_spice_value_reads_back(x):
    text = spice_value(x)
    assert spice_reads(text) == pytest.approx(x, rel=1e-12)
    assert not text.endswith("M")


GOOD = """* a stage
R1 vcc base 47k ; line 5
R1_2 base in 10k ; line 6
CIN in base 4.7u ; line 9
Q1 out base 0 QLINE3 ; line 3
VCC vcc 0 DC 12
.model QLINE3 NPN(IS=1e-14 BF=200)
.end
"""
POSITIONS = ("R1", "CIN", "Q1")


def test_lint_passes_the_good_example():
    assert lint(GOOD, POSITIONS) == []


@pytest.mark.parametrize("bad, expect", [
    (GOOD.replace("* a stage\n", ""), "not a title"),
    (GOOD.replace(".end\n", ""), "end with .end"),
    (GOOD.replace("47k", "4k7"), "RKM"),
    (GOOD.replace("47k", "2M"), "milli"),
    (GOOD.replace("47k", "47kohm"), "not a SPICE number"),
    (GOOD.replace(" ; line 5", ""), "line N"),
    (GOOD.replace("R1_2 base", "RX base"), "position name"),
    (GOOD.replace("R1_2 base", "R1_1 base"), "position name"),
    (GOOD.replace("base 0 QLINE3", "base gnd QLINE3"), "ground alias"),
    (GOOD.replace("VCC vcc 0 DC 12", "VCC vcc 0 DC 12\nVS src 0 AC 1"), "not a supply"),
    (GOOD.replace("VCC vcc 0 DC 12", "VCC vcc 0 DC -12"), "wrong sign"),
    (GOOD.replace("VCC vcc 0 DC 12", "VCC vcc 0 DC 12\nVEE vee 0 DC 12"), "wrong sign"),
    (GOOD.replace(".end", "RL out 0 22k ; line 1\n.end"), "position name"),
    (GOOD.replace(".end", ".op\n.end"), ".op is not allowed"),
    (GOOD.replace(".end", ".include x.lib\n.end"), ".include is not allowed"),
    (GOOD.replace(".end", ".subckt amp a b\n.ends\n.end"), ".subckt is not allowed"),
    (GOOD.replace(".end", "L1 a b 1m ; line 2\n.end"), "not a resistor"),
    (GOOD.replace(".end", "E1 a 0 b 0 10 ; line 2\n.end"), "not a resistor"),
    (GOOD.replace(".end", "X1 a b amp ; line 2\n.end"), "not a resistor"),
    (GOOD.replace("R1_2 base in 10k", "R1_2 base in 10k 5"), "fields"),
    (GOOD.replace("R1_2 base in 10k", "R1 base in 10k"), "named twice"),
    (GOOD.replace("Q1 out base", "Q1 coll base"), "'out' is missing"),
    (GOOD.replace("VCC vcc 0 DC 12\n", ""), "no VCC"),
])
def test_lint_catches_each_broken_rule(bad, expect):
    problems = lint(bad, POSITIONS)
    assert any(expect in p for p in problems), problems
