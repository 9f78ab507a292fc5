"""`drawerfit sheet` on two-stage chains: every format covers both stages (drawings, every part with its
drawer line and place, the meter checks of both transistors, each stage's and the chain's figures, the
cautions), and the meter readings are the chain's own node voltages.

The chain files are made once per module from hand-made chains (tests/chain_sheet_files.py), no search.
"""

from __future__ import annotations

import csv
import io
import json
import re
from html.parser import HTMLParser

import pytest

from inventory.values import format_capacitance, format_resistance
from optimizer.chain.circuit import build_net, operating_point
from optimizer.chain.deck import chain_of_design, deck_nodes
from optimizer.chain.meter import chain_meter_checks
from tests.chain_designs import KINDS
from tests.chain_sheet_files import save_chains
from tests.test_deck import spice_reads
from tui.cli import main
from tui.schematic_chain import draw_chain

FORMATS = ("html", "svg", "md", "csv", "cir")
VOID = {"meta", "br", "img", "input", "hr", "link", "col", "area", "base", "source", "wbr", "path", "use",
        "circle", "line", "rect", "polyline", "polygon", "ellipse", "stop"}


@pytest.fixture(scope="module")
def chains(tmp_path_factory):
    folder = tmp_path_factory.mktemp("chain-sheets")
    files = save_chains(folder)
    out = {}
    for kind, path in files.items():
        doc = json.loads(path.read_text())
        texts = {}
        for fmt in FORMATS:
            target = folder / f"{path.stem}.{fmt}"
            assert main(["sheet", str(path), "--format", fmt, "-o", str(target)]) == 0
            texts[fmt] = target.read_text(encoding="utf-8")
        out[kind] = {"path": path, "doc": doc, "design": doc["designs"][0], "text": texts}
    return out


def leaf_names(design: dict) -> list[str]:
    """Deck element names of every physical part (R1, R1_2 … CIN_B, Q2), from the design's netlist."""
    return [ln.split()[0] for ln in design["netlist"].splitlines() if ln[:1] in "RCQ"]


def visible_text(markup: str) -> str:
    return " ".join(t.strip() for t in re.findall(r">([^<>]+)<", markup))


@pytest.mark.parametrize("kind", KINDS)
def test_every_format_names_every_part(chains, kind):
    c = chains[kind]
    names = leaf_names(c["design"])
    assert {"Q1", "Q2", "CIN_B"} <= set(names)
    for fmt in ("html", "svg", "md", "cir"):
        text = visible_text(c["text"][fmt]) if fmt in ("html", "svg") else c["text"][fmt]
        for name in names:
            assert re.search(rf"(^|[\s(|]){re.escape(name)}($|[\s,)|])", text), (fmt, name)


@pytest.mark.parametrize("kind", KINDS)
def test_svg_draws_both_stages_with_rkm_values(chains, kind):
    c = chains[kind]
    text = visible_text(c["text"]["svg"])
    assert c["text"]["svg"].lstrip().startswith("<svg")
    for q in ("Q1", "Q2"):
        assert re.search(rf"{q}\s+{re.escape(c['design']['parts'][q]['part'])}", text), q
    for line in c["design"]["netlist"].splitlines():
        if line[:1] in "RC":  # each part beside its value in RKM (IEC 60062): 4.7k → 4k7, 470 → 470R
            name, value = line.split()[0], spice_reads(line.split()[3])
            rkm = format_resistance(value) if name[0] == "R" else format_capacitance(value)
            assert re.search(rf"(^|\s){re.escape(name)}\s+{re.escape(rkm)}(\s|$)", text), (name, rkm)


@pytest.mark.parametrize("kind", KINDS)
def test_pick_list_has_every_drawer_line_with_its_place(chains, kind):
    c = chains[kind]
    design = c["design"]
    rows = list(csv.DictReader(io.StringIO(c["text"]["csv"])))
    assert sorted((int(r["line"]), int(r["qty"])) for r in rows) == sorted((u["line"], u["qty"]) for u in design["uses"])
    positions = {p for r in rows for p in r["positions"].split(", ")}
    assert positions == set(design["parts"])  # every position, both stages', suffixed ones too
    q2 = next(r for r in rows if r["positions"] == "Q2")
    hfe_b = design["hfe_b"]
    assert q2["value"] == f"hFE {hfe_b['min']:g}–{hfe_b['max']:g}"  # Q2's own line's spread, not Q1's
    html_rows = re.findall(r"<tr><td>([^<]*)</td><td class=\"num\">(\d+)</td>", c["text"]["html"])
    md_rows = re.findall(r"^\| ([^|]*) \| (\d+) \|", c["text"]["md"], flags=re.M)
    for u in design["uses"]:
        place = design["locations"][str(u["line"])]
        assert (place, str(u["line"])) in html_rows, u
        assert (place, str(u["line"])) in md_rows, u


@pytest.mark.parametrize("kind", KINDS)
def test_meter_checks_are_the_chains_node_voltages(chains, kind):
    c = chains[kind]
    design, spec = c["design"], c["doc"]["spec"]
    chain = chain_of_design(design, spec)
    hfe1 = (design["hfe"]["min"], design["hfe"]["typical"], design["hfe"]["max"])
    hfe2 = (design["hfe_b"]["min"], design["hfe_b"]["typical"], design["hfe_b"]["max"])
    rows = chain_meter_checks(chain, hfe1, hfe2, (0.0, 27.0, 50.0))
    assert [(r["transistor"], r["point"]) for r in rows] == [(q, p) for q in ("Q1", "Q2") for p in ("VB", "VE", "VC")]
    # The typical reading is each transistor's node voltage as the chain analysis gave it (design "stages").
    for k, q in enumerate(("Q1", "Q2")):
        p = design["stages"][k]["predicted"]
        for r in (r for r in rows if r["transistor"] == q):
            assert r["typical"] == pytest.approx(p[r["point"].lower()], abs=1e-6), (q, r)
    # Every corner the search checked (each transistor at each hFE end, each temperature) lies in the range.
    for corner in design["corners"].values():
        for r in rows:
            key = r["point"].lower() + ("_b" if r["transistor"] == "Q2" else "")
            assert r["low"] - 1e-9 <= corner[key] <= r["high"] + 1e-9, (r, corner)
    # The node named is the netlist's: it carries the transistor's terminal there.
    net = build_net(chain)
    names = deck_nodes(net)
    for r, (q, (coll, base, emit)) in zip(rows, [(q, t) for q, t in zip(("Q1", "Q2"), net.qs) for _ in range(3)]):
        terminal = {"VB": base, "VE": emit, "VC": coll}[r["point"]]
        assert r["node"] == names[terminal]
        assert re.search(rf"(?m)^{q} \S+ \S+ \S+ ", design["netlist"])
    # What each sheet prints: the typical reading and the range, per transistor.
    for r in rows:
        label = f"{r['transistor']} {r['point']} ({r['node']})"
        expect = f"{r['typical']:.2f} V"
        span = f"{r['low']:.2f} V … {r['high']:.2f} V"
        assert re.search(rf"<td>{re.escape(label)}</td><td>{re.escape(expect)}</td><td>{re.escape(span)}</td>",
                         c["text"]["html"]), label
        assert f"| {label} | {expect} | {span} |" in c["text"]["md"], label
    # And the reading is the DC point of the whole chain solved afresh (capacitors open).
    op = operating_point(net)[0]
    for r, node in zip(rows[:3], (net.qs[0][1], net.qs[0][2], net.qs[0][0])):
        assert r["typical"] == pytest.approx(op[net.nodes.index(node)], abs=1e-9)


@pytest.mark.parametrize("kind", KINDS)
def test_stage_and_chain_figures_are_shown(chains, kind):
    c = chains[kind]
    design = c["design"]
    g1, g2 = (s["predicted"]["gain"] for s in design["stages"])
    # The stages' gains as the chain sees them multiply to the chain's gain (source EMF → x → load).
    assert g1 * g2 == pytest.approx(design["predicted"]["gain"], rel=1e-6)
    for fmt in ("html", "md"):
        text = c["text"][fmt]
        for k, s in enumerate(design["stages"], 1):
            assert s["kind"] in text and f"{s['predicted']['gain']:+.3g}" in text, (fmt, k)
        assert f"{design['predicted']['gain']:+.3g}" in text  # the chain's own gain, typical hFE
        for end in ("min", "max"):
            assert f"{design['at_hfe'][end]['gain']:+.3g}" in text
        assert "both at hFE min" in text and "of the whole chain" in text


@pytest.mark.parametrize("kind", KINDS)
def test_cautions_on_every_printed_sheet(chains, kind):
    c = chains[kind]
    design = c["design"]
    polarised = [p for p, part in design["parts"].items() if part.get("polarised")]
    assert polarised  # each chain here has an electrolytic capacitor
    for fmt in ("html", "md"):
        text = c["text"][fmt].replace("&#x27;", "'")
        for caution in design["cautions"]:
            assert caution in text, (fmt, caution)
        for p in polarised:
            assert f"{p} is polarised: fit its + lead toward" in text
        assert re.search(r"local (electrical )?codes", text)


class _Strict(HTMLParser):
    """Fails on an end tag that does not close the innermost open element (void elements aside)."""

    def __init__(self):
        super().__init__()
        self.stack, self.errors = [], []

    def handle_starttag(self, tag, attrs):
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        pass

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append((tag, list(self.stack[-3:])))
        else:
            self.stack.pop()


@pytest.mark.parametrize("kind", KINDS)
def test_html_parses_and_is_self_contained(chains, kind):
    text = chains[kind]["text"]["html"]
    parser = _Strict()
    parser.feed(text)
    parser.close()
    assert parser.errors == [] and parser.stack == []
    # Two stages, the response and the gain histogram of the chain's Monte Carlo (chains had no
    # histogram, so three drawings, while they had no yield).
    assert text.startswith("<!DOCTYPE html>") and text.count("<svg") == 4
    assert "<h2>Response and spread</h2>" in text
    y = chains[kind]["design"]["yield"]
    assert "Monte Carlo yield of the whole chain" in text and f"{100 * y:.1f} %" in text
    assert not re.search(r"<script|<link|\ssrc=|url\((?!#)|https?://(?!www\.w3\.org)", text)
    for heading in ("Schematic", "Stages", "Pick list (by drawer location)", "Meter checks",
                    "Predicted figures of the whole chain", "Safety"):
        assert f"<h2>{heading}</h2>" in text
    # The two stage drawings' ids do not collide (they share one page).
    ids = re.findall(r'\sid="([^"]+)"', text)
    assert len(ids) == len(set(ids))


@pytest.mark.parametrize("kind", KINDS)
def test_markdown_draws_both_stages_in_text(chains, kind):
    c = chains[kind]
    design = c["design"]
    md = c["text"]["md"]
    drawing = md.split("```text\n", 1)[1].split("```", 1)[0]
    assert drawing.strip() == draw_chain(
        design, supply_v=12.0, source_ohms=c["doc"]["spec"]["source_ohms"], load_ohms=c["doc"]["spec"]["load_ohms"],
        polarised=frozenset(p for p, part in design["parts"].items() if part.get("polarised"))).strip()
    for pos in design["parts"]:
        assert re.search(rf"(^|[\s*]){re.escape(pos)}[\s]", drawing), pos
    # The interstage capacitor is drawn once, at stage 2's input (its label: name and value).
    assert len(re.findall(r"CIN_B [0-9]", drawing)) == 1
    assert "Stage 1 (" + design["stages"][0]["kind"] in drawing and "Stage 2 (" + design["stages"][1]["kind"] in drawing


@pytest.mark.parametrize("kind", KINDS)
def test_cir_bench_runs_the_chains_deck(chains, kind):
    c = chains[kind]
    out = c["text"]["cir"]
    assert out.startswith(c["design"]["netlist"].split(".model")[0])
    for cmd in (".op", ".ac", ".tran", ".four", "RS src in"):
        assert cmd in out
    load = re.search(r"(?m)^RL out 0 (\S+)", out)
    assert load and spice_reads(load.group(1)) == pytest.approx(c["doc"]["spec"]["load_ohms"])
    assert re.search(r"(?m)^\.save .*v\(x\)", out)  # the interstage node is kept


def test_a_damaged_chain_is_one_line_and_exit_2(chains, tmp_path, capsys):
    doc = json.loads(chains[KINDS[0]]["path"].read_text())
    del doc["designs"][0]["parts"]["Q2"]
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(doc))
    for fmt in ("html", "md", "svg"):
        assert main(["sheet", str(bad), "--format", fmt]) == 2
        err = capsys.readouterr().err
        assert "bad.json: designs[0].stages[1].positions[" in err and 'expected a position named in "parts"' in err
        assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
