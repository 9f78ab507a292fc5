"""PNP stages where a user sees them: `analyze --polarity pnp`, the meter checks, the drawings, the saved round trip.

The expected figures come from the mirror (a PNP stage with its emitter side to +V is the NPN stage with
every node voltage V replaced by VCC − V; circuit theory, and tests/test_ngspice_pnp.py holds drawerfit to
ngspice on real PNP circuits) and from the README's position roles for PNP stages.
"""

from __future__ import annotations

import json
from dataclasses import replace

import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.deck import netlist_of, stage_of_design
from optimizer.physics.meter import meter_checks
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor
from tui.cli import main
from tui.schematic import draw_stage

EXAMPLE = ("--topology common-emitter --r1 56k --r2 12k --rc 4k7 --re1 470 --re2 680 --cin 4u7 --cout 10u "
           "--ce 220u --supply 12 --source 1k --load 22k --hfe 180 --swing 2 --json").split()
NPN_STAGE = Stage("common-emitter", {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE1": 470.0, "RE2": 680.0},
                  {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 220e-6}, 12.0, 1e3, 22e3, Transistor(bf=180.0))
PNP_STAGE = replace(NPN_STAGE, transistor=replace(NPN_STAGE.transistor, polarity="PNP"))


def _analyze(argv, capsys):
    code = main(["analyze", *argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_analyze_polarity_pnp_mirrors_the_node_voltages(capsys):
    code, out, _ = _analyze(EXAMPLE, capsys)
    assert code == 0
    npn = json.loads(out)
    code, out, _ = _analyze([*EXAMPLE, "--polarity", "pnp"], capsys)
    assert code == 0
    pnp = json.loads(out)
    for key in ("vb", "ve", "vc"):
        assert pnp["predicted"][key] == pytest.approx(12.0 - npn["predicted"][key], abs=1e-9)
    for key in ("gain", "rin", "rout", "f_low", "swing_pp", "thd", "ic"):
        assert pnp["predicted"][key] == pytest.approx(npn["predicted"][key], rel=1e-9)
    # CIN carries VB (to the source at 0 V), COUT VC, CE the RE2 drop with its + toward +V.
    caps = pnp["capacitors"]
    assert caps["CIN"]["dc_v"] == pytest.approx(pnp["predicted"]["vb"], abs=1e-9)
    assert caps["COUT"]["dc_v"] == pytest.approx(pnp["predicted"]["vc"], abs=1e-9)
    assert caps["CE"]["dc_v"] == pytest.approx(npn["capacitors"]["CE"]["dc_v"], abs=1e-9)
    assert (caps["CIN"]["positive_node"], caps["COUT"]["positive_node"], caps["CE"]["positive_node"]) == \
        ("base", "coll", "vcc")
    assert npn["capacitors"]["CE"]["positive_node"] == "mid"


def test_analyze_pnp_needs_both_coupling_capacitors(capsys):
    argv = [a for a in EXAMPLE] + ["--polarity", "pnp"]
    i = argv.index("--cout")
    del argv[i:i + 2]
    code, _, err = _analyze(argv, capsys)
    assert code == 2 and "--polarity pnp" in err and "--cout" in err


def test_analyze_pnp_netlist_is_the_real_circuit(capsys, tmp_path):
    path = tmp_path / "pnp.cir"
    code, _, _ = _analyze([*EXAMPLE, "--polarity", "pnp", "--netlist", str(path)], capsys)
    assert code == 0
    deck = {ln.split()[0]: ln.split()[1:] for ln in path.read_text().splitlines() if ln and ln[0] in "RCQV"}
    # README "PNP stages": R1 base to 0 V, R2 base to +V, RC collector to 0 V, RE2 and CE to +V.
    assert set(deck["R1"][:2]) == {"base", "0"} and set(deck["R2"][:2]) == {"base", "vcc"}
    assert set(deck["RC"][:2]) == {"coll", "0"} and set(deck["RE2"][:2]) == {"mid", "vcc"}
    assert set(deck["CE"][:2]) == {"mid", "vcc"} and deck["RL"][:2] == ["out", "0"]
    assert deck["VCC"][:4] == ["vcc", "0", "DC", "12"]
    assert ".model QMOD PNP(" in path.read_text()


def test_meter_checks_read_in_real_polarity():
    hfe, temps = (100.0, 180.0, 300.0), (0.0, 27.0, 50.0)
    npn = {m["point"]: m for m in meter_checks(NPN_STAGE, hfe, temps)}
    pnp = {m["point"]: m for m in meter_checks(PNP_STAGE, hfe, temps)}
    for point in ("VB", "VE", "VC"):
        assert pnp[point]["typical"] == pytest.approx(12.0 - npn[point]["typical"], abs=1e-9)
        assert pnp[point]["low"] == pytest.approx(12.0 - npn[point]["high"], abs=1e-9)
        assert pnp[point]["high"] == pytest.approx(12.0 - npn[point]["low"], abs=1e-9)
    assert pnp["VC"]["high"] < pnp["VB"]["low"] < pnp["VE"]["low"] < 12.0


def _design(polarity="PNP"):
    report = analyze(PNP_STAGE)
    parts = {p: {"ohms": v, "network": {"line": 2, "ohms": v}} for p, v in PNP_STAGE.resistors.items()}
    parts.update({p: {"farads": v, "network": {"line": 3, "farads": v}, "polarised": p == "CE", "voltage_v": 25.0}
                  for p, v in PNP_STAGE.capacitors.items()})
    parts["Q1"] = {"line": 4, "part": "BC557B", "polarity": polarity}
    return {"topology": "common-emitter", "parts": parts, "predicted": report.predicted,
            "hfe": {"min": 100.0, "typical": 180.0, "max": 300.0}}


def test_saved_design_round_trip_keeps_the_polarity():
    design = _design()
    spec = {"supply_v": 12.0, "source_ohms": 1e3, "load_ohms": 22e3}
    stage = stage_of_design(design, spec)
    assert stage.transistor.polarity == "PNP" and stage.transistor.bf == 180.0
    assert analyze(stage).predicted["vb"] == pytest.approx(design["predicted"]["vb"], abs=1e-12)
    deck = netlist_of(design, spec)  # a file saved before decks existed: rebuilt from the parts
    assert ".model QLINE4 PNP(" in deck and "CE vcc mid" in deck  # + lead first: CE's + faces +V


def test_text_drawing_swaps_the_rails_for_a_pnp_stage():
    pnp = draw_stage(_design(), supply_v=12, load_ohms=22e3, polarised=frozenset({"CE"})).splitlines()
    npn = draw_stage(_design("NPN"), supply_v=12, load_ohms=22e3, polarised=frozenset({"CE"})).splitlines()
    assert npn[0].startswith("+12 V") and npn[-1].startswith("0 V")
    assert pnp[0].startswith("0 V") and pnp[-1].startswith("+12 V")
    assert any("↖" in ln for ln in pnp) and not any("↖" in ln for ln in npn)
    # CE's '+' sits by its lower plate (toward +V) in the PNP drawing, by its upper plate in the NPN one.
    ce_pnp = next(i for i, ln in enumerate(pnp) if "CE " in ln)
    ce_npn = next(i for i, ln in enumerate(npn) if "CE " in ln)
    assert "+" in pnp[ce_pnp + 1] and "+" not in pnp[ce_pnp] and "+" in npn[ce_npn]
