"""The ngspice cross-check of a chain (optimizer.chain.crosscheck, the app's `n` panel) and the chain's
printed SPICE bench, against ngspice itself (an independent simulator) on the chain's own deck."""

from __future__ import annotations

import json
import re
import subprocess

import pytest

from optimizer.chain.crosscheck import FIGURES, crosscheck_chain, with_bfs
from tests.chain_designs import KINDS
from tests.chain_sheet_files import save_chains
from tests.conftest import need_program
from tui.crosscheck_text import table_rows
from tui.cli import main

pytestmark = pytest.mark.ngspice
# Tolerances as in tests/test_chain_ngspice.py (the chain solver against ngspice on the same decks).
DC_V, GAIN_REL, RIN_REL, F_LOW_REL, THD_REL, THD_ABS = 5e-3, 0.005, 0.01, 0.02, 0.1, 2e-4


@pytest.fixture(scope="module")
def chains(tmp_path_factory):
    need_program("ngspice")
    return save_chains(tmp_path_factory.mktemp("chain-xcheck"))


@pytest.mark.parametrize("kind", KINDS)
def test_crosscheck_agrees_at_both_transistors_corners(chains, kind):
    doc = json.loads(chains[kind].read_text())
    design = doc["designs"][0]
    check = crosscheck_chain(design, doc["spec"], timeout_s=120)
    assert check.available and check.ok, check.message
    assert {(r["figure"], r["corner"]) for r in check.rows} == {(f, c) for f, _, _ in FIGURES
                                                                 for c in ("min", "typical", "max")}
    for r in check.rows:
        assert r["drawerfit"] is not None and r["ngspice"] is not None, r
        if r["unit"] == "V":
            assert abs(r["deviation"]) < DC_V, r
        elif r["figure"] == "gain":
            assert abs(r["relative"]) < GAIN_REL, r
        elif r["figure"] == "rin":
            assert abs(r["relative"]) < RIN_REL, r
        elif r["figure"] == "f_low":
            assert abs(r["relative"]) < F_LOW_REL, r
        elif r["figure"] == "thd":
            assert r["ngspice"] == pytest.approx(r["drawerfit"], rel=THD_REL, abs=THD_ABS), r
    # Each corner sets each transistor to its own line's hFE; the table names Q2's voltages and both hFEs.
    typical = next(r for r in check.rows if r["corner"] == "typical" and r["figure"] == "vb_b")
    assert (typical["hfe"], typical["hfe_b"]) == (design["hfe"]["typical"], design["hfe_b"]["typical"])
    shown = table_rows(check.rows)
    assert any(row[0] == "Q2 base (no signal)" for row in shown)
    assert any(row[0] == "Q1 collector (no signal)" for row in shown)


def test_a_wrong_figure_is_caught(chains):
    """The check can fail: a design whose saved Q2 collector voltage is off by 0.5 V shows that deviation."""
    doc = json.loads(chains[KINDS[0]].read_text())
    design = doc["designs"][0]
    design["stages"][1]["predicted"]["vc"] += 0.5
    check = crosscheck_chain(design, doc["spec"], timeout_s=120)
    row = next(r for r in check.rows if r["corner"] == "typical" and r["figure"] == "vc_b")
    assert row["deviation"] == pytest.approx(-0.5, abs=DC_V)


def test_each_card_gets_its_own_lines_hfe():
    deck = ".model QLINE3 NPN(IS=1e-14 BF=100 BR=1)\n.model QLINE7 NPN(IS=1e-14 BF=100 BR=1)\n.end\n"
    out = with_bfs(deck, {3: 150.0, 7: 420.0})
    assert "QLINE3 NPN(IS=1e-14 BF=150 " in out and "QLINE7 NPN(IS=1e-14 BF=420 " in out


@pytest.mark.parametrize("kind", KINDS)
def test_printed_bench_runs_in_ngspice(chains, kind, tmp_path):
    """The cir sheet runs as written: ngspice's DC point at the interstage node x equals the meter check of
    the node the sheet names there (Q1's emitter or collector)."""
    cir = tmp_path / "bench.cir"
    assert main(["sheet", str(chains[kind]), "--format", "cir", "-o", str(cir)]) == 0
    md = tmp_path / "sheet.md"
    assert main(["sheet", str(chains[kind]), "--format", "md", "-o", str(md)]) == 0
    done = subprocess.run([need_program("ngspice"), "-b", str(cir)], capture_output=True, text=True, timeout=120,
                          cwd=tmp_path)
    assert done.returncode == 0, done.stdout[-2000:] + done.stderr[-2000:]
    assert re.search(r"Fourier analysis for v\(out\)[^\n]*\n[^\n]*THD: [0-9.]+ %", done.stdout)  # .four ran
    # The .op printout (batch mode lists node voltages) against the meter row whose node is x.
    found = re.search(r"(?m)^\s*v?\(?x\)?\s+([-+0-9.e]+)\s*$", done.stdout)
    row = re.search(r"\| (Q1 V[EC]) \(x\) \| ([-0-9.]+) V \|", md.read_text())
    assert row and found, "the meter checks name the interstage node x, and ngspice lists it"
    assert float(found.group(1)) == pytest.approx(float(row.group(2)), abs=0.006)  # the sheet rounds to 10 mV
