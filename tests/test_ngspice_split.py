"""The split-supply kinds (exact analysis and the fast screen) against ngspice on generated stages.

Oracle: ngspice simulating the netlist from optimizer.physics.netlist (VCC and VEE sources, the same
Gummel–Poon `.model` card).  Same tolerances as tests/test_ngspice_stages.py: DC node voltages
10 mV, midband gain 1 %, input resistance 2 %, output resistance 2 %, f_low 3 %, THD 20 %
relative or 0.1 % absolute.  Every third stage has its source DC-coupled to the base (no CIN).
The largest deviation of each figure, per kind, is printed at the end of the module.
"""

from __future__ import annotations

import math
import time

import numpy as np
import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.netlist import to_netlist
from optimizer.physics.screen import screen
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor, is_from_vbe
from tests.test_ngspice_stages import simulate
from tests.helpers.report import report_lines

pytestmark = pytest.mark.ngspice

SPLIT_CE, SPLIT_FOLLOWER = "split-common-emitter", "split-emitter-follower"
BETAS = (80.0, 200.0, 450.0)
TEMPS_C = (0.0, 27.0, 50.0)
PER_KIND = 10
SWING_FRACTIONS = (0.4, 0.9)
DEVIATIONS: dict[str, float] = {}


def _sig(x: float) -> float:
    return float(f"{x:.3g}")


def generate_stage(kind: str, k: int, rng: np.random.Generator) -> Stage:
    """A sensible random split-supply stage (common practice, no source): the base near ground
    through RB (IB·RB a few percent of the RE drop), IE ≈ (|VEE| − VBE)/RE, the collector midway
    between the emitter and the top rail."""
    beta, temp = BETAS[k % 3], TEMPS_C[(k // 3) % 3]
    vcc, vee = _sig(rng.uniform(5, 15)), -_sig(rng.uniform(3, 15))
    ic = rng.uniform(0.3e-3, 4e-3)
    q = Transistor(bf=beta, is_a=float(is_from_vbe(rng.uniform(0.6, 0.7))), vaf_v=float(rng.choice([50, 100, 200])))
    caps = {"CIN": _sig(rng.uniform(0.2e-6, 10e-6)), "COUT": _sig(rng.uniform(0.5e-6, 22e-6))}
    if k % 3 == 2:
        caps.pop("CIN")  # a ground-referenced source joined to the base
    rs = 0.0 if k % 4 == 0 else _sig(rng.uniform(50, 5e3))
    # An open load only with CIN: the harness probes Rout well above the highest capacitor corner,
    # and COUT into 1 TΩ alone puts that near 1e-8 Hz.
    rl = math.inf if k % 5 == 0 and "CIN" in caps else _sig(rng.uniform(2e3, 100e3))
    re_total = (-vee - 0.65) / ic
    rb = _sig(rng.uniform(0.02, 0.1) * 80 * re_total)
    if kind == SPLIT_FOLLOWER:
        return Stage(kind, {"RB": rb, "RE": _sig(re_total)}, caps, vcc, rs, rl, q, temp, vee)
    r = {"RB": rb, "RC": _sig((vcc + 0.65) / 2 / ic)}
    split = rng.uniform(0.05, 0.7)
    shape = k % 4
    if shape == 2:
        r["RE1"] = _sig(re_total)
    elif shape != 1:
        r["RE1"] = _sig(re_total * split)
    if shape != 2:
        r["RE2"] = _sig(re_total * (1 - split if "RE1" in r else 1.0))
        if k % 3 != 1:
            caps["CE"] = _sig(rng.uniform(22e-6, 470e-6))
    return Stage(kind, r, caps, vcc, rs, rl, q, temp, vee)


def _active(stage: Stage) -> bool:
    op = analyze(stage).operating_point
    return op["vce"] >= 1.0 and op["ic"] > 1e-5


def _stages():
    rng = np.random.default_rng(20261202)
    out = []
    for kind in (SPLIT_CE, SPLIT_FOLLOWER):
        for k in range(PER_KIND):
            stage = generate_stage(kind, k, rng)
            while not _active(stage):
                stage = generate_stage(kind, k, rng)
            out.append((kind, k, stage))
    return out


STAGES = _stages()


def _record(kind: str, figure: str, deviation: float) -> None:
    key = f"{kind} {figure}"
    DEVIATIONS[key] = max(DEVIATIONS.get(key, 0.0), float(deviation))


@pytest.fixture(scope="module", autouse=True)
def summary(request):
    started = time.perf_counter()
    yield
    lines = [f"ngspice, split supplies: {len(STAGES)} stages in {time.perf_counter() - started:.1f} s; "
             "largest deviations:"] + [f"  {k}: {v:.4g}" for k, v in sorted(DEVIATIONS.items())]
    report_lines(request, lines)


@pytest.mark.parametrize("kind,k,stage", STAGES, ids=[f"{t}-{k}" for t, k, _ in STAGES])
def test_split_stage_matches_ngspice(kind, k, stage):
    assert "VEE vee 0 DC" in to_netlist(stage, analyses="")
    clean = analyze(stage)
    reports = [analyze(stage, f * clean.predicted["swing_pp"]) for f in SWING_FRACTIONS]
    p = clean.predicted
    corners = [c["f_hz"] for c in clean.capacitors.values()]
    sim = simulate(stage, p["f_low"], corners, [r.distortion["source_amplitude_v"] for r in reports])
    mine = {"base": p["vb"], "emit": p["ve"], "coll": p["vc"]}
    for node, v in sim["dc"].items():
        _record(kind, "dc_volts", abs(mine[node] - v))
        assert abs(mine[node] - v) < 10e-3, (node, mine[node], v)
    _record(kind, "gain_rel", abs(p["gain"] / sim["gain"] - 1))
    assert p["gain"] == pytest.approx(sim["gain"], rel=0.01)
    _record(kind, "rin_rel", abs(p["rin"] / sim["rin"] - 1))
    assert p["rin"] == pytest.approx(sim["rin"], rel=0.02)
    _record(kind, "rout_rel", abs(p["rout"] / sim["rout"] - 1))
    assert p["rout"] == pytest.approx(sim["rout"], rel=0.02)
    if "f_low" in sim:
        _record(kind, "f_low_rel", abs(p["f_low"] / sim["f_low"] - 1))
        assert p["f_low"] == pytest.approx(sim["f_low"], rel=0.03)
    for frac, report, spice_thd in zip(SWING_FRACTIONS, reports, sim["thd"]):
        thd = report.predicted["thd"]
        _record(kind, f"thd_abs@{frac:g}", abs(thd - spice_thd))
        assert abs(thd - spice_thd) <= max(0.2 * spice_thd, 1e-3), (frac, thd, spice_thd)
    # The fast screen model the search uses, on the same run (CIN absent = the DC-coupled source).
    s = screen(stage.topology, stage.resistors, transistor=stage.transistor, supply_v=stage.supply_v,
               source_ohms=stage.source_ohms, load_ohms=stage.load_ohms, temp_c=stage.temp_c,
               bypassed="CE" in stage.capacitors, negative_supply_v=stage.negative_supply_v,
               dc_input="CIN" not in stage.capacitors)
    if "COUT" in stage.capacitors:
        fast = {"base": float(s["vb"]), "emit": float(s["ve"]), "coll": float(s["vc"])}
        for node, v in sim["dc"].items():
            _record(kind, "screen_dc_volts", abs(fast[node] - v))
            assert abs(fast[node] - v) < 10e-3, ("screen", node, fast[node], v)
        _record(kind, "screen_gain_rel", abs(float(s["gain"]) / sim["gain"] - 1))
        assert float(s["gain"]) == pytest.approx(sim["gain"], rel=0.01)
        _record(kind, "screen_rin_rel", abs(float(s["rin"]) / sim["rin"] - 1))
        assert float(s["rin"]) == pytest.approx(sim["rin"], rel=0.02)
