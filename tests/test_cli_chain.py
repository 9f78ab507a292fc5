"""`drawerfit design` and `drawerfit analyze` with a chain: exit codes (0 found, 3 proven none,
4 nothing within the time limit), the JSON "stages", the deck against the netlist contract,
and the time limit kept."""

from __future__ import annotations

import json
import subprocess
import sys
import time

import pytest

from tests.chain_job import CLI_JOB as JOB
from tests.chain_job import DRAWER
from tests.deck_lint import lint


def drawerfit(*args):
    return subprocess.run([sys.executable, "-m", "tui", *args], capture_output=True, text=True, timeout=300)


@pytest.fixture(scope="module")
def saved(chain_saved):
    # `design --json --save` run once a session through the real command line (tests/conftest.py).
    return chain_saved


@pytest.fixture(scope="module")
def found(saved):
    return saved[0]


def test_design_finds_a_chain_exit_0_with_stages(found):
    doc = found
    assert doc["status"] == "found" and doc["optimal"] is False and doc["unexplored"]
    for d in doc["designs"]:
        assert d["topology"] == "common-emitter+emitter-follower"
        assert [s["kind"] for s in d["stages"]] == ["common-emitter", "emitter-follower"]
        for s in d["stages"]:
            assert set(s) == {"kind", "positions", "predicted"}
            assert set(s["predicted"]) >= {"gain", "vb", "ve", "vc", "ic", "rin", "rout"}
        assert lint(d["netlist"], list(d["parts"])) == []
        assert "Q2 " in d["netlist"] and "CIN_B " in d["netlist"]


def test_design_human_sheet_covers_both_stages(found):
    """The text `design` prints without --json (cmd_design.human, from the same document)."""
    from optimizer.spec import Spec
    from tui.cmd_design import human

    out = human(found, Spec(**{k: v for k, v in found["spec"].items() if k in Spec.__dataclass_fields__}))
    assert "stage 1: common-emitter" in out and "stage 2: emitter-follower" in out
    for meter in ("Q1 VB", "Q1 VE", "Q1 VC", "Q2 VB", "Q2 VE", "Q2 VC"):
        assert meter in out
    # The chain's Monte Carlo yield, spelled as a single stage's.
    from tui.widgets import figures

    share = figures.percent(found["designs"][0]["yield"])
    assert f"Monte Carlo yield (tolerances, hFE, VBE, temperature): {share}" in out
    assert 0.0 <= found["designs"][0]["yield"] <= 1.0
    assert "not proven optimal" in out


def test_sheet_files_of_a_chain(saved, tmp_path):
    """The pick list names both stages' positions; the SPICE bench runs the chain's own deck; the Markdown
    sheet covers both stages (tests/test_sheet_chain.py checks every format in depth)."""
    _, path = saved
    csv = drawerfit("--inventory", str(DRAWER), "sheet", str(path), "--format", "csv")
    assert csv.returncode == 0, csv.stderr
    assert "Q2" in csv.stdout and "CIN_B" in csv.stdout
    cir = drawerfit("--inventory", str(DRAWER), "sheet", str(path), "--format", "cir")
    assert cir.returncode == 0, cir.stderr
    assert "Q2 " in cir.stdout and ".four" in cir.stdout and "RS src in" in cir.stdout
    md = drawerfit("--inventory", str(DRAWER), "sheet", str(path), "--format", "md")
    assert md.returncode == 0, md.stderr
    assert "## Stages" in md.stdout and "Q2 VC" in md.stdout and "CIN_B" in md.stdout


def test_one_npn_exits_3_naming_the_missing_transistor(tmp_path):
    path = tmp_path / "one.csv"
    path.write_text(DRAWER.read_text().replace("transistor,,2,", "transistor,,1,"))
    done = drawerfit("--inventory", str(path), *JOB, "--time-limit", "5")
    assert done.returncode == 3, done.stderr + done.stdout
    assert "lacks a second NPN" in done.stdout


def test_a_tiny_time_limit_exits_4_in_time():
    start = time.perf_counter()
    done = drawerfit("--inventory", str(DRAWER), *JOB, "--time-limit", "0.5", "--json")
    took = time.perf_counter() - start
    assert done.returncode == 4, done.stderr + done.stdout[-500:]
    doc = json.loads(done.stdout)
    assert doc["status"] == "unproven" and doc["designs"] == [] and doc["why"]
    # The limit plus the one-second overrun every command keeps to, plus starting Python (generous:
    # the interpreter and imports take about 1-2 s on this project's machines).
    assert took < 0.5 + 1.0 + 4.0


def test_analyze_takes_a_chain_and_refuses_mixed_options(tmp_path):
    deck = tmp_path / "chain.cir"
    done = drawerfit("analyze", "--topology", "emitter-follower+common-emitter", "--r1", "1M", "--r2", "1M5",
                     "--re", "15k", "--cin", "470n", "--r1-b", "47k", "--r2-b", "10k", "--rc-b", "3k3",
                     "--re1-b", "220", "--re2-b", "680", "--cin-b", "4u7", "--cout-b", "10u", "--ce-b", "220u",
                     "--source", "10k", "--load", "10k", "--swing", "2", "--json", "--netlist", str(deck))
    assert done.returncode == 0, done.stderr
    doc = json.loads(done.stdout)
    assert [s["kind"] for s in doc["stages"]] == ["emitter-follower", "common-emitter"]
    assert doc["predicted"]["gain"] < 0 and doc["predicted"]["thd"] > 0
    assert "Q2 " in deck.read_text()
    bad = drawerfit("analyze", "--topology", "common-emitter+common-emitter", "--r1", "47k", "--r2", "10k",
                    "--rc", "3k3", "--cout", "1u", "--r1-b", "47k", "--r2-b", "10k", "--rc-b", "3k3")
    assert bad.returncode == 2 and "--cin-b" in bad.stderr
    single = drawerfit("analyze", "--topology", "common-emitter", "--r1", "47k", "--r2", "10k", "--rc", "3k3",
                       "--r1-b", "1k")
    assert single.returncode == 2 and "second stage" in single.stderr
    missing = drawerfit("analyze", "--topology", "common-emitter+common-emitter", "--r1", "47k", "--r2", "10k",
                        "--rc", "3k3", "--r1-b", "47k", "--r2-b", "10k")
    assert missing.returncode == 2 and "--rc-b" in missing.stderr


@pytest.mark.slow  # a chain search of its own
def test_min_yield_is_a_constraint_for_a_chain():
    """Chains have a Monte Carlo yield now, so --min-yield is taken (it was refused while they had none):
    no chain below it is shown, and when none is left the reasons give the best yield seen."""
    from tests.chain_job import LIMIT_S

    done = drawerfit("--inventory", str(DRAWER), *JOB, "--min-yield", "90%", "--time-limit", f"{LIMIT_S:g}", "--json")
    assert done.returncode in (0, 4), done.stderr
    doc = json.loads(done.stdout)
    assert all(d["yield"] >= 0.9 for d in doc["designs"])
    if not doc["designs"]:
        assert any(w.startswith("--min-yield 0.9: the best Monte Carlo yield among chains") for w in doc["why"])


def test_a_short_time_limit_still_searches(capsys):
    """`design --topology common-emitter+emitter-follower … --time-limit 4` once ended at once (exit 4, "no
    time was left for this stage's search"): the follower designed first got 30 % of the search time, all
    of it the 0.8 s a stage search keeps for its wind-up.  Now the stage designed first gets at least its
    wind-up and half a second (optimizer/chain/search.py: STAGE_MIN_S)."""
    from tui.cli import main

    main(["--inventory", str(DRAWER), *JOB, "--time-limit", "4", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert doc["search"]["stage_searches"] >= 1, doc["why"]
    assert not any("no time was left" in w and "emitter-follower stage" in w for w in doc["why"])
