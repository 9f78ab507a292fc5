"""The build sheet's drawing: every fitted position drawn and labelled in RKM, at 80 columns."""

from __future__ import annotations

import pytest

from optimizer.parts.network_tree import Leaf, Parallel, Series, to_json
from optimizer.physics.stage import CAPACITOR_POSITIONS, RESISTOR_POSITIONS, TOPOLOGIES
from tui.schematic import draw_stage
from tui.sheet_text import network_text

pytestmark = pytest.mark.tui

# Values an invented stage might use; RKM spellings per IEC 60062 (4k7 = 4.7 kΩ, 220R = 220 Ω, 4u7 = 4.7 µF).
OHMS = {"R1": 47e3, "R2": 10e3, "RB": 100e3, "RC": 4.7e3, "RE": 4.7e3, "RE1": 220.0, "RE2": 1e3}
FARADS = {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 100e-6}
RKM = {47e3: "47k", 10e3: "10k", 100e3: "100k", 4.7e3: "4k7", 220.0: "220R", 1e3: "1k",
       4.7e-6: "4u7", 10e-6: "10u", 100e-6: "100u"}


def design(topology: str, **networks) -> dict:
    parts = {}
    for i, pos in enumerate(RESISTOR_POSITIONS[topology]):
        node = networks.get(pos, Leaf(OHMS[pos], 0.05, 10 + i))
        parts[pos] = {"ohms": OHMS[pos], "network": to_json(node)}
    for i, pos in enumerate(CAPACITOR_POSITIONS[topology]):
        parts[pos] = {"farads": FARADS[pos], "network": to_json(Leaf(FARADS[pos], 0.2, 50 + i), "farads")}
    parts["Q1"] = {"line": 99, "part": "BC547B"}
    return {"topology": topology, "parts": parts}


@pytest.mark.parametrize("topology", TOPOLOGIES)
def test_every_position_is_drawn_with_its_value(topology):
    d = design(topology)
    text = draw_stage(d, supply_v=12.0, source_ohms=1e3, load_ohms=22e3, polarised=frozenset({"COUT"}))
    assert max(len(line) for line in text.splitlines()) <= 78  # fits an 80-column terminal
    for pos, entry in d["parts"].items():
        if pos == "Q1":
            assert "Q1 BC547B" in text
            continue
        value = entry.get("ohms", entry.get("farads"))
        assert f"{pos} {RKM[value]}" in text, pos
    assert "+12 V" in text and "0 V" in text and "load 22 kΩ" in text and "source 1 kΩ" in text  # not parts: SI
    assert "+┤├" in text  # the polarised output capacitor shows its + side
    assert any(ch in text for ch in "┌┐└┘├┤┬┴┼")


def test_networks_are_spelled_out():
    series = Series((Leaf(4.7e3, 0.05, 3), Leaf(220.0, 0.05, 4)))
    nested = Parallel((Series((Leaf(1e3, 0.05, 5), Leaf(220.0, 0.05, 4))), Leaf(4.7e3, 0.05, 3)))
    assert network_text(to_json(series)) == "4k7+220R"
    assert network_text(to_json(nested)) == "(1k+220R)‖4k7"
    text = draw_stage(design("common-emitter", RC=series, R1=nested))
    assert "RC 4k7+220R" in text
    assert "R1 = (1k+220R)‖4k7" in text  # too long for the drawing: listed under it
