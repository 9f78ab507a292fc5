"""analyze() on wild but well-formed stages: it answers (or warns) and never crashes.

Seeded random stages with part values across eight decades, any supply up to 60 V,
-55…150 °C, missing optional parts, ideal sources and open loads.  Every report must
serialise to strict JSON (no NaN/inf) and keep the physical bounds checked below.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from optimizer.physics.analysis import analyze
from optimizer.physics.circuit import build, operating_point
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor

pytestmark = pytest.mark.fuzz


def wild_stage(rng: np.random.Generator, k: int) -> tuple[Stage, float]:
    topo = ("common-emitter", "emitter-follower", "collector-feedback")[k % 3]

    def ohms():
        return float(10 ** rng.uniform(0, 8))

    def maybe():
        return ohms() if rng.random() < 0.7 else 0.0

    if topo == "emitter-follower":
        r = {"R1": ohms(), "R2": ohms(), "RE": ohms()}
    elif topo == "common-emitter":
        r = {"R1": ohms(), "R2": ohms(), "RC": ohms(), "RE1": maybe(), "RE2": maybe()}
    else:
        r = {"RB": ohms(), "RC": ohms(), "RE1": maybe(), "RE2": maybe()}
    caps = {c: float(10 ** rng.uniform(-12, -2)) for c in ("CIN", "COUT", "CE") if rng.random() < 0.8}
    st = Stage(topo, {p: v for p, v in r.items() if v}, caps, float(rng.uniform(1, 60)),
               float(rng.choice([0.0, ohms()])), float(rng.choice([np.inf, ohms()])),
               Transistor(bf=float(rng.uniform(10, 1000))), float(rng.uniform(-55, 150)))
    return st, float(rng.uniform(0.01, 0.9)) * st.supply_v


@pytest.mark.parametrize("seed", range(2))
def test_wild_stages_never_crash(seed):
    rng = np.random.default_rng(seed)
    for k in range(30):
        stage, swing = wild_stage(rng, k)
        rep = analyze(stage, swing)
        json.dumps(rep.to_json(), allow_nan=False)
        op = rep.operating_point
        # Physical bounds: node voltages within the rails (no source drives DC), supply power
        # equal to what the parts dissipate (energy conservation).
        for v in (op["vb"], op["ve"], op["vc"]):
            assert -1e-9 <= v <= stage.supply_v + 1e-9
        assert stage.supply_v * op["i_supply"] == pytest.approx(sum(rep.dissipation_w.values()) + _load_and_source(rep),
                                                                rel=1e-6, abs=1e-12)
        if rep.predicted["thd"] is not None:
            assert 0 <= rep.predicted["thd"] < 10


def _load_and_source(rep) -> float:
    """DC power into RS and RL (only non-zero when CIN or COUT is absent)."""
    c = build(rep.stage)
    op = operating_point(c)
    return sum((op[p.a] - op[p.b]) ** 2 / p.value for p in c.parts if p.name in ("RS", "RL"))
