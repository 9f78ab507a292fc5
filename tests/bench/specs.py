"""Seeded specs and drawers for the hand-method benchmark.

Drawers: the bundled demo drawer, and generated ones that look like a bench's stock
(invented data, for the benchmark only): an E12 or E24 resistor assortment over 10 Ω … 1 MΩ
with uneven counts (some lines empty, a few 1 % metal-film lines), a handful of capacitors of
common values (ceramic, film, electrolytic with their usual ratings) and 1–4 NPN lines.
The transistor hFE ranges are from memory of typical datasheets, not a source.

Specs: common emitter, gain 2–60, supply 5–24 V, loads 1 k–100 k or open, sources 0–10 k,
swings up to 60 % of the supply, low cuts 10–300 Hz, Rin floors (None half the time = the
default floor), sometimes a current limit or a narrower temperature range.
`cases(n, seed) -> [(drawer_key, Spec)]`; `drawer(key) -> Drawer`.
"""

from __future__ import annotations

import functools
import math
from pathlib import Path

import numpy as np

from inventory.drawer import Drawer
from inventory.eseries import SERIES
from optimizer.spec import Spec

DEMO = "demo"
DEMO_PATH = Path(__file__).resolve().parents[2] / "inventory" / "demo" / "drawer.csv"
N_GENERATED = 8
HEADER = ("kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,"
          "location,notes")
# name, hFE min, hFE max, VCEO V, IC(max) A, PD(max) W: typical figures from memory, not a source.
NPN_TYPES = (("2N3904", 100, 300, 40, 0.2, 0.625), ("BC547B", 200, 450, 45, 0.1, 0.5),
             ("BC547A", 110, 220, 45, 0.1, 0.5), ("BC337-25", 160, 400, 45, 0.8, 0.625),
             ("2N2222A", 100, 300, 40, 0.6, 0.5), ("BC549C", 420, 800, 30, 0.1, 0.5),
             ("2N4401", 100, 300, 40, 0.6, 0.625))
# value F, rating V, dielectric: the usual pairings (ceramics 50 V, films 63–100 V, electrolytics 6.3–63 V).
CAPS = ((100e-12, 50, "c0g"), (1e-9, 50, "c0g"), (10e-9, 50, "x7r"), (100e-9, 50, "x7r"), (100e-9, 63, "film"),
        (220e-9, 63, "film"), (470e-9, 63, "film"), (1e-6, 63, "film"), (1e-6, 50, "electrolytic"),
        (2.2e-6, 50, "electrolytic"), (4.7e-6, 35, "electrolytic"), (10e-6, 25, "electrolytic"),
        (10e-6, 16, "electrolytic"), (22e-6, 25, "electrolytic"), (47e-6, 16, "electrolytic"),
        (47e-6, 35, "electrolytic"), (100e-6, 16, "electrolytic"), (100e-6, 35, "electrolytic"),
        (220e-6, 10, "electrolytic"), (220e-6, 25, "electrolytic"), (470e-6, 16, "electrolytic"))
SUPPLIES = (5.0, 6.0, 9.0, 12.0, 15.0, 18.0, 24.0)
SOURCES = (0.0, 50.0, 600.0, 1e3, 2.2e3, 10e3)


def si_text(x: float) -> str:
    """A value in plain SI text the drawer parser reads (e.g. 4.7k, 100n)."""
    for scale, prefix in ((1e6, "M"), (1e3, "k"), (1.0, ""), (1e-6, "u"), (1e-9, "n"), (1e-12, "p")):
        if abs(x) >= scale * 0.999:
            return f"{x / scale:.4g}{prefix}"
    return f"{x:.4g}"


def drawer_text(seed: int) -> str:
    """A generated drawer file (CSV text), seeded."""
    rng = np.random.default_rng(1000 + seed)
    rows = [HEADER]
    series = "E12" if seed % 2 == 0 else "E24"
    keep = rng.uniform(0.5, 0.95)
    for decade in range(1, 7):  # 10 Ω … 1 MΩ
        for m in SERIES[series]:
            if rng.uniform() > keep:
                continue
            qty = int(rng.choice([0, 1, 2, 3, 5, 10, 20, 50], p=[0.08, 0.12, 0.15, 0.15, 0.2, 0.15, 0.1, 0.05]))
            power = rng.choice(["1/4W", "1/4W", "1/8W", "0.5W"])
            rows.append(f"resistor,{si_text(m * 10.0 ** decade)},{qty},5%,{power},,,,,,,,,,R{decade},")
    if rng.uniform() < 0.5:  # a few 1 % metal-film lines
        for m in rng.choice(SERIES["E96"], 6, replace=False):
            rows.append(f"resistor,{si_text(m * 10.0 ** int(rng.integers(2, 5)))},{int(rng.integers(1, 10))},1%,"
                        "0.25W,,,metal film,,,,,,,R9,")
    n_caps = int(rng.integers(6, len(CAPS)))
    for i in sorted(rng.choice(len(CAPS), n_caps, replace=False)):
        f, v, diel = CAPS[i]
        tol = "20%" if diel == "electrolytic" else ("5%" if diel == "c0g" else "10%")
        rows.append(f"capacitor,{si_text(f)},{int(rng.integers(1, 12))},{tol},,{v}V,{diel},,,,,,,,C1,")
    for i in rng.choice(len(NPN_TYPES), int(rng.integers(1, 5)), replace=False):
        name, lo, hi, vceo, icmax, pd = NPN_TYPES[i]
        rows.append(f"transistor,,{int(rng.integers(1, 20))},,,,,{name},NPN,{lo},{hi},{vceo}V,{icmax}A,{pd}W,Q1,")
    return "\n".join(rows) + "\n"


@functools.lru_cache(maxsize=None)
def drawer(key: str) -> Drawer:
    """The demo drawer ("demo") or generated drawer "gen-N"."""
    if key == DEMO:
        return Drawer.load(DEMO_PATH)
    seed = int(key.split("-")[1])
    return Drawer.parse(drawer_text(seed), f"generated-{seed}.csv")


def _spec(rng) -> Spec:
    vcc = float(rng.choice(SUPPLIES)) if rng.uniform() < 0.7 else round(float(rng.uniform(5, 24)), 1)
    load = math.inf if rng.uniform() < 0.1 else float(f"{10 ** rng.uniform(3, 5):.2g}")
    source = float(rng.choice(SOURCES))
    swing = round(float(vcc * rng.uniform(0.03, 0.6) if rng.uniform() < 0.7 else vcc * rng.uniform(0.02, 0.15)), 2)
    rin = None if rng.uniform() < 0.5 else float(f"{10 ** rng.uniform(3, 5):.2g}")
    current = None if rng.uniform() < 0.75 else float(f"{10 ** rng.uniform(-3, -1.7):.2g}")
    temps = ((0.0, 50.0), (0.0, 50.0), (0.0, 50.0), (27.0, 27.0), (-20.0, 70.0))[int(rng.integers(0, 5))]
    return Spec(gain=round(float(10 ** rng.uniform(math.log10(2), math.log10(60))), 1),
                gain_tol=float(rng.choice([0.05, 0.05, 0.1, 0.2])), supply_v=vcc, load_ohms=load,
                source_ohms=source, swing_pp=max(swing, 0.1), low_cut_hz=float(f"{10 ** rng.uniform(1, 2.5):.2g}"),
                min_rin_ohms=rin, max_supply_a=current, temp_range_c=temps)


def cases(n: int = 200, seed: int = 9) -> list[tuple[str, Spec]]:
    """n (drawer key, spec) pairs: a third on the demo drawer, the rest over N_GENERATED generated drawers."""
    rng = np.random.default_rng(seed)
    out = []
    for i in range(n):
        key = DEMO if i % 3 == 0 else f"gen-{i % N_GENERATED}"
        out.append((key, _spec(rng)))
    return out


def describe(spec: Spec) -> str:
    """One line naming the spec's figures (for the benchmark's lists)."""
    load = "open" if not math.isfinite(spec.load_ohms) else f"{spec.load_ohms:g}"
    parts = [f"gain {spec.gain:g}±{spec.gain_tol:.0%}", f"{spec.supply_v:g} V", f"RL {load}",
             f"RS {spec.source_ohms:g}", f"swing {spec.swing_pp:g} Vpp", f"fL {spec.low_cut_hz:g} Hz",
             f"Rin≥{spec.rin_floor:g}" + ("(default)" if spec.min_rin_ohms is None else "")]
    if spec.max_supply_a is not None:
        parts.append(f"I≤{spec.max_supply_a * 1e3:g} mA")
    if spec.temp_range_c != (0.0, 50.0):
        parts.append(f"{spec.temp_range_c[0]:g}..{spec.temp_range_c[1]:g} °C")
    return ", ".join(parts)
