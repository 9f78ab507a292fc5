"""Ratings: resistor dissipation against derated ratings, transistor limits, capacitor voltage and polarity."""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.parts import network_tree as nt
from optimizer.physics.ratings import check_ratings, part_dissipation
from optimizer.physics.screen import screen
from optimizer.physics.transistor import Transistor

Q = Transistor(name="Q", vceo_v=40.0, ic_max_a=0.1, pd_max_w=0.5)
CE = {"R1": 47e3, "R2": 10e3, "RC": 4.7e3, "RE1": 220.0, "RE2": 820.0}


def test_eighth_watt_resistor_at_a_tenth_of_a_watt_is_flagged():
    # Common practice, no source: run resistors at ≤ 50 % of their rating; 0.1 W in a 1/8 W part is 160 %.
    op = {"p_RC": np.asarray(0.1), "p_R1": np.asarray(0.01), "p_q": np.asarray(0.05),
          "ic": np.asarray(0.01), "vb": np.asarray(2.0), "vc": np.asarray(6.0), "ve": np.asarray(1.3),
          "vn": np.asarray(1.0)}
    rep = check_ratings("common-emitter", op, transistor=Q, supply_v=12.0,
                        resistor_power_w={"RC": 0.125, "R1": 0.125})
    assert float(rep.usage["RC"]) == pytest.approx(0.1 / 0.0625)
    assert not rep.ok
    text = rep.warnings()
    assert any(w.startswith("RC dissipation") for w in text)
    assert not any(w.startswith("R1") for w in text)  # 0.01 W of 0.0625 W allowed


def test_ratings_over_screen_arrays():
    op = screen("common-emitter", {**CE, "RC": np.array([4.7e3, 470.0])}, transistor=Q, supply_v=12.0,
                source_ohms=0.0, load_ohms=np.inf)
    rep = check_ratings("common-emitter", op, transistor=Q, supply_v=12.0,
                        resistor_power_w={p: 0.25 for p in CE}, capacitor_voltage_v={"CIN": 10.0, "COUT": 10.0})
    assert rep.ok.shape == (2,)
    # 12 V supply against a 40 V VCEO: 30 %; COUT sees VC: 5.7 V fits a 10 V part (8 V allowed),
    # 470 Ω leaves ~11.4 V, which does not
    assert float(rep.usage["Q1_vceo"][0]) == pytest.approx(12.0 / 40.0)
    assert rep.ok[0] and not rep.ok[1]
    assert any("COUT DC voltage" in w for w in rep.warnings(1))


@pytest.mark.parametrize(("topology", "r", "expected"), [
    ("common-emitter", CE, {"CIN": "+ toward the base", "COUT": "+ toward the collector",
                            "CE": "+ toward the emitter resistors"}),
    ("emitter-follower", {"R1": 22e3, "R2": 33e3, "RE": 2.2e3},
     {"CIN": "+ toward the base", "COUT": "+ toward the emitter"}),
])
def test_electrolytic_orientation_faces_the_higher_dc_voltage(topology, r, expected):
    # A polarised capacitor's + lead goes to the more positive DC side (manufacturers' data sheets,
    # common practice): the base, collector/emitter and the RE1–RE2 node all sit above 0 V here.
    op = screen(topology, r, transistor=Q, supply_v=12.0, source_ohms=0.0, load_ohms=np.inf)
    rep = check_ratings(topology, op, transistor=Q, supply_v=12.0,
                        capacitor_polarised={p: True for p in expected})
    assert {p: str(v) for p, v in rep.orientation.items()} == expected
    assert all(v > 0 for v in (float(op["vb"]), float(op["vc"]), float(op["ve"])))
    assert any("fit it with + toward the base" in w for w in rep.warnings())


def test_orientation_flips_when_the_far_side_is_higher():
    op = {"vb": np.array([1.5, -0.5]), "vc": np.array([6.0, 6.0]), "ve": np.array([0.9, 0.9]),
          "vn": np.array([0.7, 0.7]), "ic": np.array([1e-3, 1e-3])}
    rep = check_ratings("common-emitter", op, transistor=Transistor(), supply_v=12.0,
                        capacitor_polarised={"CIN": True})
    assert list(rep.orientation["CIN"]) == ["+ toward the base", "+ toward the source"]


def test_network_parts_share_the_dissipation():
    # Ohm's law: series parts share P in proportion to R, parallel parts inversely.
    node = nt.Series((nt.Leaf(1e3, 0.05, 1), nt.Parallel((nt.Leaf(2e3, 0.05, 2), nt.Leaf(2e3, 0.05, 3)))))
    shares = part_dissipation(node, 0.2)
    assert [round(p, 12) for _, p in shares] == [0.1, 0.05, 0.05]
    assert sum(p for _, p in shares) == pytest.approx(0.2)
