"""`drawerfit sheet`: the five formats for the demo job and for designs with every network shape,
and one clear message (exit 2) for a bad file or --pick."""

from __future__ import annotations

import csv
import io
import json
import re

import pytest

from inventory.values import format_capacitance, format_resistance
from optimizer.physics.analysis import analyze
from optimizer.physics.deck import stage_of_design
from optimizer.physics.meter import meter_checks
from tests.deck_lint import lint
from tests.test_deck import spice_reads
from tests.sheet_files import save_demo, save_networks
from tui.cli import main
from tui.export.plots import decade_label


@pytest.fixture(scope="module")
def saved(tmp_path_factory):
    folder = tmp_path_factory.mktemp("sheet")
    demo = save_demo(folder)
    return {"demo": demo, "networks": save_networks(folder, demo), "folder": folder}


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def leaf_names(design: dict) -> list[str]:
    """Deck element names of every physical part (R1, R1_2 …), from the design's netlist."""
    return [ln.split()[0] for ln in design["netlist"].splitlines() if ln[:1] in "RCQ"]


@pytest.mark.parametrize("fmt", ["html", "svg", "md", "csv", "cir"])
def test_every_format_is_written_atomically(saved, capsys, fmt):
    target = saved["folder"] / f"out.{fmt}"
    code, out, err = run(capsys, "sheet", str(saved["demo"]), "--format", fmt, "-o", str(target))
    assert code == 0, err
    text = target.read_text(encoding="utf-8")
    assert text and out == ""
    assert not list(saved["folder"].glob(f".out.{fmt}*"))  # no temporary file left beside it


def test_csv_is_the_pick_list(saved, capsys):
    doc = json.loads(saved["networks"].read_text())
    for pick, design in enumerate(doc["designs"], 1):
        code, out, _ = run(capsys, "sheet", str(saved["networks"]), "--pick", str(pick), "--format", "csv")
        assert code == 0
        rows = list(csv.DictReader(io.StringIO(out)))
        assert {"location", "line", "part", "value", "qty"} <= set(rows[0])
        assert sorted((int(r["line"]), int(r["qty"])) for r in rows) == sorted((u["line"], u["qty"]) for u in design["uses"])
        assert len({r["line"] for r in rows}) == len(rows)  # one row per drawer line taken
        locs = [r["location"] for r in rows]
        assert locs == sorted(locs, key=lambda s: [int(t) if t.isdigit() else t for t in re.findall(r"\d+|\D+", s)])


@pytest.mark.parametrize("pick", [1, 2, 3, 4])
def test_svg_labels_every_part_with_its_rkm_value(saved, capsys, pick):
    doc = json.loads(saved["networks"].read_text())
    design = doc["designs"][pick - 1]
    code, out, _ = run(capsys, "sheet", str(saved["networks"]), "--pick", str(pick), "--format", "svg")
    assert code == 0 and out.lstrip().startswith("<svg")
    text = " ".join(t.strip() for t in re.findall(r">([^<>]+)<", out))
    assert "Q1" in text and design["parts"]["Q1"]["part"] in text
    for line in design["netlist"].splitlines():
        if line[:1] in "RC":  # each part beside its value in RKM (IEC 60062): 4.7k → 4k7, 470 → 470R
            name, value = line.split()[0], spice_reads(line.split()[3])
            rkm = format_resistance(value) if name[0] == "R" else format_capacitance(value)
            assert re.search(rf"(^|\s){re.escape(name)}\s+{re.escape(rkm)}(\s|$)", text), (name, rkm)


def test_markdown_holds_the_sheet(saved, capsys):
    code, out, _ = run(capsys, "sheet", str(saved["networks"]), "--format", "md")
    assert code == 0
    for heading in ("## Pick list", "## Meter checks", "## Predicted figures", "## Safety", "## SPICE netlist"):
        assert heading in out
    assert "(RC 4k7 + RC_2 1k) ‖ RC_3 10k" in out
    assert "licensed practice" in out


def test_html_is_self_contained(saved, capsys):
    code, out, _ = run(capsys, "sheet", str(saved["demo"]), "--format", "html")
    assert code == 0
    assert out.startswith("<!DOCTYPE html>") and out.count("<svg") == 3
    assert not re.search(r"<script|<link|\ssrc=|url\((?!#)|https?://(?!www\.w3\.org)", out)
    assert len(re.findall(r"local (electrical )?codes", out)) >= 1


def test_cir_deck_keeps_the_contract_before_the_bench(saved, capsys):
    doc = json.loads(saved["demo"].read_text())
    design = doc["designs"][0]
    assert lint(design["netlist"], design["parts"].keys()) == []
    code, out, _ = run(capsys, "sheet", str(saved["demo"]), "--format", "cir")
    assert code == 0
    assert out.startswith(design["netlist"].split(".model")[0])
    for cmd in (".op", ".ac", ".tran", ".four", "RL out 0 22k", "RS src in 1k"):
        assert cmd in out


@pytest.mark.parametrize("argv, expect", [
    (["sheet", "{missing}", "--format", "csv"], "cannot read it"),
    (["sheet", "{garbage}", "--format", "csv"], "not a saved design file"),
    (["sheet", "{demo}", "--pick", "0", "--format", "csv"], "--pick: 0"),
    (["sheet", "{demo}", "--pick", "9", "--format", "csv"], "holds 2 design(s)"),
    (["sheet", "{demo}", "--pick", "two", "--format", "csv"], "--pick: 'two' is not a whole number"),
    (["sheet", "{demo}", "--format", "csv", "-o", "{folder}/no/such/dir/x.csv"], "-o "),
    (["sheet", "{partless}", "--format", "html"], "partless.json: designs[0].parts: expected an object"),
])
def test_bad_input_is_one_line_and_exit_2(saved, capsys, argv, expect):
    garbage = saved["folder"] / "garbage.json"
    garbage.write_text("{not json")
    partless = saved["folder"] / "partless.json"
    partless.write_text('{"designs": [{"topology": "common-emitter"}]}')
    subst = {"missing": str(saved["folder"] / "missing.json"), "garbage": str(garbage), "demo": str(saved["demo"]),
             "partless": str(partless), "folder": str(saved["folder"])}
    code, out, err = run(capsys, *[a.format(**subst) for a in argv])
    assert code == 2
    assert expect in err and len(err.strip().splitlines()) == 1 and "Traceback" not in err


def test_meter_range_spans_the_hfe_and_temperature_corners(saved):
    doc = json.loads(saved["demo"].read_text())
    design, spec = doc["designs"][0], doc["spec"]
    stage = stage_of_design(design, spec)
    hfe = design["hfe"]
    rows = meter_checks(stage, (hfe["min"], hfe["typical"], hfe["max"]), (0.0, 27.0, 50.0))
    for row in rows:
        key = row["point"].lower()
        assert row["low"] <= row["typical"] <= row["high"]
        assert row["typical"] == pytest.approx(design["predicted"][key], abs=1e-6)
        for corner in ("min", "max"):  # the saved figures at the hFE ends (27 °C) lie inside the range
            assert row["low"] - 1e-9 <= design["at_hfe"][corner][key] <= row["high"] + 1e-9
    # VBE falls about 2 mV/°C (a fact of the trade for silicon junctions), so VE spans more than hFE alone gives:
    # an NPN's emitter rises when hot, a PNP's (its emitter side to +V) falls.
    ve = next(r for r in rows if r["point"] == "VE")
    hot = analyze(stage.__class__(**{**stage.__dict__, "temp_c": 50.0})).predicted["ve"]
    if design["parts"]["Q1"].get("polarity") == "PNP":
        assert ve["low"] <= hot < design["predicted"]["ve"]
    else:
        assert ve["high"] >= hot > design["predicted"]["ve"]


def test_decade_labels_are_whole_decades():
    assert [decade_label(x) for x in (1, 10, 100, 1e3, 1e4, 1e5, 1e6)] == ["1", "10", "100", "1k", "10k", "100k", "1M"]
    assert decade_label(31622.8) == "" and decade_label(0) == ""
