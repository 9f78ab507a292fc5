"""All-PNP chains against ngspice, an independent simulator, on the real PNP circuit.

The expected figures are the NPN twin's (the same parts, NPN transistors of the same IS, BF, VAF), solved
as an NPN chain by drawerfit's chain solver and mirrored by the rule of circuit theory (README "PNP stages":
V = VCC − V' at every node of both stages, the source and load on 0 V; gain, Rin, f_low and THD
unchanged).  ngspice simulates the PNP chain's own netlist (optimizer/chain/deck.py: PNP `.model` cards,
the stages' rails swapped), evaluating each PNP through its own sign conventions: DC at every transistor
node, midband gain, Rin, f_low and THD at three corners, and every capacitor's + lead (the netlist puts it
first) on the side ngspice finds more positive.  Tolerances as tests/test_chain_ngspice.py.
The largest deviations are printed at the end of the module.
"""

from __future__ import annotations

import time
from dataclasses import replace

import pytest

from optimizer.chain.deck import chain_netlist
from optimizer.chain.figures import figures
from optimizer.physics.crosscheck import with_bf
from tests import spice
from tests.chain_designs import KINDS, chain
from tests.test_chain_ngspice import simulate
from tests.test_chain_pnp import pnp_twin
from tests.helpers.report import report_lines

pytestmark = pytest.mark.ngspice
VCC = 12.0
CORNERS = [(150.0, 150.0, 27.0), (400.0, 400.0, 27.0), (150.0, 400.0, 50.0)]
SWING_PP = 3.0
DEVIATIONS: dict[str, float] = {}


def _record(name, value):
    DEVIATIONS[name] = max(DEVIATIONS.get(name, 0.0), float(value))


def _least(name, value):
    DEVIATIONS[name] = min(DEVIATIONS.get(name, float("inf")), float(value))


@pytest.fixture(scope="module", autouse=True)
def summary(request):
    started = time.perf_counter()
    yield
    lines = [f"PNP chain ngspice comparison in {time.perf_counter() - started:.1f} s; largest deviations:"]
    lines += [f"  {k}: {v:.4g}" for k, v in sorted(DEVIATIONS.items())]
    report_lines(request, lines)


def _named_apart(ch):
    """Two models (lines 2 and 3) so each transistor can sit at its own hFE corner."""
    return replace(ch, second=replace(ch.second, transistor=replace(ch.second.transistor, name="second")))


@pytest.mark.parametrize("kind", KINDS)
def test_pnp_chain_netlist_matches_the_mirrored_npn_twin(kind):
    npn = _named_apart(chain(kind))
    pnp = pnp_twin(npn)
    twin = figures(npn, CORNERS, SWING_PP)  # solved as an NPN chain: no mirroring on this side
    assert not twin.clips.any()
    for k, (bf1, bf2, temp) in enumerate(CORNERS):
        dc, gain, rin, fl, thd, names = simulate(pnp, bf1, bf2, temp, twin.amplitude[k], twin.f_low[k])
        assert "vcc" in names.values()
        assert len(dc) >= 5  # both transistors' terminals (a follower's collector is on 0 V, not probed)
        for net_node, deck_node in names.items():
            if deck_node not in dc:
                continue
            want = VCC - float(twin.node(net_node)[k])
            _record("dc_volts", abs(dc[deck_node] - want))
            assert dc[deck_node] == pytest.approx(want, abs=5e-3), (net_node, deck_node)
        _record("gain_rel", abs(gain / twin.gain[k] - 1))
        assert gain == pytest.approx(twin.gain[k], rel=0.005)
        _record("rin_rel", abs(rin / twin.rin[k] - 1))
        assert rin == pytest.approx(twin.rin[k], rel=0.01)
        _record("f_low_rel", abs(fl / twin.f_low[k] - 1))
        assert fl == pytest.approx(twin.f_low[k], rel=0.02)
        _record("thd_rel", abs(thd / twin.thd[k] - 1))
        assert thd == pytest.approx(twin.thd[k], rel=0.1, abs=2e-4)


@pytest.mark.parametrize("kind", KINDS)
def test_every_capacitor_plus_lead_faces_the_higher_dc(kind):
    """The netlist names each capacitor's + lead first: ngspice's operating point of the PNP chain, with a
    source and load on 0 V, must put that lead at the higher DC voltage, at both hFE ends."""
    pnp = pnp_twin(chain(kind))
    deck = chain_netlist(pnp, {"Q1": {"line": 2}, "Q2": {"line": 2}})
    caps = [ln.split()[:3] for ln in deck.splitlines() if ln.startswith("C")]
    nodes = sorted({n for _, a, b in caps for n in (a, b)} - {"0"})
    for bf in (150.0, 400.0):
        bench = "\n".join(with_bf(ln, bf) if ln.startswith(".model") else ln for ln in deck.split("\n"))
        bench = bench.replace("\n.end\n", f"\nVS src 0 DC 0\nRS src in {pnp.first.source_ohms:g}\n"
                                          f"RL out 0 {pnp.second.load_ohms:g}\n.end\n")
        op = spice.run(bench, [("op", [f"v({n})" for n in nodes])])[0]
        v = {n: float(op[f"v({n})"][0].real) for n in nodes}
        v["0"] = 0.0
        for name, plus, minus in caps:
            across = v[plus] - v[minus]
            _least("least DC across a capacitor, + lead to − lead (V)", across)
            assert across > 0.05, (name, plus, minus, across)


@pytest.mark.parametrize("kind", KINDS)
def test_the_apps_crosscheck_agrees_on_a_saved_pnp_chain(tmp_path, kind):
    """optimizer.chain.crosscheck (the app's ngspice panel) on a saved all-PNP chain (the production
    design_json, tests/chain_sheet_files.py): the design's real-polarity figures against ngspice on its
    own netlist at both transistors' hFE min, typical and max."""
    import json

    from optimizer.chain.crosscheck import crosscheck_chain
    from tests.chain_sheet_files import save_chains

    doc = json.loads(save_chains(tmp_path, "PNP")[kind].read_text())
    check = crosscheck_chain(doc["designs"][0], doc["spec"], timeout_s=120)
    assert check.available and check.ok, check.message
    assert len(check.rows) == 30  # ten figures at three corners
    for r in check.rows:
        if r["unit"] == "V":
            _record("crosscheck_dc_volts", abs(r["deviation"]))
            assert abs(r["deviation"]) < 5e-3, r
        elif r["figure"] in ("gain", "rin", "f_low"):
            _record(f"crosscheck_{r['figure']}_rel", abs(r["relative"]))
            assert abs(r["relative"]) < {"gain": 0.005, "rin": 0.01, "f_low": 0.02}[r["figure"]], r
        elif r["figure"] == "thd":
            _record("crosscheck_thd_rel", abs(r["relative"]))
            assert r["ngspice"] == pytest.approx(r["drawerfit"], rel=0.1, abs=2e-4), r


def test_searched_pnp_chains_agree_with_ngspice():
    """Chains the search found on the PNP-only drawer (tests/chain_job.py, one search a session) through the
    same cross-check: THD at the asked swing too, which the quick tests take from drawerfit's own solver."""
    from dataclasses import asdict

    from optimizer.chain.crosscheck import crosscheck_chain
    from tests.chain_job import PNP_JOBS, solved_pnp

    kind = "common-emitter+emitter-follower"
    doc = solved_pnp(kind)
    assert doc["designs"], doc["why"]
    for d in doc["designs"][:2]:
        check = crosscheck_chain(d, asdict(PNP_JOBS[kind]), timeout_s=120)
        assert check.available and check.ok, check.message
        for r in check.rows:
            if r["unit"] == "V":
                _record("search_dc_volts", abs(r["deviation"]))
                assert abs(r["deviation"]) < 5e-3, r
            elif r["figure"] == "gain":
                _record("search_gain_rel", abs(r["relative"]))
                assert abs(r["relative"]) < 0.005, r
            elif r["figure"] == "thd":
                _record("search_thd_rel", abs(r["relative"]))
                assert r["ngspice"] == pytest.approx(r["drawerfit"], rel=0.1, abs=2e-4), r
                assert r["ngspice"] <= PNP_JOBS[kind].max_thd
