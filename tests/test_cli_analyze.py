"""`drawerfit analyze`: the fixed option interface, JSON output, errors naming the option."""

from __future__ import annotations

import json

import pytest

from optimizer.physics.analysis import PREDICTED_KEYS
from tui.cli import main

EXAMPLE = ("--topology common-emitter --r1 56k --r2 12k --rc 4k7 --re1 470 --re2 680 --cin 4u7 --cout 10u "
           "--ce 220u --supply 12 --source 1k --load 22k --hfe 180 --vbe 0.65 --vaf 100 --temp 25 --swing 5").split()


def run(argv, capsys):
    code = main(["analyze", *argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_has_the_predicted_keys_in_si_units(capsys):
    code, out, _ = run([*EXAMPLE, "--json"], capsys)
    assert code == 0
    p = json.loads(out)["predicted"]
    assert set(p) == set(PREDICTED_KEYS)
    # Values in SI: volts, amperes, ohms, hertz; THD a fraction.  The hand estimate of this bias
    # (VTH = 12·12k/68k = 2.12 V, minus IB·RTH) puts VB just under 2.12 V and IC near 1.2 mA.
    assert 1.9 < p["vb"] < 2.12 and 1.0e-3 < p["ic"] < 1.4e-3
    assert p["gain"] < 0 and 0 < p["thd"] < 0.05 and 1 < p["f_low"] < 20


def test_sheet_shows_values_warnings_and_a_caution(capsys):
    code, out, _ = run(EXAMPLE, capsys)
    assert code == 0
    assert "Operating point" in out and "kΩ" in out and "THD" in out
    assert "polarised" in out.lower()


def test_bad_value_names_the_option(capsys):
    argv = [a if a != "56k" else "56q" for a in EXAMPLE]
    code, _, err = run(argv, capsys)
    assert code == 2
    assert '--r1: "56q" is not a resistance' in err
    assert "Traceback" not in err


def test_missing_position_names_it(capsys):
    code, _, err = run(["--topology", "common-emitter", "--r1", "56k", "--rc", "4k7"], capsys)
    assert code == 2 and "--r2" in err


def test_part_foreign_to_the_topology_is_refused(capsys):
    code, _, err = run(["--topology", "emitter-follower", "--r1", "27k", "--r2", "33k", "--re", "2k2",
                        "--rc", "1k"], capsys)
    assert code == 2 and "--rc" in err


@pytest.mark.parametrize("extra,position", [(["--ce", "100u"], "RE2"), ([], "RE1")])
def test_collector_feedback_re_means_re2_when_bypassed(extra, position, capsys):
    code, out, _ = run(["--topology", "collector-feedback", "--rb", "220k", "--rc", "4k7", "--re", "470",
                        "--cin", "1u", "--cout", "10u", "--source", "600", "--load", "10k", *extra, "--json"], capsys)
    assert code == 0
    assert position in json.loads(out)["dissipation_w"]


def test_netlist_is_written(tmp_path, capsys):
    target = tmp_path / "stage.cir"
    code, _, _ = run([*EXAMPLE, "--netlist", str(target)], capsys)
    assert code == 0
    text = target.read_text()
    assert text.startswith("*") and "Q1 coll base emit QMOD" in text and text.rstrip().endswith(".end")
    assert not list(tmp_path.glob(".*.tmp"))  # the atomic write left no temporary file


def test_unwritable_netlist_is_an_input_error(tmp_path, capsys):
    code, _, err = run([*EXAMPLE, "--netlist", str(tmp_path / "missing" / "x.cir")], capsys)
    assert code == 2 and "--netlist" in err


@pytest.mark.parametrize("flag,text", [("--supply", "0"), ("--temp", "hot"), ("--swing", "20"), ("--hfe", "-5")])
def test_out_of_range_values_exit_2(flag, text, capsys):
    argv = list(EXAMPLE)
    if flag in argv:
        argv[argv.index(flag) + 1] = text
    else:
        argv += [flag, text]
    code, _, err = run(argv, capsys)
    assert code == 2 and flag in err
