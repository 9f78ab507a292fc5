"""The corner verifier (tests/helpers/verify.py) on hand-built designs.

A good stage passes; deliberately bad ones fail for the right reason.  The stage's THD is
compared with ngspice's `.four` (marked `ngspice`): the oracle is ngspice simulating the same
netlist (optimizer.physics.netlist) with the same Gummel–Poon card.
"""

from __future__ import annotations

import copy
import re
from collections import Counter
from dataclasses import replace

import pytest

from inventory.drawer import Drawer
from optimizer.spec import Spec
from tests.conftest import need_program
from tests.helpers.verify import Failure, failures, stage_at, thd_against_ngspice, verify_design

RESISTORS = ("100", "150", "220", "330", "470", "680", "1k", "1k5", "2k2", "3k3", "4k7", "6k8", "10k", "15k",
             "22k", "33k", "47k", "68k", "100k", "150k", "220k")
HEADER = ("kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,"
          "location,notes\n")
# Invented test stock; BC547B's hFE range and ratings from memory of typical datasheets.
CAPS = "capacitor,220n,4,10%,,63V,film,,,,,,,,C,\ncapacitor,1u,4,10%,,63V,film,,,,,,,,C,\n" \
       "capacitor,10u,4,20%,,25V,electrolytic,,,,,,,,C,\ncapacitor,100u,4,20%,,16V,electrolytic,,,,,,,,C,\n"
Q = "transistor,,5,,,,,BC547B,NPN,200,450,45V,100mA,500mW,D,\n"


def drawer_text(qty=None) -> str:
    qty = qty or {}
    rows = "".join(f"resistor,{v},{qty.get(v, 4)},5%,1/4W,,,,,,,,,,A,\n" for v in RESISTORS)
    return HEADER + rows + CAPS + Q


DRAWER = Drawer.parse(drawer_text(), "verify-test.csv")
LINES = {p.value: p.line for p in DRAWER.parts if p.kind in ("resistor", "capacitor")}
Q_LINE = DRAWER.transistors()[0].line
SPEC = Spec(gain=10, gain_tol=0.1, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=1.0, low_cut_hz=100)


def leaf(value, unit="ohms"):
    return {"line": LINES[value], unit: value}


def design(resistors: dict, caps: dict) -> dict:
    """A design document in find_designs' shape; a resistor value may be a ready network dict."""
    parts = {}
    for pos, v in resistors.items():
        net = v if isinstance(v, dict) else leaf(v)
        parts[pos] = {"ohms": _value(net), "network": net}
    for pos, v in caps.items():
        parts[pos] = {"farads": v, "network": leaf(v, "farads")}
    parts["Q1"] = {"line": Q_LINE, "part": "BC547B"}
    count = Counter()
    for entry in parts.values():
        for line in _lines(entry.get("network", entry)):
            count[line] += 1
    return {"topology": "common-emitter", "parts": parts,
            "uses": [{"line": k, "qty": n} for k, n in sorted(count.items())]}


def _value(net):
    if "series" in net:
        return sum(_value(n) for n in net["series"])
    if "parallel" in net:
        return 1 / sum(1 / _value(n) for n in net["parallel"])
    return net["ohms"]


def _lines(net):
    for key in ("series", "parallel"):
        if key in net:
            return [line for n in net[key] for line in _lines(n)]
    return [net["line"]]


GOOD = design({"R1": 150e3, "R2": 33e3, "RC": 10e3, "RE1": 680.0, "RE2": 1500.0},
              {"CIN": 220e-9, "COUT": 220e-9, "CE": 10e-6})


def checks(d, spec=SPEC, drawer=DRAWER) -> set[str]:
    return {f.check for f in failures(d, spec, drawer)}


def test_good_design_passes_every_corner():
    assert verify_design(GOOD, SPEC, DRAWER) == []


def test_series_network_is_rebuilt_from_the_drawer():
    # RC as 6k8 + 3k3 (10.1 kΩ): still a working stage, and the value is summed from the lines.
    d = design({"R1": 150e3, "R2": 33e3, "RC": {"series": [leaf(6800.0), leaf(3300.0)]}, "RE1": 680.0,
                "RE2": 1500.0}, {"CIN": 220e-9, "COUT": 220e-9, "CE": 10e-6})
    assert verify_design(d, SPEC, DRAWER) == []
    assert stage_at(d, SPEC, DRAWER).r("RC") == pytest.approx(10.1e3)


def test_document_value_that_disagrees_with_its_parts_fails():
    d = copy.deepcopy(GOOD)
    d["parts"]["RC"]["ohms"] = 4700.0
    assert "parts" in checks(d)


def test_no_emitter_resistor_at_high_gain_distorts():
    # Gain rests on re' alone: re' = Vt/IC swings with the signal, so the output distorts
    # (the trade's first lesson; the figure comes from the exact large-signal solve).
    spec = replace(SPEC, gain=50, gain_tol=0.2)
    d = design({"R1": 220e3, "R2": 15e3, "RC": 2200.0}, {"CIN": 1e-6, "COUT": 1e-6})
    found = failures(d, spec, DRAWER)
    thd = [f for f in found if f.check == "thd"]
    assert thd, found
    assert all(float(re.search(r"THD ([0-9.]+)%", f.text).group(1)) > 1.0 for f in thd)
    # The same bias with the emitter resistor in place is clean at this swing.
    assert "thd" not in checks(GOOD)


def test_vce_below_the_floor_fails():
    assert checks(GOOD, replace(SPEC, min_vce_v=4.5)) == {"vce"}
    starved = design({"R1": 220e3, "R2": 47e3, "RC": 15e3, "RE1": 680.0, "RE2": 1500.0},
                     {"CIN": 220e-9, "COUT": 220e-9, "CE": 10e-6})
    assert "vce" in checks(starved)


def test_rin_below_the_floor_fails():
    assert checks(GOOD, replace(SPEC, min_rin_ohms=50e3)) == {"rin"}


def test_overdrawn_stock_fails():
    empty = Drawer.parse(drawer_text({"10k": 0}), "verify-test.csv")
    found = failures(GOOD, SPEC, empty)
    assert [f.check for f in found] == ["stock"], found
    assert f"line {LINES[10e3]}" in found[0].text


def test_line_used_twice_needs_two():
    one = Drawer.parse(drawer_text({"220k": 1}), "verify-test.csv")
    d = design({"R1": {"series": [leaf(220e3), leaf(220e3)]}, "R2": 68e3, "RC": 10e3, "RE1": 680.0,
                "RE2": 1500.0}, {"CIN": 220e-9, "COUT": 220e-9, "CE": 10e-6})
    assert "stock" in checks(d, drawer=one)
    assert "stock" not in checks(d)


def test_uses_must_match_the_parts():
    d = copy.deepcopy(GOOD)
    d["uses"] = d["uses"][1:]
    assert checks(d) == {"uses"}


def test_wrong_kind_of_line_fails():
    d = copy.deepcopy(GOOD)
    d["parts"]["RC"]["network"] = {"line": Q_LINE, "ohms": 10e3}
    assert "parts" in checks(d)


def test_capacitor_rating_checked_per_part():
    # CE across RE2 sits near 0.7 V; a 0.8 V part would be > 80 % of its rating.  Put CIN
    # (at VB ≈ 2 V) on a line rated 1 V instead: it must fail as a rating.
    low = Drawer.parse(drawer_text().replace("capacitor,220n,4,10%,,63V", "capacitor,220n,4,10%,,1V"),
                       "verify-test.csv")
    found = [f for f in failures(GOOD, SPEC, low) if f.check == "rating"]
    assert found and all("CIN" in f.text or "COUT" in f.text for f in found)


def test_pnp_bypass_capacitor_holds_the_supply_less_its_junction():
    # A PNP stage is the NPN one with ground and the supply swapped, so CE (across RE2) returns to +V and
    # holds VCC − V(vn): what the NPN twin's CE holds to ground, about 0.7 V here, not V(vn) ≈ 11 V.  On
    # a 1 V line (80 % = 0.8 V) it must fail as a rating, on a 6.3 V line pass.
    pnp = Drawer.parse(drawer_text().replace("BC547B,NPN,200,450", "BC557B,PNP,220,475"), "verify-pnp.csv")
    assert verify_design(GOOD, SPEC, pnp) == []  # the 16/25 V parts of GOOD see under 1 V
    twin = stage_at(GOOD, SPEC, DRAWER, "min", 0.0)
    from optimizer.physics.analysis import analyze

    vn_twin = analyze(twin).operating_point["vmid"]
    for rating, fails in (("1V", True), ("6.3V", False)):
        low = Drawer.parse(drawer_text().replace("BC547B,NPN,200,450", "BC557B,PNP,220,475")
                           .replace("capacitor,10u,4,20%,,25V", f"capacitor,10u,4,20%,,{rating}"), "verify-pnp.csv")
        found = [f for f in failures(GOOD, SPEC, low) if f.check == "rating" and f.text.startswith("CE")]
        assert bool(found) is fails, (rating, found)
        for f in found:
            volts = float(re.search(r"sees ([\d.]+) V DC", f.text).group(1))
            assert volts == pytest.approx(vn_twin, abs=0.15), (f.text, vn_twin)


def test_temperature_corners_are_checked():
    # A spec whose range is 27 °C only has 2 corners; the default range has 6.
    wide = failures(GOOD, replace(SPEC, min_rin_ohms=1e9), DRAWER)
    narrow = failures(GOOD, replace(SPEC, min_rin_ohms=1e9, temp_range_c=(27.0, 27.0)), DRAWER)
    assert len({f.corner for f in wide}) == 6 and len({f.corner for f in narrow}) == 2
    assert isinstance(wide[0], Failure)


@pytest.mark.ngspice
@pytest.mark.parametrize("name", ["good", "no-RE"])
def test_thd_matches_ngspice_four(name):
    # Tolerance as tests/test_ngspice_stages.py: 20 % relative or 0.1 % absolute.
    d = GOOD if name == "good" else design({"R1": 220e3, "R2": 15e3, "RC": 2200.0}, {"CIN": 1e-6, "COUT": 1e-6})
    need_program("ngspice")
    stage = stage_at(d, SPEC, DRAWER, "min", 27.0)
    mine, spice_thd = thd_against_ngspice(stage, SPEC.swing_pp)
    print(f"{name}: THD {mine:.4%} (exact solve) vs {spice_thd:.4%} (ngspice .four)")
    assert abs(mine - spice_thd) <= max(0.2 * spice_thd, 1e-3), (mine, spice_thd)
