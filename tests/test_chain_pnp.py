"""All-PNP chains (optimizer/chain/polarity.py): solved as the mirror of the all-NPN chain, shown in real polarity.

Oracle: the mirror of circuit theory (README "PNP stages"): writing V' = VCC − V at every node of both
stages turns an all-PNP chain on +V (emitter sides to +V) into the all-NPN chain with the same parts, the
PNP's equations in (VEB, VCB) into the NPN's in (VBE, VBC); the source and load stay on 0 V behind CIN and
COUT_B.  So an all-PNP chain's gain, Rin, Rout, f_low, THD, currents and yield are its NPN twin's, and its
node voltages are VCC − the twin's.  Here the twin is solved as an NPN chain (no mirroring involved) and the
PNP chain's figures, meter checks, Monte Carlo, netlist, sheets and drawings are held to it and to the
README's position roles for PNP stages; the netlist against the design-netlist contract (tests/deck_lint.py).
ngspice on the real PNP chain is tests/test_chain_pnp_ngspice.py.
"""

from __future__ import annotations

import json
import re
from dataclasses import replace

import numpy as np
import pytest

from inventory.drawer import Drawer
from inventory.parts import Part
from optimizer.chain.analysis import analyze_chain
from optimizer.chain.circuit import build_net
from optimizer.chain.deck import chain_netlist, chain_of_design
from optimizer.chain.figures import figures
from optimizer.chain.meter import chain_meter_checks
from optimizer.chain.montecarlo import chain_monte_carlo
from optimizer.chain.search import pairable, search_chain
from optimizer.search.candidates import QLine, transistor_of
from optimizer.spec import Spec
from tests.chain_designs import KINDS, chain
from tests.chain_job import DRAWER
from tests.chain_sheet_files import save_chains
from tests.deck_lint import lint
from tests.test_chain_montecarlo import networks, sample_chain
from tui.cli import main
from tui.schematic_chain import draw_chain

VCC = 12.0
CORNERS = [(150.0, 150.0, 27.0), (400.0, 400.0, 27.0), (150.0, 400.0, 50.0), (400.0, 150.0, 0.0)]
SURROUNDINGS = ("src", "in", "out")  # on the real 0 V in both circuits (README "PNP stages")
EXACT = 1e-12  # relative: the twin and the mirror are the same equations (measured: bit-equal)


def pnp_twin(ch):
    """The same chain with both transistors PNP (same IS, BF, VAF …): the chain the mirror maps onto `ch`."""
    def flip(s):
        return replace(s, transistor=replace(s.transistor, polarity="PNP", name="test PNP"))

    return replace(ch, first=flip(ch.first), second=flip(ch.second))


@pytest.mark.parametrize("kind", KINDS)
def test_exact_figures_are_the_npn_twins_mirrored(kind):
    npn = chain(kind)
    pnp = pnp_twin(npn)
    a, b = figures(npn, CORNERS, 2.0), figures(pnp, CORNERS, 2.0)
    for key in ("gain", "gain_second", "rin", "rout", "f_low", "thd", "i_supply", "amplitude", "min_vce"):
        np.testing.assert_allclose(getattr(b, key), getattr(a, key), rtol=EXACT, err_msg=key)
    for q in range(2):
        np.testing.assert_allclose(b.ic[q], a.ic[q], rtol=EXACT)
    assert a.net.nodes == b.net.nodes
    for n in a.net.nodes:
        want = a.node(n) if n in SURROUNDINGS else VCC - a.node(n)
        np.testing.assert_allclose(b.volts(n), want, atol=1e-12, err_msg=n)
    # The report a user reads: the chain's and each stage's VB, VE, VC mirrored, the rest the twin's.
    ra, rb = analyze_chain(npn, 2.0), analyze_chain(pnp, 2.0)
    for got, want in [(rb.predicted, ra.predicted)] + [(sb["predicted"], sa["predicted"])
                                                       for sa, sb in zip(ra.stages, rb.stages, strict=True)]:
        for key, value in want.items():
            if key in ("vb", "ve", "vc"):
                assert got[key] == pytest.approx(VCC - value, abs=1e-9), key
            elif value is not None:
                assert got[key] == pytest.approx(value, rel=1e-9), key
    # The PNP's emitter sits above its base and its base above its collector (VE > VB > VC), every stage.
    for s in rb.stages:
        p = s["predicted"]
        assert p["ve"] > p["vb"] > p["vc"] >= 0.0


@pytest.mark.parametrize("kind", KINDS)
def test_meter_checks_read_in_real_polarity(kind):
    hfe, temps = (150.0, 245.0, 400.0), (0.0, 27.0, 50.0)
    npn = chain_meter_checks(chain(kind), hfe, hfe, temps)
    pnp = chain_meter_checks(pnp_twin(chain(kind)), hfe, hfe, temps)
    for a, b in zip(npn, pnp, strict=True):
        assert (a["transistor"], a["point"]) == (b["transistor"], b["point"])
        assert b["typical"] == pytest.approx(VCC - a["typical"], abs=1e-9)
        assert b["low"] == pytest.approx(VCC - a["high"], abs=1e-9)
        assert b["high"] == pytest.approx(VCC - a["low"], abs=1e-9)
        # The node is the real circuit's: a follower's collector is on 0 V in the PNP chain, on vcc in the NPN one.
        assert b["node"] == {"vcc": "0", "0": "vcc"}.get(a["node"], a["node"])


def _elements(deck: str) -> dict[str, list[str]]:
    return {ln.split()[0]: ln.split(";")[0].split()[1:] for ln in deck.splitlines() if ln[:1] in "RCQV"}


@pytest.mark.parametrize("kind", KINDS)
def test_netlist_is_the_real_pnp_chain(kind):
    npn, pnp = chain(kind), pnp_twin(chain(kind))
    parts = {"Q1": {"line": 2}, "Q2": {"line": 3}}
    a, b = _elements(chain_netlist(npn, parts)), _elements(chain_netlist(pnp, parts))
    deck = chain_netlist(pnp, parts)
    assert lint(deck, [*(p for p in b if p[0] in "RC"), "Q1", "Q2"]) == []
    assert b["VCC"] == ["vcc", "0", "DC", "12"]
    assert re.findall(r"(?m)^\.model QLINE\d (\w+)\(", deck) == ["PNP", "PNP"]
    # README "PNP stages": R1 base to 0 V, R2 base to +V, RC collector to 0 V, RE2 and CE to +V, a
    # follower's collector on 0 V; i.e. every part's rail swapped, the signal nodes kept.
    swap = {"0": "vcc", "vcc": "0"}
    for name, nodes in a.items():
        if name[0] in "RC":
            assert set(b[name][:2]) == {swap.get(n, n) for n in nodes[:2]}, name
    for q in ("Q1", "Q2"):
        assert b[q][:3] == [swap.get(n, n) for n in a[q][:3]]
    for suffix, s in (("", pnp.first), ("_B", pnp.second)):
        if "R1" in s.resistors:
            assert "0" in b["R1" + suffix] and "vcc" in b["R2" + suffix]
        if "CE" in s.capacitors:
            assert b["CE" + suffix][0] == "vcc"  # + lead first: CE's + faces +V in a PNP stage
    # CIN's + faces the base (above 0 V) in both; the interstage capacitor turns round exactly when
    # its DC across changes sign (it does, from the twin's x − base2 to the PNP's base2' − x').
    assert b["CIN"][0] == a["CIN"][0] == "base1"
    f = figures(npn, CORNERS[:1], low_cut=False)
    across = float(f.node("x")[0] - f.node("base2")[0])
    assert (a["CIN_B"][0] == "x") == (across > 0) and (b["CIN_B"][0] == "x") == (across < 0)


@pytest.mark.parametrize("kind", KINDS)
def test_monte_carlo_is_the_twins(kind):
    """The same draws give the same yield: gain, Rin, swing, current and flags are the mirror's; each
    stage's VB, VE, VC come back in real polarity.  Each drawn PNP sample, rebuilt and solved whole
    (figures.py), gives the sample's own figures."""
    npn, pnp = chain(kind), pnp_twin(chain(kind))
    nets = networks(npn, 0.05)
    a = chain_monte_carlo(npn, nets, n=400, seed=7)
    b = chain_monte_carlo(pnp, nets, n=400, seed=7)
    for key in ("gain", "rin", "swing_pp", "i_supply", "converged", "saturated", "cutoff", "gain_2", "rin_2"):
        np.testing.assert_array_equal(b.samples[key], a.samples[key])
    for k in ("1", "2"):
        for key in ("vb", "ve", "vc"):
            np.testing.assert_allclose(b.samples[f"{key}_{k}"], VCC - a.samples[f"{key}_{k}"], atol=1e-12)
    spec = Spec(topology=kind, gain=float(np.median(np.abs(a.gain))), gain_tol=0.03, swing_pp=1.0, min_rin_ohms=0.0)
    share = b.share_meeting(spec)
    assert share == a.share_meeting(spec) and 0.0 < share < 1.0
    for i in range(4):
        f = figures(sample_chain(pnp, b, i), [(b.beta_1[i], b.beta_2[i], b.temp_c[i])], low_cut=False)
        assert b.gain[i] == pytest.approx(f.gain[0], rel=1e-9)
        assert b.rin[i] == pytest.approx(f.rin[0], rel=1e-9)
        (c1, b1, _), (c2, _, e2) = f.net.qs
        assert b.samples["vc_1"][i] == pytest.approx(f.volts(c1)[0], abs=1e-6)
        assert b.samples["vb_1"][i] == pytest.approx(f.volts(b1)[0], abs=1e-6)
        assert b.samples["ve_2"][i] == pytest.approx(f.volts(e2)[0], abs=1e-6)


def test_a_mixed_chain_is_refused():
    ch = chain(KINDS[0])
    mixed = replace(ch, second=replace(ch.second, transistor=replace(ch.second.transistor, polarity="PNP")))
    with pytest.raises(ValueError, match="share a polarity"):
        build_net(mixed)
    with pytest.raises(ValueError, match="share a polarity"):
        chain_monte_carlo(mixed, networks(mixed, 0.05), n=4)


def _line(line, polarity, qty):
    part = Part(line, "transistor", None, qty, part=f"{polarity} {line}", polarity=polarity, hfe_min=100, hfe_max=300)
    return QLine(line, qty, transistor_of(part), part.part)


def test_pairs_share_a_polarity():
    both = [_line(1, "NPN", 2), _line(2, "PNP", 1), _line(3, "PNP", 1)]
    assert pairable(both)[1] == ["NPN", "PNP"]
    lines, tried = pairable([_line(1, "NPN", 1), _line(2, "PNP", 3)])
    assert tried == ["PNP"] and [q.line for q in lines] == [2]
    # One of each: no chain, proven, and each polarity's missing second transistor named.
    drawer = Drawer.load(DRAWER)
    spec = Spec(topology=KINDS[0], gain=10, source_ohms=1e3, load_ohms=10e3, min_rin_ohms=1e3)
    sol = search_chain(drawer.resistor_stock(), drawer.capacitor_stock(), [_line(1, "NPN", 1), _line(2, "PNP", 1)],
                       spec)
    assert sol.proven_none and not sol.found
    assert any("lacks a second NPN" in w for w in sol.why) and any("lacks a second PNP" in w for w in sol.why)
    assert {h["buy"].split(" (")[0] for h in sol.hints} == {"one more NPN 1", "one more PNP 2"}


@pytest.fixture(scope="module")
def saved(tmp_path_factory):
    folder = tmp_path_factory.mktemp("pnp-chains")
    return folder, save_chains(folder, "PNP")


@pytest.mark.parametrize("kind", KINDS)
def test_saved_pnp_chain_reads_back_and_keeps_the_contract(saved, kind):
    _, files = saved
    doc = json.loads(files[kind].read_text())
    design = doc["designs"][0]
    assert design["parts"]["Q1"]["polarity"] == design["parts"]["Q2"]["polarity"] == "PNP"
    assert lint(design["netlist"], list(design["parts"])) == []
    ch = chain_of_design(design, doc["spec"])
    assert ch.first.transistor.polarity == ch.second.transistor.polarity == "PNP"
    assert chain_netlist(ch, design["parts"]) == design["netlist"]  # read back: the same real circuit
    # Every corner's readings in real polarity: each PNP's emitter above its base, its base above its collector.
    for c in design["corners"].values():
        assert c["ve"] > c["vb"] > c["vc"] >= 0.0 and c["ve_b"] > c["vb_b"] > c["vc_b"] >= 0.0
    # The polarised capacitors' cautions: CE's + toward +V (README "PNP stages").
    for pos in ("CE", "CE_B"):
        if design["parts"].get(pos, {}).get("polarised"):
            assert f"{pos} is polarised: fit its + lead toward the supply (+V)" in " ".join(design["cautions"])


@pytest.mark.parametrize("kind", KINDS)
def test_sheets_and_drawings_show_the_pnp_chain(saved, kind):
    folder, files = saved
    path = files[kind]
    design = json.loads(path.read_text())["designs"][0]
    spec = json.loads(path.read_text())["spec"]
    texts = {}
    for fmt in ("html", "svg", "md", "csv", "cir"):
        target = folder / f"{path.stem}.{fmt}"
        assert main(["sheet", str(path), "--format", fmt, "-o", str(target)]) == 0
        texts[fmt] = target.read_text(encoding="utf-8")
    # The schemdraw drawing of each stage is the PNP one: 0 V on top (labelled), +V below (README "PNP stages").
    assert texts["svg"].count(">0 V<") == 2 and texts["svg"].count("+12 V (VCC)") == 2
    # The text drawing (the md sheet's, the app's): both stages with the rails swapped, PNP arrows.
    drawing = draw_chain(design, supply_v=12.0)
    stages = drawing.split("\n\nStage 2")
    for text in stages:
        lines = [ln for ln in text.splitlines() if ln.strip()]
        assert lines[1].startswith("0 V") and any(ln.startswith("+12 V") for ln in lines[-3:])
        assert any("↖" in ln for ln in lines)
    assert drawing.split("\n")[1] in texts["md"]
    # The meter checks printed are the chain's real readings.
    ch = chain_of_design(design, spec)
    h1 = (design["hfe"]["min"], design["hfe"]["typical"], design["hfe"]["max"])
    h2 = (design["hfe_b"]["min"], design["hfe_b"]["typical"], design["hfe_b"]["max"])
    for r in chain_meter_checks(ch, h1, h2, (0.0, 27.0, 50.0)):
        assert f"| {r['transistor']} {r['point']} ({r['node']}) | {r['typical']:.2f} V |" in texts["md"]
    assert "PNP(" in texts["cir"] and "NPN(" not in texts["cir"]


ANALYZE = ("analyze --topology common-emitter+emitter-follower --r1 82k --r2 15k --rc 8k2 --re1 330 --re2 1k2 "
           "--cin 2u2 --ce 100u --r1-b 27k --r2-b 33k --re-b 1k5 --cin-b 10u --cout-b 100u --supply 12 --source 10k "
           "--load 10k --hfe 245 --json").split()


def test_analyze_takes_a_pnp_chain(capsys):
    assert main(ANALYZE) == 0
    npn = json.loads(capsys.readouterr().out)
    assert main([*ANALYZE, "--polarity", "pnp"]) == 0
    pnp = json.loads(capsys.readouterr().out)
    for key in ("vb", "ve", "vc"):
        assert pnp["predicted"][key] == pytest.approx(VCC - npn["predicted"][key], abs=1e-9)
    assert pnp["predicted"]["gain"] == pytest.approx(npn["predicted"]["gain"], rel=1e-9)
    argv = [*ANALYZE, "--polarity", "pnp"]
    i = argv.index("--cout-b")
    del argv[i:i + 2]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "--polarity pnp" in err and "--cout-b" in err


@pytest.fixture(scope="module")
def saved_npn(tmp_path_factory):
    return save_chains(tmp_path_factory.mktemp("npn-chains"))


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("polarity", ["NPN", "PNP"])
def test_text_drawing_marks_each_coupling_plus_lead_as_the_netlist_fits_it(saved, saved_npn, kind, polarity):
    """The text drawing's '+' on CIN and CIN_B sits on the side the netlist puts the + lead (first node:
    the higher DC, held to ngspice in tests/test_chain_pnp_ngspice.py): CIN_B turns round with the polarity
    whenever x and Q2's base swap places."""
    path = (saved[1] if polarity == "PNP" else saved_npn)[kind]
    design = json.loads(path.read_text())["designs"][0]
    polarised = frozenset(pos for pos, part in design["parts"].items() if part.get("polarised"))
    # Both coupling capacitors counted as polarised here, to see their '+' whatever the drawer holds.
    drawing = draw_chain(design, supply_v=12.0, polarised=polarised | {"CIN", "CIN_B"})
    elements = _elements(design["netlist"])
    for k, text in enumerate(drawing.split("\n\nStage 2")):
        pos, base, label = ("CIN", "base1", "in ") if k == 0 else ("CIN_B", "base2", "x  ")
        row = next(ln for ln in text.splitlines() if ln.startswith(label + "○"))
        toward_base = elements[pos][0] == base
        assert ("┤├+" in row) == toward_base and ("+┤├" in row) == (not toward_base), (pos, row)
