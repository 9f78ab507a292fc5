"""PNP stages on a single positive supply: drawerfit's mirror against ngspice simulating the real PNP circuit.

drawerfit solves a PNP stage as the mirror of the NPN one (optimizer/physics/polarity.py).  The check
here does not use the mirror: each stage is written out by this test as the real PNP circuit,
from the position roles the README gives (R1 base to 0 V, R2 base to +V, RC collector to 0 V,
RE1/RE2 and CE from the emitter to +V, the collector of a follower on 0 V, source and load on
0 V), with a PNP `.model` card, and simulated in ngspice (an independent simulator that evaluates
a PNP through its own sign conventions).  Tolerances as tests/test_ngspice_stages.py: DC node
voltages 10 mV, midband gain 1 %, Rin 2 %, f_low 3 %, THD 20 % relative or 0.1 % absolute.
drawerfit's own netlists (netlist.py, deck.py) must be that same circuit, and its design decks
must fit every polarised capacitor + lead toward the node ngspice finds more positive.
The largest deviations are printed at the end of the module.
"""

from __future__ import annotations

import math
import re
import time
from dataclasses import replace

import numpy as np
import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.deck import design_netlist
from optimizer.physics.netlist import to_netlist
from optimizer.physics.stage import COLLECTOR_FEEDBACK, COMMON_EMITTER, EMITTER_FOLLOWER, Stage
from tests import spice
from tests.test_ngspice_stages import generate_stage
from tests.helpers.report import report_lines

pytestmark = pytest.mark.ngspice

PER_TOPOLOGY = 6
DEVIATIONS: dict[str, float] = {}
HARMONICS = range(2, 11)


def _pnp(stage: Stage) -> Stage:
    """The same parts with a PNP of the same parameters."""
    return replace(stage, transistor=replace(stage.transistor, polarity="PNP", name="test PNP"))


def _stages():
    rng = np.random.default_rng(20261202)
    out = []
    for topo in (COMMON_EMITTER, EMITTER_FOLLOWER, COLLECTOR_FEEDBACK):
        k = 0
        while sum(1 for t, _, _ in out if t == topo) < PER_TOPOLOGY:
            if k % 6 == 5:  # the generator's DC-coupled load: not a PNP stage drawerfit models
                k += 1
                continue
            stage = _pnp(generate_stage(topo, k, rng))
            op = analyze(stage).operating_point
            if op["vce"] >= 1.0 and op["ic"] > 1e-5:  # well inside the active region, as a designer would bias it
                out.append((topo, k, stage))
                k += 1
    return out


STAGES = _stages()


def real_pnp_circuit(stage: Stage) -> list[str]:
    """The element lines of the real PNP stage, written from the README's position roles (not from
    drawerfit's netlist code).  Node names: in, base, emit, mid, coll, out, vcc and 0."""
    r, c, topo = stage.resistors, stage.capacitors, stage.topology
    lines = [f"CIN in base {c['CIN']:.9g}"]
    follower = topo == EMITTER_FOLLOWER
    lines.append(f"COUT {'emit' if follower else 'coll'} out {c['COUT']:.9g}")
    coll = "0" if follower else "coll"
    if topo == COLLECTOR_FEEDBACK:
        lines.append(f"RB coll base {r['RB']:.9g}")
    else:
        lines += [f"R1 base 0 {r['R1']:.9g}", f"R2 base vcc {r['R2']:.9g}"]
    if follower:
        lines.append(f"RE emit vcc {r['RE']:.9g}")
        emit = "emit"
    else:
        lines.append(f"RC coll 0 {r['RC']:.9g}")
        chain = [p for p in ("RE1", "RE2") if r.get(p, 0) > 0]
        ends = ["emit", "mid", "vcc"][:len(chain)] + ["vcc"]
        if not chain:
            ends = ["vcc"]
        for k, p in enumerate(chain):
            lines.append(f"{p} {ends[k]} {ends[k + 1]} {r[p]:.9g}")
        if "CE" in c and "RE2" in chain:
            top = ends[chain.index("RE2")]
            lines.append(f"CE {top} vcc {c['CE']:.9g}")
        emit = ends[0]
    lines.append(f"Q1 {coll} base {emit} QP")
    q = stage.transistor
    vaf = f" VAF={q.vaf_v:.9g}" if math.isfinite(q.vaf_v) else ""
    lines.append(f".model QP PNP(IS={q.is_a:.9e} BF={q.bf:.9g} BR={q.br:.9g}{vaf} XTI={q.xti:.9g} "
                 f"EG={q.eg_ev:.9g} XTB={q.xtb:.9g})")
    return lines


def bench(stage: Stage, amplitude_v: float, signal_hz: float) -> str:
    src = "src" if stage.source_ohms > 0 else "in"
    load = stage.load_ohms if math.isfinite(stage.load_ohms) else 1e12
    lines = ["* real PNP stage written by the test"]
    if src == "src":
        lines.append(f"RS src in {stage.source_ohms:.9g}")
    lines += [f"RL out 0 {load:.9g}"] + real_pnp_circuit(stage)
    lines[-1:-1] = [f"VCC vcc 0 DC {stage.supply_v:.9g}",
                    f"VS {src} 0 DC 0 AC 1 SIN(0 {amplitude_v:.9g} {signal_hz:.9g})"]
    lines += [".options TNOM=27", f".temp {stage.temp_c:.9g}", ".end"]
    return "\n".join(lines) + "\n"


def _thd_one_period(wave: np.ndarray) -> float:
    """THD (fraction) of the last period (256 samples), the capacitors' slow drift taken out by a line
    through the period's ends; harmonics 2…10 of a DFT (numpy)."""
    last = wave[-257:]
    last = (last - np.linspace(last[0], last[-1], 257) + last[0])[:-1]
    spec = np.abs(np.fft.rfft(last))
    return float(np.sqrt(sum(spec[k] ** 2 for k in HARMONICS)) / spec[1])


def _crossing(freq, mag, target) -> float:
    i = int(np.nonzero(mag < target)[0][-1])
    x0, x1 = np.log(freq[i]), np.log(freq[i + 1])
    y0, y1 = 20 * np.log10(mag[i] / target), 20 * np.log10(mag[i + 1] / target)
    return float(np.exp(x0 - y0 * (x1 - x0) / (y1 - y0)))


def _record(figure: str, deviation: float) -> None:
    DEVIATIONS[figure] = max(DEVIATIONS.get(figure, 0.0), float(deviation))


@pytest.fixture(scope="module", autouse=True)
def summary(request):
    started = time.perf_counter()
    yield
    lines = [f"ngspice, real PNP circuits ({len(STAGES)} stages and the demo PNP designs) in "
             f"{time.perf_counter() - started:.1f} s; largest deviations:"]
    lines += [f"  {k}: {v:.4g}" for k, v in sorted(DEVIATIONS.items())]
    report_lines(request, lines)


@pytest.mark.parametrize("topology,k,stage", STAGES, ids=[f"pnp-{t}-{k}" for t, k, _ in STAGES])
def test_pnp_mirror_matches_ngspice(topology, k, stage):
    clean = analyze(stage)
    report = analyze(stage, 0.6 * clean.predicted["swing_pp"])
    p = clean.predicted
    f_low = p["f_low"]
    f_sig = max(1e3, 300 * max(c["f_hz"] for c in clean.capacitors.values()))
    f_probe = 30 * f_sig
    amp = report.distortion["source_amplitude_v"]
    deck = bench(stage, amp, f_sig)
    period = 1.0 / f_sig
    nodes = [n for n in ("base", "emit", "coll") if re.search(rf"\s{n}\s", deck)]
    blocks = [("op", [f"v({n})" for n in nodes]),
              (f"ac lin 1 {f_probe:.6g} {f_probe:.6g}", ["v(out)", "i(VS)"]),
              (f"ac dec 400 {f_low / 2:.6g} {f_low * 2:.6g}", ["v(out)"]),
              (f"tran {period / 256:.6g} {8 * period:.6g} 0 {period / 256:.6g}\nlinearize v(out)", ["v(out)"])]
    res = spice.run(deck, blocks)
    # DC node voltages in real polarity (to 0 V): a follower's collector is on 0 V itself.
    mine = {"base": p["vb"], "emit": p["ve"], "coll": p["vc"]}
    if topology == EMITTER_FOLLOWER:
        assert p["vc"] == 0.0
    assert p["vb"] < p["ve"]  # a conducting PNP's base sits below its emitter
    for n in nodes:
        v = float(res[0][f"v({n})"][0].real)
        _record("dc_volts", abs(mine[n] - v))
        assert abs(mine[n] - v) < 10e-3, (n, mine[n], v)
    h = complex(res[1]["v(out)"][0])
    _record("gain_rel", abs(p["gain"] / h.real - 1))
    assert p["gain"] == pytest.approx(h.real, rel=0.01)
    rin = (-1.0 / complex(res[1]["i(VS)"][0])).real - stage.source_ohms
    _record("rin_rel", abs(p["rin"] / rin - 1))
    assert p["rin"] == pytest.approx(rin, rel=0.02)
    sim_f_low = _crossing(res[2]["scale"].real, np.abs(res[2]["v(out)"]), abs(h) / math.sqrt(2))
    _record("f_low_rel", abs(f_low / sim_f_low - 1))
    assert f_low == pytest.approx(sim_f_low, rel=0.03)
    wave = res[3]["v(out)"].real
    assert np.ptp(wave[-257:]) > 0.5 * report.distortion["swing_pp"]  # the transient ran (it can stall at t = 0)
    spice_thd = _thd_one_period(wave)
    thd = report.predicted["thd"]
    _record("thd_abs", abs(thd - spice_thd))
    _record("thd_rel", abs(thd / spice_thd - 1))
    assert abs(thd - spice_thd) <= max(0.2 * spice_thd, 1e-3), (thd, spice_thd)


def _elements(deck: str) -> dict[str, frozenset]:
    """element name → its node set (two-terminal parts) or (c, b, e) tuple (Q1), from a netlist."""
    out = {}
    for line in deck.splitlines():
        f = line.split(";")[0].split()
        if not f or f[0].startswith(("*", ".")) or f[0][0].upper() not in "RCQ":
            continue
        out[f[0].upper()] = tuple(f[1:4]) if f[0][0].upper() == "Q" else frozenset(f[1:3])
    return out


@pytest.mark.parametrize("topology,k,stage", STAGES[::2], ids=[f"pnp-{t}-{k}" for t, k, _ in STAGES[::2]])
def test_drawerfit_netlists_are_the_real_pnp_circuit(topology, k, stage):
    want = _elements("\n".join(real_pnp_circuit(stage)))
    bench_deck = to_netlist(stage, analyses="")
    got = {n: v for n, v in _elements(bench_deck).items() if n not in ("RS", "RL")}
    assert got == want
    assert re.search(r"(?m)^\.model QMOD PNP\(", bench_deck)
    assert re.search(r"(?m)^VCC vcc 0 DC ", bench_deck)
    parts = {p: {"ohms": v, "network": {"line": 2, "ohms": v}} for p, v in stage.resistors.items()}
    parts.update({p: {"farads": v, "network": {"line": 3, "farads": v}} for p, v in stage.capacitors.items()})
    parts["Q1"] = {"line": 4, "part": "test PNP", "polarity": "PNP"}
    deck = design_netlist(stage, parts)
    assert _elements(deck) == want
    assert re.search(r"(?m)^\.model QLINE4 PNP\(", deck)


@pytest.mark.parametrize("topology,k,stage", STAGES[1::3], ids=[f"pnp-{t}-{k}" for t, k, _ in STAGES[1::3]])
def test_design_deck_polarised_plus_leads_face_the_higher_node(topology, k, stage):
    # In the real circuit (ngspice's operating point) every capacitor's first node, its + lead in the
    # deck, must be the more positive one: CE's + faces +V in a PNP stage, CIN's and COUT's the transistor.
    parts = {p: {"ohms": v, "network": {"line": 2, "ohms": v}} for p, v in stage.resistors.items()}
    parts.update({p: {"farads": v, "network": {"line": 3, "farads": v}} for p, v in stage.capacitors.items()})
    parts["Q1"] = {"line": 4, "part": "test PNP", "polarity": "PNP"}
    deck = design_netlist(stage, parts)
    caps = [ln.split()[:3] for ln in deck.splitlines() if ln.startswith("C")]
    deck_bench = deck.replace(".end\n", f"VS in 0 DC 0\nRL out 0 {1e4:g}\n.temp {stage.temp_c:g}\n.end\n")
    nodes = sorted({n for _, a, b in caps for n in (a, b)} - {"0"})
    res = spice.run(deck_bench, [("op", [f"v({n})" for n in nodes])])[0]
    volts = {n: float(res[f"v({n})"][0].real) for n in nodes} | {"0": 0.0}
    for name, plus, minus in caps:
        assert volts[plus] > volts[minus], (name, plus, minus, volts)
    report = analyze(stage)
    for name, plus, minus in caps:
        assert report.capacitors[name]["dc_v"] == pytest.approx(volts[plus] - volts[minus], abs=10e-3)


def test_pnp_designs_of_the_demo_drawer_match_ngspice(tmp_path):
    # The search's PNP designs (a PNP-only copy of the demo drawer), their own decks simulated in ngspice at
    # hFE min, typical and max by optimizer.physics.crosscheck: DC within 10 mV, gain 1 %, Rin 2 %, f_low 3 %, THD 20 %.
    from inventory.drawer import Drawer
    from optimizer.physics.crosscheck import crosscheck
    from optimizer.search.select import find_designs
    from optimizer.spec import Spec
    from tests.conftest import need_program
    from tests.demo_job import DEMO

    need_program("ngspice")
    lines = [ln for ln in DEMO.read_text().splitlines() if not (ln.startswith("transistor,") and ",NPN," in ln)]
    path = tmp_path / "drawer.csv"
    path.write_text("\n".join(lines) + "\n")
    spec = Spec(gain=10, supply_v=9)
    doc = find_designs(Drawer.load(path), spec, top=3, depth=1, hints=False, time_limit_s=30)
    assert doc["designs"]
    limits = {"gain": 0.01, "rin": 0.02, "f_low": 0.03, "thd": 0.2}
    for d in doc["designs"]:
        assert d["parts"]["Q1"]["polarity"] == "PNP"
        cc = crosscheck(d, doc["spec"])
        assert cc.ok, cc.message
        for row in cc.rows:
            if row["figure"] in ("vb", "ve", "vc"):
                _record("design_dc_volts", abs(row["deviation"]))
                assert abs(row["deviation"]) < 10e-3, row
            elif row["relative"] is not None:
                _record(f"design_{row['figure']}_rel", abs(row["relative"]))
                assert abs(row["relative"]) <= limits[row["figure"]], row
