"""`drawerfit design` and `drawerfit build`: exit codes, the JSON shape, save → build → undo."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import pytest
from tests.demo_job import DEMO

JOB = ["design", "--topology", "common-emitter", "--gain", "10", "--gain-tol", "0.05", "--supply", "12",
       "--load", "22k", "--source", "1k", "--swing", "5", "--low-cut", "30", "--min-rin", "8k", "--top", "3",
       "--depth", "1"]


def drawerfit(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "tui", *args], capture_output=True, text=True, cwd=cwd,
                          timeout=300)


@pytest.fixture
def drawer(tmp_path):
    path = tmp_path / "drawer.csv"
    shutil.copy(DEMO, path)
    return path


@pytest.fixture(scope="module")
def designed(tmp_path_factory):
    """`design JOB --json --save FILE` run once for the module on its own copy of the demo drawer:
    (the JSON it printed, the text of the file it saved).  The saved file names its drawer lines by
    content (the fingerprint), so each test builds it on its own fresh copy of the same drawer."""
    folder = tmp_path_factory.mktemp("designed")
    path = folder / "drawer.csv"
    shutil.copy(DEMO, path)
    saved = folder / "design.json"
    done = drawerfit("--inventory", str(path), *JOB, "--save", str(saved), "--json")
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout), saved.read_text()


def _node_ok(node, unit):
    if "series" in node or "parallel" in node:
        kids = node.get("series", node.get("parallel"))
        return len(kids) >= 2 and all(_node_ok(k, unit) for k in kids)
    return set(node) == {"line", unit} and isinstance(node["line"], int)


def test_json_shape_and_exit_0(designed):
    doc = designed[0]  # exit 0 checked where it is made
    assert set(doc) >= {"designs", "why", "hints"}
    assert 1 <= len(doc["designs"]) <= 3
    for d in doc["designs"]:
        assert d["topology"] == "common-emitter"
        assert set(d["predicted"]) == {"gain", "vb", "ve", "vc", "ic", "rin", "rout", "f_low", "swing_pp", "thd"}
        assert d["predicted"]["gain"] < 0
        for pos, part in d["parts"].items():
            if pos == "Q1":
                assert set(part) >= {"line", "part"}
            elif pos.startswith("R"):
                assert _node_ok(part["network"], "ohms") and part["ohms"] > 0
            else:
                assert _node_ok(part["network"], "farads") and part["farads"] > 0
        assert {"R1", "R2", "RC", "CIN", "COUT", "Q1"} <= set(d["parts"])
        if "RE2" not in d["parts"]:
            assert "CE" not in d["parts"]
        assert all(set(u) == {"line", "qty"} for u in d["uses"])
        assert set(d["at_hfe"]) == {"min", "max"}


def test_human_output_has_the_build_sheet(drawer):
    done = drawerfit("--inventory", str(drawer), *JOB)
    assert done.returncode == 0, done.stderr
    for word in ("BUILD SHEET", "VB", "VE", "VC", "yield", "THD", "polarised", "licensed practice"):
        assert word in done.stdout


def test_bad_input_exit_2(drawer):
    for bad in (["--gain", "0"], ["--supply", "-5"], ["--swing", "20"], ["--load", "22q"], ["--depth", "7"]):
        args = list(JOB)
        for i in range(0, len(bad), 2):
            k = args.index(bad[i]) if bad[i] in args else None
            if k is None:
                args += bad[i:i + 2]
            else:
                args[k + 1] = bad[i + 1]
        done = drawerfit("--inventory", str(drawer), *args)
        assert done.returncode == 2, (bad, done.stdout, done.stderr)
        assert bad[0] in done.stderr
        assert "Traceback" not in done.stderr


def test_infeasible_exit_3(drawer):
    args = [a if a != "12" else "5" for a in JOB]
    args[args.index("--swing") + 1] = "4.5"
    done = drawerfit("--inventory", str(drawer), *args, "--json", "--no-hints")
    assert done.returncode == 3
    doc = json.loads(done.stdout)
    assert doc["designs"] == [] and doc["why"]


def test_save_build_undo_restores_the_file(drawer, tmp_path, designed):
    before = drawer.read_bytes()
    saved = tmp_path / "design.json"
    saved.write_text(designed[1])  # what `design --save` wrote (the module's one run)
    doc = json.loads(saved.read_text())
    assert doc["spec"]["gain"] == 10 and doc["fingerprint"]["sha256"]
    done = drawerfit("--inventory", str(drawer), "build", str(saved), "--pick", "1")
    assert done.returncode == 0, done.stderr
    after = drawer.read_bytes()
    assert after != before
    done = drawerfit("--inventory", str(drawer), "undo")
    assert done.returncode == 0, done.stderr
    assert drawer.read_bytes() == before


def test_build_refuses_when_stock_changed(drawer, tmp_path, designed):
    saved = tmp_path / "design.json"
    saved.write_text(designed[1])  # what `design --save` wrote (the module's one run)
    line = json.loads(saved.read_text())["designs"][0]["uses"][0]["line"]
    assert drawerfit("--inventory", str(drawer), "count", str(line), "0").returncode == 0
    done = drawerfit("--inventory", str(drawer), "build", str(saved))
    assert done.returncode == 1  # refused by the drawer's state (README: exit codes)
    assert f"line {line}" in done.stderr
    done = drawerfit("--inventory", str(drawer), "build", str(saved), "--pick", "9")
    assert done.returncode == 2


def test_a_search_stopped_early_says_its_limit_plainly_and_claims_no_proof(drawer, capsys):
    """`design --topology any --gain 10 --swing 11 --time-limit 3` once said "within the 0.635237 s limit" (a
    kind's share of the limit, unrounded) and, with no tuple screened, that no combination of "the resistors on
    hand" passes the first checks, next to "not proven impossible"."""
    from tui.cli import main

    code = main(["--inventory", str(drawer), "design", "--gain", "10", "--swing", "11", "--time-limit", "0.6374",
                 "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 4 and doc["status"] == "unproven", doc["why"]
    assert any("within the 0.637 s limit" in w for w in doc["why"]), doc["why"]
    assert not any("the resistors on hand" in w for w in doc["why"]), doc["why"]
