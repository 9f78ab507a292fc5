"""The hand-method comparator (tests/bench/hand.py) and a small slice of the benchmark.

Handbook consistency: on an ideal drawer (every E96 value, plenty of each) the hand design's
exact gain at typical hFE lands near the gain asked for, and its bias near the textbook
targets.  The hand method itself is common practice, no source; the gain formula
|A| ≈ (RC‖RL)/(re' + RE1) is the standard small-signal result it rests on.
"""

from __future__ import annotations

import math
from collections import Counter

import pytest

from inventory.drawer import Drawer
from inventory.eseries import SERIES
from optimizer.physics.analysis import analyze
from optimizer.spec import Spec
from tests.bench import hand as hm
from tests.bench.specs import si_text
from tests.helpers.verify import failures, stage_at

HEADER = ("kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,"
          "location,notes\n")
# Transistor ranges from memory of typical datasheets, not a source.
BC547B = "transistor,,{q},,,,,BC547B,NPN,200,450,45V,100mA,500mW,D,\n"
N2N3904 = "transistor,,5,,,,,2N3904,NPN,100,300,40V,200mA,625mW,D,\n"


def ideal_drawer(qty: int = 1000, transistors: str = BC547B.format(q=5)) -> Drawer:
    rows = [f"resistor,{si_text(m * 10 ** d)},{qty},1%,0.25W,,,,,,,,,,A,\n" for d in range(1, 7) for m in SERIES["E96"]]
    rows += [f"capacitor,{m:g}{unit},{qty},10%,,63V,{'film' if unit == 'n' else 'electrolytic'},,,,,,,,C,\n"
             for unit in ("n", "u") for m in (1.0, 1.5, 2.2, 3.3, 4.7, 6.8, 10, 15, 22, 33, 47, 68, 100, 150, 220,
                                               330, 470, 680)]
    return Drawer.parse(HEADER + "".join(rows) + transistors, "ideal.csv")


IDEAL = ideal_drawer()
assert not IDEAL.errors, IDEAL.errors[:3]


@pytest.mark.parametrize("gain,supply,load", [(5, 12, 22e3), (10, 12, 22e3), (20, 15, 47e3), (10, 9, 10e3)])
def test_hand_design_meets_its_gain_on_an_ideal_drawer(gain, supply, load):
    spec = Spec(gain=gain, supply_v=supply, load_ohms=load, source_ohms=600, swing_pp=1.0, low_cut_hz=50)
    d = hm.hand_design(IDEAL, spec)
    report = analyze(stage_at(d, spec, IDEAL, "typical"))
    op = report.operating_point
    # Within 10 % of the asked gain: rounding to E96 (1 %) and the VBE/hFE approximations only.
    assert abs(report.predicted["gain"]) == pytest.approx(gain, rel=0.10)
    assert report.predicted["gain"] < 0  # common emitter inverts
    ve_target = max(supply / 10, 1.0)
    assert op["ve"] == pytest.approx(ve_target, rel=0.2)
    assert op["vc"] == pytest.approx(d["ideal"]["vc"], rel=0.15)
    # Capacitors at or above their ideal, rated ≥ 1.25 × the DC across them (with the estimate's slack).
    for pos in ("CIN", "COUT", "CE"):
        if pos in d["parts"]:
            assert d["parts"][pos]["farads"] >= d["ideal"][pos] * (1 - 1e-12)
    assert d["parts"]["CIN"]["voltage_v"] >= 1.25 * op["vb"] * 0.9


def test_low_cut_close_to_asked_on_an_ideal_drawer():
    spec = Spec(gain=10, supply_v=12, load_ohms=22e3, source_ohms=600, swing_pp=1.0, low_cut_hz=50)
    d = hm.hand_design(IDEAL, spec)
    f_low = analyze(stage_at(d, spec, IDEAL, "typical")).predicted["f_low"]
    # Three corners at low_cut/3 each combine to about the low cut (a rule of thumb).
    assert 0.3 * spec.low_cut_hz < f_low < 1.2 * spec.low_cut_hz


def test_counts_respected_when_every_line_holds_one():
    one = ideal_drawer(qty=1)
    spec = Spec(gain=10, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=1.0, low_cut_hz=100)
    d = hm.hand_design(one, spec)
    used = Counter()
    for u in d["uses"]:
        used[u["line"]] += u["qty"]
    assert all(one.part_at(line).qty >= n for line, n in used.items())
    assert not {f.check for f in failures(d, spec, one)} & {"stock", "uses", "parts"}
    # CIN and COUT want similar values: with one of each line they sit on different lines.
    assert d["parts"]["CIN"]["network"]["line"] != d["parts"]["COUT"]["network"]["line"]


def test_best_known_hfe_line_is_taken():
    lines = N2N3904 + BC547B.format(q=3) + "transistor,,0,,,,,BC549C,NPN,420,800,30V,100mA,500mW,D,\n"
    drawer = ideal_drawer(qty=10, transistors=lines)
    d = hm.hand_design(drawer, Spec(gain=10, supply_v=12))
    assert d["parts"]["Q1"]["part"] == "BC547B"  # BC549C has none left
    # A line whose VCEO is below the supply is passed over while a rated one exists.
    low = ideal_drawer(qty=10, transistors=N2N3904 + "transistor,,5,,,,,LOWV,NPN,300,600,20V,100mA,500mW,D,\n")
    assert hm.hand_design(low, Spec(gain=10, supply_v=24, swing_pp=2))["parts"]["Q1"]["part"] == "2N3904"


def test_no_npn_means_no_hand_design():
    pnp = ideal_drawer(qty=10, transistors="transistor,,5,,,,,BC557B,PNP,220,475,45V,100mA,500mW,D,\n")
    with pytest.raises(hm.NoHandDesign):
        hm.hand_design(pnp, Spec())


def test_ideal_values_follow_the_textbook_steps():
    spec = Spec(gain=10, supply_v=12, load_ohms=math.inf, source_ohms=0, swing_pp=2.0, low_cut_hz=100)
    v = hm.ideal_values(spec, 200)
    assert v["ve"] == pytest.approx(1.2)  # VCC/10
    assert v["RE1"] + v["RE2"] == pytest.approx(v["ve"] / v["ic"])  # RE = VE/IC
    assert v["vb"] == pytest.approx(v["ve"] + 0.65)
    # Stiff divider: the current through R2 is 10 × IB at hFE min.
    assert v["vb"] / v["R2"] == pytest.approx(10 * v["ic"] / 200)
    re_prime = hm.VT_V / v["ic"]
    assert v["RC"] / (re_prime + v["RE1"]) == pytest.approx(10, rel=1e-6)  # open load, no source


@pytest.mark.fuzz
def test_benchmark_slice_runs(capsys):
    """Three specs through the whole harness (child process, verifier, report)."""
    from tests.bench import specs
    from tests.bench.versus_hand import judge, report

    cases = specs.cases(200)
    rows = [judge(*cases[i], 5.0, i, 200, 9) for i in (0, 2, 3)]
    for r in rows:
        assert r["df"]["status"] in ("found", "infeasible", "unproven", "killed", "crashed", "error", "memory cap")
        assert r["df"]["wall"] > 0
        assert isinstance(r["hand"], list) and isinstance(r["df_fail"], list)
        if r["df"]["designs"]:
            assert len(r["df_all"]) == len(r["df"]["designs"])
    report(rows, 5.0, [])
    out = capsys.readouterr().out
    assert "drawerfit meets the spec" in out and "hand method meets the spec" in out
