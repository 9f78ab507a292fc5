"""End to end as a user runs it: `drawerfit design … --json` on the benchmark's demo-drawer specs,
timed from spawn to exit (interpreter start, imports, the drawer, the search, the analysis of the
designs shown and the JSON printed).  Prints figures, asserts nothing.

    python -m tests.bench.cli_wall [--n 200] [--seed 9] [--step 3] [--time-limit 10]

The specs are tests.bench.specs.cases(n, seed) at indices 0, step, 2·step, … that fall on the demo
drawer (every third index does); each is turned into the command-line options a user would type.
The interpreter reads cached bytecode where it may (as an installed copy does after its first run).
"""

from __future__ import annotations

import argparse
import math
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
DEMO_FILE = ROOT / "inventory" / "demo" / "drawer.csv"


def options(spec) -> list[str]:
    """The `design` options that ask for `spec` (the fields tests.bench.specs varies)."""
    out = ["--gain", f"{spec.gain:g}", "--gain-tol", f"{spec.gain_tol:g}", "--supply", f"{spec.supply_v:g}",
           "--load", "open" if not math.isfinite(spec.load_ohms) else f"{spec.load_ohms:g}",
           "--source", f"{spec.source_ohms:g}", "--swing", f"{spec.swing_pp:g}", "--low-cut", f"{spec.low_cut_hz:g}",
           "--temp-range", f"{spec.temp_range_c[0]:g}..{spec.temp_range_c[1]:g}"]
    if spec.min_rin_ohms is not None:
        out += ["--min-rin", f"{spec.min_rin_ohms:g}"]
    if spec.max_supply_a is not None:
        out += ["--max-current", f"{spec.max_supply_a:g}"]
    return out


def main(argv=None) -> int:
    from tests.bench import specs

    ap = argparse.ArgumentParser(prog="python -m tests.bench.cli_wall", description=__doc__.split("\n\n")[0])
    ap.add_argument("--n", type=int, default=200)
    ap.add_argument("--seed", type=int, default=9)
    ap.add_argument("--step", type=int, default=3)
    ap.add_argument("--time-limit", type=float, default=10.0)
    a = ap.parse_args(argv)
    chosen = [(i, spec) for i, (key, spec) in enumerate(specs.cases(a.n, a.seed))
              if i % a.step == 0 and key == specs.DEMO]
    walls, codes = [], []
    for k, (i, spec) in enumerate(chosen):
        cmd = [sys.executable, "-m", "tui", "--inventory", str(DEMO_FILE), "design", *options(spec),
               "--time-limit", f"{a.time_limit:g}", "--json"]
        t0 = time.perf_counter()
        done = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, timeout=a.time_limit + 60)
        walls.append(time.perf_counter() - t0)
        codes.append(done.returncode)
        print(f"[{k + 1}/{len(chosen)}] #{i} exit {done.returncode}, {walls[-1]:.2f} s", flush=True)
    w = np.asarray(walls)
    over = int(np.sum(w > a.time_limit + 1.0))
    print(f"\n== `drawerfit design` end to end, {len(w)} demo-drawer specs, --time-limit {a.time_limit:g} s ==")
    print(f"wall p50 / p95 / max: {np.percentile(w, 50):.2f} / {np.percentile(w, 95):.2f} / {w.max():.2f} s "
          f"(targets p50 <= 2, p95 <= 10); runs > 1 s past the limit: {over}")
    print("exit status mix: " + ", ".join(f"{c}: {codes.count(c)}" for c in sorted(set(codes))))
    return 0


if __name__ == "__main__":
    sys.exit(main())
