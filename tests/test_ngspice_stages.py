"""The exact analysis (and the fast screen model) against ngspice on generated stages.

Oracle: ngspice 39 simulating the netlist from optimizer.physics.netlist, with the same
Gummel–Poon `.model` card (Transistor.spice_model()).  Tolerances from the
brief: DC node voltages 10 mV, midband gain 1 %, input resistance 2 %, f_low 3 %,
THD 20 % relative or 0.1 % absolute.  The largest deviation of each figure is
printed at the end of the module (and kept in DEVIATIONS).
"""

from __future__ import annotations

import math
import time

import numpy as np
import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.circuit import OPEN_LOAD_OHMS
from optimizer.physics.distortion import thd_of
from optimizer.physics.netlist import node_names, to_netlist
from optimizer.physics.stage import COLLECTOR_FEEDBACK, COMMON_EMITTER, EMITTER_FOLLOWER, Stage
from optimizer.physics.transistor import Transistor, is_from_vbe
from tests import spice
from tests.helpers.report import report_lines

pytestmark = pytest.mark.ngspice

BETAS = (80.0, 200.0, 450.0)
TEMPS_C = (0.0, 27.0, 50.0)
PER_TOPOLOGY = 12
DEVIATIONS: dict[str, float] = {}


def _sig(x: float, rng) -> float:
    """Round to 3 significant figures, as a drawer value would be."""
    return float(f"{x:.3g}")


def generate_stage(topology: str, k: int, rng: np.random.Generator) -> Stage:
    """A sensible random stage: bias aimed at mid-supply with a stiff-ish divider.

    The design rules are common practice, no source: VE ≈ 1–2.5 V, VC about midway,
    divider current ≈ 10× the base current of the lowest hFE.
    """
    beta = BETAS[k % 3]
    temp = TEMPS_C[(k // 3) % 3]
    vcc = _sig(rng.uniform(6, 24), rng)
    ic = rng.uniform(0.3e-3, 4e-3)
    vbe = 0.65
    q = Transistor(bf=beta, is_a=float(is_from_vbe(rng.uniform(0.6, 0.7))), vaf_v=float(rng.choice([50, 100, 200])))
    caps = {"CIN": _sig(rng.uniform(0.2e-6, 10e-6), rng), "COUT": _sig(rng.uniform(0.5e-6, 22e-6), rng)}
    if k % 6 == 5:
        caps.pop("COUT")  # a DC-coupled load now and then
    rs = 0.0 if k % 4 == 0 else _sig(rng.uniform(50, 5e3), rng)
    rl = math.inf if k % 5 == 0 else _sig(rng.uniform(2e3, 100e3), rng)
    if topology == EMITTER_FOLLOWER:
        ve = vcc * rng.uniform(0.35, 0.55)
        re = _sig(ve / ic, rng)
        vb = ve + vbe
        r2 = _sig(vb / (10 * ic / 80), rng)
        r1 = _sig((vcc - vb) / (vb / r2 + ic / 80), rng)
        return Stage(topology, {"R1": r1, "R2": r2, "RE": re}, caps, vcc, rs, rl, q, temp)
    ve = rng.uniform(0.6, 2.5)
    re_total = ve / ic
    split = rng.uniform(0.05, 0.7)
    r = {"RC": _sig((vcc - ve) / 2 / ic, rng)}
    shape = k % 4
    if shape == 2:
        r["RE1"] = _sig(re_total, rng)
    elif shape != 1:
        r["RE1"] = _sig(re_total * split, rng)
    if shape != 2:
        r["RE2"] = _sig(re_total * (1 - split if "RE1" in r else 1.0), rng)
        if k % 3 != 1:
            caps["CE"] = _sig(rng.uniform(22e-6, 470e-6), rng)
    vb = ve + vbe
    if topology == COLLECTOR_FEEDBACK:
        vc = ve + (vcc - ve) / 2
        r["RB"] = _sig((vc - vb) / (ic / beta), rng)
    else:
        r2 = _sig(vb / (10 * ic / 80), rng)
        r["R2"] = r2
        r["R1"] = _sig((vcc - vb) / (vb / r2 + ic / 80), rng)
    return Stage(topology, r, caps, vcc, rs, rl, q, temp)


def _active(stage: Stage) -> bool:
    """Keep stages biased well inside the active region (VCE ≥ 1 V), as a designer would."""
    op = analyze(stage).operating_point
    return op["vce"] >= 1.0 and op["ic"] > 1e-5


def _stages():
    rng = np.random.default_rng(20261201)
    out = []
    for topo in (COMMON_EMITTER, EMITTER_FOLLOWER, COLLECTOR_FEEDBACK):
        for k in range(PER_TOPOLOGY):
            stage = generate_stage(topo, k, rng)
            while not _active(stage):
                stage = generate_stage(topo, k, rng)
            out.append((topo, k, stage))
    return out


STAGES = _stages()


def _record(figure: str, deviation: float) -> None:
    DEVIATIONS[figure] = max(DEVIATIONS.get(figure, 0.0), float(deviation))


def _crossing(freq, mag, target) -> float:
    """Frequency where `mag` last rises through `target`, interpolated in (log f, dB)."""
    i = int(np.nonzero(mag < target)[0][-1])
    x0, x1 = np.log(freq[i]), np.log(freq[i + 1])
    y0, y1 = 20 * np.log10(mag[i] / target), 20 * np.log10(mag[i + 1] / target)
    return float(np.exp(x0 - y0 * (x1 - x0) / (y1 - y0)))


def _one_period_thd(wave) -> float:
    last = wave[-257:]
    # Remove the slow drift of the coupling capacitors (a line through the ends of the period).
    last = last - np.linspace(last[0], last[-1], 257) + last[0]
    return thd_of(last[:-1])


def simulate(stage: Stage, f_low: float, corners: list[float], amplitudes: list[float]) -> dict:
    """One ngspice deck: .op, a midband AC point, a dense AC sweep around f_low, a .tran per source
    amplitude (V peak), and the output impedance (source EMF zeroed, RL 1 TΩ, 1 A AC into the output)."""
    names = node_names(stage)
    out_node = f"v({names['out']})"
    f_probe = 1e4 * max(corners or [1.0])
    f_sig = max(1e3, 300 * max(corners or [1.0]))
    period = 1.0 / f_sig
    deck = to_netlist(stage, analyses="", source_amplitude_v=amplitudes[0], signal_hz=f_sig)
    deck = deck.replace("\n.model", f"\nIT 0 {names['out']} DC 0 AC 0\n.model")
    nodes = [n for n in ("base", "emit", "coll") if names[n] not in ("0", "vcc")]
    probe = f"ac lin 1 {f_probe:.6g} {f_probe:.6g}"
    blocks = [("op", [f"v({names[n]})" for n in nodes]), (probe, [out_node, "i(VS)"])]
    if f_low > 0:
        blocks.append((f"ac dec 400 {f_low / 2:.6g} {f_low * 2:.6g}", [out_node]))
    for amp in amplitudes:
        tran = f"tran {period / 256:.6g} {8 * period:.6g} 0 {period / 256:.6g}\nlinearize {out_node}"
        blocks.append((f"alter @vs[sin] = [ 0 {amp:.9g} {f_sig:.9g} ]\n{tran}", [out_node]))
    blocks.append(("alter @vs[acmag] = 0\nalter @it[acmag] = 1\n" + probe, [out_node]))
    res = spice.run(deck, blocks)
    out = {"dc": {n: float(res[0][f"v({names[n]})"][0].real) for n in nodes}}
    h = complex(res[1][out_node][0])
    out["gain"] = h.real
    out["rin"] = (-1.0 / complex(res[1]["i(VS)"][0])).real - stage.source_ohms
    if f_low > 0:
        out["f_low"] = _crossing(res[2]["scale"].real, np.abs(res[2][out_node]), abs(h) / math.sqrt(2))
    first = 3 if f_low > 0 else 2
    out["thd"] = [_one_period_thd(r[out_node].real) for r in res[first:first + len(amplitudes)]]
    # RL stays (a DC-coupled load sets the bias): what it sees is Zout ‖ RL, so take RL back out.
    load = stage.load_ohms if math.isfinite(stage.load_ohms) else OPEN_LOAD_OHMS
    out["rout"] = 1.0 / (1.0 / complex(res[-1][out_node][0]).real - 1.0 / load)
    return out


@pytest.fixture(scope="module", autouse=True)
def summary(request):
    started = time.perf_counter()
    yield
    lines = [f"ngspice comparison: {len(STAGES)} stages in {time.perf_counter() - started:.1f} s; largest deviations:"]
    lines += [f"  {k}: {v:.4g}" for k, v in sorted(DEVIATIONS.items())]
    report_lines(request, lines)


SWING_FRACTIONS = (0.4, 0.9)  # of the clip-free swing: comfortably clean, and near the limit


@pytest.mark.parametrize("topology,k,stage", STAGES, ids=[f"{t}-{k}" for t, k, _ in STAGES])
def test_analysis_matches_ngspice(topology, k, stage):
    clean = analyze(stage)
    reports = [analyze(stage, f * clean.predicted["swing_pp"]) for f in SWING_FRACTIONS]
    p = clean.predicted
    corners = [c["f_hz"] for c in clean.capacitors.values()]
    sim = simulate(stage, p["f_low"], corners, [r.distortion["source_amplitude_v"] for r in reports])
    mine = {"base": p["vb"], "emit": p["ve"], "coll": p["vc"]}
    for node, v in sim["dc"].items():
        _record("dc_volts", abs(mine[node] - v))
        assert abs(mine[node] - v) < 10e-3, (node, mine[node], v)
    _record("gain_rel", abs(p["gain"] / sim["gain"] - 1))
    assert p["gain"] == pytest.approx(sim["gain"], rel=0.01)
    _record("rin_rel", abs(p["rin"] / sim["rin"] - 1))
    assert p["rin"] == pytest.approx(sim["rin"], rel=0.02)
    _record("rout_rel", abs(p["rout"] / sim["rout"] - 1))
    assert p["rout"] == pytest.approx(sim["rout"], rel=0.02)
    if "f_low" in sim:
        _record("f_low_rel", abs(p["f_low"] / sim["f_low"] - 1))
        assert p["f_low"] == pytest.approx(sim["f_low"], rel=0.03)
    for frac, report, spice_thd in zip(SWING_FRACTIONS, reports, sim["thd"]):
        thd = report.predicted["thd"]
        _record(f"thd_abs@{frac:g}", abs(thd - spice_thd))
        _record(f"thd_rel@{frac:g}", abs(thd / spice_thd - 1))
        _record(f"thd_max_seen@{frac:g}", spice_thd)
        assert abs(thd - spice_thd) <= max(0.2 * spice_thd, 1e-3), (frac, thd, spice_thd)
    _check_screen(stage, sim)


def _check_screen(stage: Stage, sim: dict) -> None:
    """The fast screen model against the same ngspice run (its model assumes both coupling capacitors)."""
    screen = pytest.importorskip("optimizer.physics.screen").screen
    if not {"CIN", "COUT"} <= stage.capacitors.keys():
        return
    s = screen(stage.topology, stage.resistors, transistor=stage.transistor, supply_v=stage.supply_v,
               source_ohms=stage.source_ohms, load_ohms=stage.load_ohms, temp_c=stage.temp_c,
               bypassed="CE" in stage.capacitors)
    fast = {"base": float(s["vb"]), "emit": float(s["ve"]), "coll": float(s["vc"])}
    for node, v in sim["dc"].items():
        _record("screen_dc_volts", abs(fast[node] - v))
        assert abs(fast[node] - v) < 10e-3, ("screen", node, fast[node], v)
    _record("screen_gain_rel", abs(float(s["gain"]) / sim["gain"] - 1))
    assert float(s["gain"]) == pytest.approx(sim["gain"], rel=0.01)
    _record("screen_rin_rel", abs(float(s["rin"]) / sim["rin"] - 1))
    assert float(s["rin"]) == pytest.approx(sim["rin"], rel=0.02)
