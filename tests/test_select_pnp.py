"""PNP lines in the design search: usable, searched exactly, mirrored, and offered beside NPN lines.

Oracles: the exhaustive enumeration (optimizer/search/oracle.py, no pruning, no budget order, no CP-SAT)
on a PNP-only drawer; the mirror itself (a PNP stage with the emitter side to +V is the NPN stage
with every node voltage V replaced by VCC − V: the same gain, Rin and trade-off counts, VB of the
PNP = VCC − VB of the NPN; circuit theory, checked against ngspice in tests/test_ngspice_pnp.py);
the README's capacitor rule (rated ≥ 1.5 × the DC across the part), recomputed here from the real
node voltages; and the netlist contract (tests/deck_lint.py).
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from inventory.drawer import Drawer
from inventory.parts import Part
from optimizer.search.candidates import QLine, transistor_of, usable_transistors
from optimizer.physics.deck import stage_of_design
from optimizer.physics.meter import meter_checks
from optimizer.search.oracle import oracle_front
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.deck_lint import lint
from tests.demo_job import DEMO
from tests.test_select_oracle import (CASES, SPEC_CLEAN, capacitors, check_preferred, check_stock, resistors,
                                      solver_front)


def pline(line, name, lo, hi, qty=5, polarity="PNP"):
    part = Part(line, "transistor", None, qty, part=name, polarity=polarity, hfe_min=lo, hfe_max=hi,
                vceo_v=40.0, ic_max_a=0.1, pd_max_w=0.5)
    return QLine(line, qty, transistor_of(part), name)


PNP_QS = [pline(50, "BC557B", 220, 475), pline(51, "2N3906", 100, 300, qty=1)]
NPN_TWINS = [pline(50, "BC557B", 220, 475, polarity="NPN"), pline(51, "2N3906", 100, 300, qty=1, polarity="NPN")]
HIGH_VOLTAGE_CAPS = capacitors([(40, 10e-6, 63.0, True, 3), (41, 1e-6, 63.0, False, 2), (42, 100e-6, 63.0, True, 1)])


def test_demo_drawer_offers_both_polarities():
    drawer = Drawer.load(DEMO)
    lines, notes = usable_transistors(drawer.transistors())
    assert {q.transistor.polarity for q in lines} == {"NPN", "PNP"}
    pnp = {q.name: q.transistor for q in lines if q.transistor.polarity == "PNP"}
    # The demo's PNP lines with their hFE ranges (inventory/demo/drawer.csv lines 113-114).
    assert (pnp["2N3906"].hfe_min, pnp["2N3906"].hfe_max) == (100, 300)
    assert (pnp["BC557B"].hfe_min, pnp["BC557B"].hfe_max) == (220, 475)
    assert not any("NPN-only" in n or "PNP" in n for n in notes)


@pytest.mark.parametrize("lines,depth,size", CASES[:2])
@pytest.mark.parametrize("prefer", ["balanced", "clean"])
def test_pnp_only_trade_off_set_matches_oracle(lines, depth, size, prefer):
    rs = resistors(lines)
    want = oracle_front(rs, HIGH_VOLTAGE_CAPS, PNP_QS, SPEC_CLEAN, depth=depth)
    got, sol = solver_front(rs, HIGH_VOLTAGE_CAPS, PNP_QS, SPEC_CLEAN, depth, prefer=prefer)
    assert got == want and want  # both cases have designs with these lines
    assert sol.exhaustive
    check_preferred(sol, want, prefer)
    check_stock(sol, rs, HIGH_VOLTAGE_CAPS, PNP_QS)
    # The mirror: with capacitors rated far above the supply, the NPN twins give the very same set.
    twin, _ = solver_front(rs, HIGH_VOLTAGE_CAPS, NPN_TWINS, SPEC_CLEAN, depth, prefer=prefer)
    assert twin == got


def _small_drawer(tmp_path, transistors, name):
    rows = ["kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,"
            "location,notes"]
    for k, (_, ohms, qty) in enumerate(CASES[0][0]):
        rows.append(f"resistor,{ohms:g},{qty},5%,0.25W,,,,,,,,,,R{k},")
    rows += ["capacitor,10u,3,20%,,63V,electrolytic,,,,,,,,C1,", "capacitor,1u,2,10%,,63V,film,,,,,,,,C2,",
             "capacitor,100u,1,20%,,63V,electrolytic,,,,,,,,C3,"]
    rows += [f"transistor,,5,,,,,{part},{pol},{lo},{hi},45V,100mA,500mW,D1," for part, pol, lo, hi in transistors]
    path = tmp_path / name
    path.write_text("\n".join(rows) + "\n")
    drawer = Drawer.load(path)
    assert not drawer.errors
    return drawer


def _values(design):
    return tuple(sorted((p, v.get("ohms") or v.get("farads")) for p, v in design["parts"].items() if p != "Q1"))


def test_mixed_drawer_offers_both_polarities(tmp_path):
    drawer = _small_drawer(tmp_path, [("N-LINE", "NPN", 200, 450), ("P-LINE", "PNP", 220, 475)], "mixed.csv")
    doc = find_designs(drawer, SPEC_CLEAN, top=20, depth=1, hints=False, time_limit_s=120)
    assert doc["status"] == "found" and doc["optimal"]
    assert {d["parts"]["Q1"]["polarity"] for d in doc["designs"]} == {"NPN", "PNP"}


def test_pnp_designs_are_the_mirror_of_npn_twins(tmp_path):
    docs = {pol: find_designs(_small_drawer(tmp_path, [("TWIN", pol, 200, 450)], f"{pol}.csv"), SPEC_CLEAN,
                              top=5, depth=1, hints=False, time_limit_s=120) for pol in ("NPN", "PNP")}
    assert docs["NPN"]["optimal"] and docs["PNP"]["optimal"]
    npn = {_values(d): d for d in docs["NPN"]["designs"]}
    pnp = {_values(d): d for d in docs["PNP"]["designs"]}
    assert npn.keys() == pnp.keys() and pnp
    vcc = SPEC_CLEAN.supply_v
    for values, p in pnp.items():
        n = npn[values]
        assert p["parts"]["Q1"]["polarity"] == "PNP" and n["parts"]["Q1"]["polarity"] == "NPN"
        # Same AC figures; node voltages mirrored about the supply (V_pnp = VCC − V_npn).
        for key in ("gain", "rin", "rout", "f_low", "swing_pp", "ic"):
            assert p["predicted"][key] == pytest.approx(n["predicted"][key], rel=1e-9, abs=1e-12), key
        assert p["predicted"]["thd"] == pytest.approx(n["predicted"]["thd"], rel=1e-6)
        for key in ("vb", "ve", "vc"):
            assert p["predicted"][key] == pytest.approx(vcc - n["predicted"][key], abs=1e-9), key
        for c in p["corners"]:
            assert p["corners"][c]["vb"] == pytest.approx(vcc - n["corners"][c]["vb"], abs=1e-9)


def _pnp_only_demo(tmp_path):
    lines = [ln for ln in DEMO.read_text().splitlines()
             if not (ln.startswith("transistor,") and ",NPN," in ln)]
    path = tmp_path / "drawer.csv"
    path.write_text("\n".join(lines) + "\n")
    return path


def test_cli_pnp_only_drawer_gives_pnp_designs(tmp_path):
    path = _pnp_only_demo(tmp_path)
    done = subprocess.run([sys.executable, "-m", "tui", "--inventory", str(path), "design", "--gain", "10",
                           "--supply", "9", "--depth", "1", "--top", "3", "--json", "--time-limit", "10",
                           # A short patience: the first design comes in well under a second (measured
                           # 0.2-0.3 s on this project's busy machines); what is checked is each design's
                           # polarity, deck and ratings, not how good the set is.
                           "--patience", "0.5", "--save", str(tmp_path / "pnp.json")],
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    doc = json.loads(done.stdout)
    assert doc["status"] == "found" and doc["designs"]
    spec = doc["spec"]
    for d in doc["designs"]:
        q = d["parts"]["Q1"]
        assert q["polarity"] == "PNP" and q["part"] in ("2N3906", "BC557B")
        p = d["predicted"]
        # A conducting PNP with its emitter side to +V: VC < VB < VE ≤ VCC.
        assert 0 < p["vc"] < p["vb"] < p["ve"] <= spec["supply_v"]
        assert p["gain"] < 0 and abs(abs(p["gain"]) / 10 - 1) <= 0.05 + 1e-9
        deck = d["netlist"]
        assert lint(deck, d["parts"]) == []
        assert f".model QLINE{q['line']} PNP(" in deck and "VCC vcc 0 DC 9" in deck
        # R1 runs from the base to 0 V, RC from the collector to 0 V, the emitter chain to +V.
        elements = {ln.split()[0]: ln.split()[1:3] for ln in deck.splitlines() if ln[:1] in "RCQ"}
        assert set(elements["R1"]) == {"0", "base"} and set(elements["RC"]) == {"0", "coll"}
        # The README's capacitor rule, from the real node voltages at every hFE corner.
        stage = stage_of_design(d, spec)
        meters = {m["point"]: m for m in meter_checks(stage, (d["hfe"]["min"], d["hfe"]["typical"],
                                                             d["hfe"]["max"]), (27.0,))}
        assert meters["VC"]["high"] < meters["VB"]["low"] and meters["VB"]["high"] < meters["VE"]["low"] <= 9.0
        for pos in ("CIN", "COUT"):
            part = d["parts"][pos]
            node = "VB" if pos == "CIN" else "VC"
            assert part["voltage_v"] >= 1.5 * meters[node]["high"] - 1e-9, (pos, part, meters[node])
        if "CE" in d["parts"]:
            # CE runs from the RE1–RE2 junction up to +V; its + lead faces the supply.
            assert "CE vcc " in deck or not d["parts"]["CE"]["polarised"]
    # The build sheet's drawing: 0 V on top (a ground mark), the +9 V rail below, a PNP symbol.
    svg = subprocess.run([sys.executable, "-m", "tui", "--inventory", str(path), "sheet", str(tmp_path / "pnp.json"),
                          "--format", "svg"], capture_output=True, text=True, timeout=300)
    assert svg.returncode == 0, svg.stderr
    assert ">0 V<" in svg.stdout and "+9 V (VCC)" in svg.stdout
    md = subprocess.run([sys.executable, "-m", "tui", "--inventory", str(path), "sheet", str(tmp_path / "pnp.json"),
                         "--format", "md"], capture_output=True, text=True, timeout=300)
    assert md.returncode == 0 and "PNP(" in md.stdout


def test_pnp_only_drawer_without_hfe_says_why(tmp_path):
    path = tmp_path / "drawer.csv"
    path.write_text("kind,value,qty,part,polarity\nresistor,10k,5,,\ncapacitor,10u,5,,\n"
                    "transistor,,3,MYSTERY,PNP\n")
    doc = find_designs(Drawer.load(path), Spec(), depth=1, hints=False, time_limit_s=5)
    assert doc["designs"] == []
    text = " ".join(doc["why"])
    assert "no usable transistor line" in text and "NPN-only" not in text
