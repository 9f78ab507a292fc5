"""The bundled demo drawer and the gain-of-10 job several suites ask of it."""

from __future__ import annotations

from pathlib import Path

from optimizer.spec import Spec

DEMO = Path(__file__).resolve().parents[1] / "inventory" / "demo" / "drawer.csv"
JOB = Spec(topology="common-emitter", gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3,
           swing_pp=5, low_cut_hz=30, min_rin_ohms=8e3)

# The limits before THD, quiescent VCE and temperature corners were part of the spec: for
# suites that test another mechanism (capacitor choice, hints) on tuples chosen under them.
LEGACY = {"max_thd": 1.0, "min_vce_v": 0.0, "temp_range_c": (27.0, 27.0)}
JOB_LEGACY = Spec(**{**JOB.__dict__, **LEGACY})
