"""One row per kind of stage (read from the registry) and per two-stage chain: how soon a design, how often proven.

`python -m tests.bench.kinds [--n 6] [--limit 10] [--proof-cap 60]`.  Prints figures, asserts nothing.

For each registered kind, `--n` requests of our own on the demo drawer (gains, loads and swings
spread over what the kind does; a follower is asked its preset gain) each run in a fresh
process, twice: once with the default time limit (`--limit`), once with a long one
(`--proof-cap`) to see whether and when the search proves its set complete.  Per kind:

  first design   median / worst seconds from the start of the search to the first design in hand
                 (the solver's own `search.first_design_s`);
  proven         share of requests proven optimal within `--limit` (default options, so the settled
                 stop applies), and the median seconds to the proof within `--proof-cap` with the
                 settled stop off (over the requests proven there);
  found          share of requests with at least one design.

Also `--kinds NAME,NAME` to run some kinds only.
"""

from __future__ import annotations

import json
import statistics
import subprocess
import sys
import time

MEMORY_LIMIT_B = 4 * 2**30
GAINS = (2.0, 5.0, 10.0, 20.0, 40.0, 80.0)
LOADS = (47e3, 10e3, 22e3, 100e3, 4.7e3, 22e3)
SWINGS = (1.0, 2.0, 3.0, 1.0, 2.0, 0.5)


def requests(kind_name: str, n: int) -> list[dict]:
    """Our own requests for one kind (or chain): the same spread for every kind, shaped by what it declares."""
    from optimizer import kinds
    from optimizer.chain.names import CHAINS

    stages = [kinds.get(s) for s in CHAINS[kind_name]] if kind_name in CHAINS else [kinds.get(kind_name)]
    out = []
    for i in range(n):
        gain = GAINS[i % len(GAINS)] * (len(stages) if len(stages) > 1 else 1)
        for kind in stages:
            if len(stages) == 1 and kind.preset_gain is not None:
                gain = kind.preset_gain
            elif len(stages) == 1 and kind.max_gain is not None:
                gain = min(gain, kind.max_gain)
        spec = dict(topology=kind_name, gain=gain, gain_tol=0.05, supply_v=12.0, load_ohms=LOADS[i % len(LOADS)],
                    source_ohms=1e3, swing_pp=SWINGS[i % len(SWINGS)], low_cut_hz=50.0)
        if any(kind.rails > 1 for kind in stages):
            spec["negative_supply_v"] = -12.0
        out.append(spec)
    return out


def _child(spec_json: str, limit: float, patience: float | None) -> None:
    import resource

    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT_B, MEMORY_LIMIT_B))
    from inventory.drawer import Drawer
    from optimizer.search.select import find_designs
    from optimizer.spec import Spec

    drawer = Drawer.load("inventory/demo/drawer.csv")
    t0 = time.perf_counter()
    spec = Spec(**json.loads(spec_json))
    extra = {} if patience is None or "+" in spec.topology else {"patience_s": patience}  # chains: no patience
    doc = find_designs(drawer, spec, hints=False, time_limit_s=limit, **extra)
    print(json.dumps({"seconds": time.perf_counter() - t0, "found": bool(doc["designs"]),
                      "optimal": bool(doc.get("optimal")), "first": (doc.get("search") or {}).get("first_design_s"),
                      "search_s": (doc.get("search") or {}).get("seconds")}))


def _run(spec: dict, limit: float, cap: float, patience: float | None = None) -> dict | None:
    try:
        p = subprocess.run([sys.executable, "-m", "tests.bench.kinds", "--child", json.dumps(spec), str(limit),
                            "" if patience is None else str(patience)],
                           capture_output=True, text=True, timeout=cap)
    except subprocess.TimeoutExpired:
        return None
    if p.returncode != 0:
        return None
    return json.loads(p.stdout.strip().splitlines()[-1])


def _median(xs):
    return statistics.median(xs) if xs else float("nan")


def main(argv: list[str]) -> None:
    if argv[:1] == ["--child"]:
        _child(argv[1], float(argv[2]), float(argv[3]) if len(argv) > 3 and argv[3] else None)
        return
    from optimizer import kinds

    def opt(name, default):
        return type(default)(argv[argv.index(name) + 1]) if name in argv else default

    n, limit, proof_cap = opt("--n", 6), opt("--limit", 10.0), opt("--proof-cap", 60.0)
    from optimizer.chain.names import CHAINS

    names = opt("--kinds", ",".join((*kinds.names(), *CHAINS))).split(",")
    print(f"kinds benchmark: {n} requests per kind on the demo drawer, limit {limit:g} s, proof cap {proof_cap:g} s")
    print(f"{'kind':24s} {'first design p50/max s':>24s} {'proven in limit':>16s} {'proof p50 s':>12s} {'found':>7s}")
    for name in names:
        firsts, proven, found, proof_s = [], 0, 0, []
        reqs = requests(name, n)
        for spec in reqs:
            r = _run(spec, limit, limit + 30)
            if r is not None:
                found += r["found"]
                proven += r["optimal"]
                if r["first"] is not None:
                    firsts.append(r["first"])
            long = _run(spec, proof_cap, proof_cap + 30, patience=0.0)  # no settled stop: run to the proof
            if long is not None and long["optimal"]:
                proof_s.append(long["search_s"])
        first = f"{_median(firsts):.2f} / {max(firsts):.2f}" if firsts else "not recorded"
        print(f"{name:24s} {first:>24s} {proven / n:>15.0%} {_median(proof_s):>12.2f} {found / n:>6.0%}"
              f"   ({len(proof_s)}/{n} proven within {proof_cap:g} s)")


if __name__ == "__main__":
    main(sys.argv[1:])
