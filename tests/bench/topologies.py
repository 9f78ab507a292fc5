"""Follower and collector-feedback search on the demo drawer at depth 3: prints figures, asserts nothing.

`python -m tests.bench.topologies [--cap SECONDS]`.  Each spec runs in a fresh process
(find_designs, hints off) under a wall-time cap and a 12 GB address-space limit, so
a search that would run for hours or exhaust memory is reported as such instead.
Prints per spec: wall seconds, designs found, tuples screened, the first reason when none.
"""

from __future__ import annotations

import json
import subprocess
import sys
import time

SPECS = {  # our own scenarios: a 1 kΩ line driver and a gain-of-10 stage, each also asked for the impossible
    "follower feasible": dict(topology="emitter-follower", gain=0.95, gain_tol=0.05, load_ohms=1e3, swing_pp=2.0),
    # swing down = IE·(RE‖RL) ≥ 2 V needs IE > 2 mA into 1 kΩ, above the 1 mA supply limit
    "follower infeasible": dict(topology="emitter-follower", gain=0.95, gain_tol=0.05, load_ohms=1e3, swing_pp=4.0,
                                max_supply_a=1e-3),
    "feedback feasible": dict(topology="collector-feedback", gain=10.0, gain_tol=0.05, swing_pp=2.0),
    # swing up ≤ IC·Rac < IC·RL = 0.1 mA · 1 kΩ = 0.1 V, far below the 2.5 V asked
    "feedback infeasible": dict(topology="collector-feedback", gain=10.0, gain_tol=0.05, load_ohms=1e3,
                                swing_pp=5.0, max_supply_a=1e-4),
}
MEMORY_LIMIT_B = 12 * 2**30


def _child(name: str) -> None:
    import resource

    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT_B, MEMORY_LIMIT_B))
    from inventory.drawer import Drawer
    from optimizer.search.select import find_designs
    from optimizer.spec import Spec

    drawer = Drawer.load("inventory/demo/drawer.csv")
    t0 = time.perf_counter()
    doc = find_designs(drawer, Spec(**SPECS[name]), depth=3, hints=False)
    dt = time.perf_counter() - t0
    print(json.dumps({"seconds": dt, "designs": len(doc["designs"]), "screened": doc["search"]["tuples_screened"],
                      "why": doc["why"][:1]}))


def main(argv: list[str]) -> None:
    if argv[:1] == ["--child"]:
        _child(argv[1])
        return
    cap = float(argv[argv.index("--cap") + 1]) if "--cap" in argv else 600.0
    for name in SPECS:
        t0 = time.perf_counter()
        try:
            p = subprocess.run([sys.executable, "-m", "tests.bench.topologies", "--child", name],
                               capture_output=True, text=True, timeout=cap)
        except subprocess.TimeoutExpired:
            print(f"{name:22s} did not finish within {cap:.0f} s")
            continue
        wall = time.perf_counter() - t0
        if p.returncode != 0:
            tail = (p.stderr.strip().splitlines() or ["?"])[-1]
            print(f"{name:22s} failed after {wall:.1f} s: {tail}")
            continue
        r = json.loads(p.stdout.strip().splitlines()[-1])
        why = f"  why: {r['why'][0]}" if r["why"] and not r["designs"] else ""
        print(f"{name:22s} {r['seconds']:8.1f} s search ({wall:.1f} s process)  designs {r['designs']}  "
              f"tuples screened {r['screened']:,}{why}")


if __name__ == "__main__":
    main(sys.argv[1:])
