"""The SPICE deck: standard element lines, readable nodes, shorts for absent parts."""

from __future__ import annotations

import math

import pytest

from optimizer.physics.netlist import node_names, to_netlist
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor

Q = Transistor(bf=150.0, vaf_v=80.0)


def full_ce() -> Stage:
    return Stage("common-emitter", {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE1": 470, "RE2": 680},
                 {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 220e-6}, 12.0, 1e3, 22e3, Q, 25.0)


def elements(deck: str) -> dict[str, list[str]]:
    """Element name → its fields, for the R/C/V/Q lines (SPICE: first letter gives the kind)."""
    return {ln.split()[0]: ln.split()[1:] for ln in deck.splitlines() if ln[:1] in "RCVQ"}


def test_every_part_is_a_standard_element_line():
    deck = to_netlist(full_ce())
    e = elements(deck)
    assert e["R1"][:3] == ["vcc", "base", "56000"]
    assert e["RE1"][:3] == ["emit", "mid", "470"]
    assert e["CE"][:3] == ["mid", "0", "0.00022"]
    assert e["COUT"][:2] == ["coll", "out"]
    assert e["Q1"] == ["coll", "base", "emit", "QMOD"]
    assert e["VCC"] == ["vcc", "0", "DC", "12"]
    assert Q.spice_model("QMOD") in deck.splitlines()
    assert ".temp 25" in deck and ".options TNOM=27" in deck
    assert deck.rstrip().endswith(".end")


def test_analyses_are_selectable():
    deck = to_netlist(full_ce(), analyses="op|ac")
    assert ".op" in deck and ".ac dec" in deck and ".tran" not in deck
    with pytest.raises(ValueError, match="unknown analysis"):
        to_netlist(full_ce(), analyses="op|noise")


def test_tran_source_amplitude_gives_the_swing():
    deck = to_netlist(full_ce(), analyses="tran", swing_pp=2.0)
    sine = elements(deck)["VS"]
    amplitude = float(sine[sine.index("SIN(0") + 1])
    # The linear estimate swing/(2|gain|), |gain| ≈ 7 here; the large-signal value is close to it.
    assert amplitude == pytest.approx(1.0 / 7.03, rel=0.03)


def test_absent_parts_merge_nodes():
    st = Stage("common-emitter", {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE2": 1e3}, {"CIN": 1e-6},
               12.0, 0.0, math.inf, Q)
    names = node_names(st)
    assert names["mid"] == "emit"  # no RE1: emitter and RE1–RE2 node are one
    assert names["src"] == "in"  # no source resistance
    assert names["out"] == "coll"  # no COUT: the load hangs on the collector
    e = elements(to_netlist(st))
    assert e["RE2"][:2] == ["emit", "0"]
    assert e["RL"][:3] == ["coll", "0", "1e+12"]  # an open load's DC-path stand-in
    assert "RS" not in e and "CE" not in e and "RE1" not in e


def test_follower_collector_is_the_supply():
    st = Stage("emitter-follower", {"R1": 33e3, "R2": 33e3, "RE": 2.2e3}, {"CIN": 1e-6, "COUT": 10e-6},
               9.0, 600.0, 10e3, Q)
    e = elements(to_netlist(st))
    assert e["Q1"][:3] == ["vcc", "base", "emit"]
    assert e["COUT"][:2] == ["emit", "out"]
