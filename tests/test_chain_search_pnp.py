"""The chain search on a drawer whose only transistors are PNP (tests/data/chain_drawer_pnp.csv, our own):
each chain kind gets all-PNP designs, every one re-checked by the independent chain verifier
(tests/helpers/verify_chain.py: each stage rebuilt from the drawer lines and solved alone, cascaded as
two-ports), in real polarity (README "PNP stages": each PNP's emitter above its base, its base above its
collector; a follower's collector on 0 V), with a netlist that keeps the contract (tests/deck_lint.py) and
PNP model cards.  On a drawer with one NPN and two PNPs the NPN line is left out with a note: a chain's
two transistors share a polarity.  The searches take 3–4 s each here (tests/chain_job.py)."""

from __future__ import annotations

import re

import pytest

from inventory.drawer import Drawer
from optimizer.search.select import find_designs
from tests.chain_job import LIMIT_S, PNP_DRAWER, PNP_JOBS, solved_pnp
from tests.deck_lint import lint
from tests.helpers.verify_chain import chain_failures

KINDS = sorted(PNP_JOBS)


@pytest.fixture(scope="module")
def drawer():
    return Drawer.load(PNP_DRAWER)


@pytest.mark.parametrize("kind", KINDS)
def test_a_pnp_only_drawer_gets_chains_of_every_kind(kind, drawer):
    spec, doc = PNP_JOBS[kind], solved_pnp(kind)
    assert doc["status"] == "found", doc["why"]
    assert any("PNP pairs" in w for w in doc["why"]) and not any("NPN-only" in w for w in doc["why"])
    for d in doc["designs"]:
        assert chain_failures(d, spec, drawer) == []
        assert max(c["thd"] for c in d["corners"].values()) <= spec.max_thd
        assert d["parts"]["Q1"]["polarity"] == d["parts"]["Q2"]["polarity"] == "PNP"
        assert lint(d["netlist"], list(d["parts"])) == []
        assert set(re.findall(r"(?m)^\.model QLINE\d+ (\w+)\(", d["netlist"])) == {"PNP"}
        assert d["yield"] is not None and 0.0 <= d["yield"] <= 1.0
        # Real polarity, at every corner: VE > VB > VC ≥ 0 for each PNP, a follower's collector on 0 V.
        for c in d["corners"].values():
            for suffix, stage in (("", d["stages"][0]), ("_b", d["stages"][1])):
                assert c["ve" + suffix] > c["vb" + suffix] > c["vc" + suffix] >= 0.0
                if stage["kind"] == "emitter-follower":
                    assert c["vc" + suffix] == 0.0
        # The same figures in the chain's "predicted" (Q1) and in its first stage's.
        assert d["predicted"]["vb"] == pytest.approx(d["stages"][0]["predicted"]["vb"], abs=1e-12)


def test_a_single_npn_is_left_out_with_a_note(tmp_path):
    path = tmp_path / "mixed.csv"
    text = PNP_DRAWER.read_text()
    path.write_text(text + "transistor,,1,,,,,2N3904,NPN,100,300,40V,200mA,625mW,D1,one NPN\n")
    kind = "common-emitter+emitter-follower"
    doc = find_designs(Drawer.load(path), PNP_JOBS[kind], time_limit_s=LIMIT_S)
    assert doc["status"] == "found", doc["why"]
    assert any("chains tried PNP pairs" in w and "NPN line(s) left out" in w for w in doc["why"])
    for d in doc["designs"]:
        assert d["parts"]["Q1"]["polarity"] == d["parts"]["Q2"]["polarity"] == "PNP"
