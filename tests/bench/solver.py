"""Solver benchmark: prints figures, asserts nothing.  `python -m tests.bench.solver [--quick]`.

For generated drawers of 50, 300 and 1 000 lines (≈60 % resistors on E24 values,
30 % capacitors, 10 % NPN transistors; seeded) and depth 1, 2, 3, each in a fresh
process: the median wall time of the search over RUNS runs (1 run at 1 000 lines) (the gain-of-10
job), peak resident memory, and the exhaustive oracle's time in its own process
capped at ORACLE_CAP_S ("did not finish" beyond it, or when the assignment count is
beyond what it can hold).  Small 4- and 8-line drawers are added so the ratio is
measured in the same run where the oracle can finish.  The gap compares the trade-off sets
(solver vs oracle, as sets of tradeoff.counts) and must be 0; "proven" says whether the solver
finished its exhaustive part within SOLVER_CAP_S.
"""

from __future__ import annotations

import json
import statistics
import subprocess
import sys
import time

import numpy as np

RUNS = 3
ORACLE_CAP_S = 300.0
SOLVER_CAP_S = 60.0
SIZES = (4, 8, 50, 300, 1000)
ORACLE_MAX_COMBOS = 150_000_000
DEPTHS = (1, 2, 3)
E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8,
       7.5, 8.2, 9.1)


def drawer(n_lines: int, seed: int = 7):
    """(resistor stock, capacitor stock, transistor lines) of a generated drawer."""
    from types import SimpleNamespace as NS

    from tests.test_select_oracle import qline

    rng = np.random.default_rng(seed + n_lines)
    if n_lines <= 4:  # four resistor lines: the oracle finishes at depth 2 as well
        rs = [(2, 100e3, 2), (3, 10e3, 3), (4, 680.0, 2), (5, 12e3, 2)]
    if n_lines <= 8:  # the small drawers the oracle can finish
        rs = rs if n_lines <= 4 else [(2, 220e3, 2), (3, 20e3, 1), (4, 12.1e3, 2), (5, 680.0, 2), (6, 1e3, 1), (7, 27e3, 1)]
        res = NS(line=np.array([r[0] for r in rs]), ohms=np.array([r[1] for r in rs]),
                 tolerance=np.full(len(rs), 0.05), power_w=np.full(len(rs), 0.25), qty=np.array([r[2] for r in rs]))
        caps = NS(line=np.array([20]), farads=np.array([10e-6]), tolerance=np.array([0.2]),
                  voltage_v=np.array([25.0]), polarised=np.array([True]), qty=np.array([3]))
        return res, caps, [qline(30, "BC547B", 200, 450)]
    n_r, n_c = int(0.6 * n_lines), int(0.3 * n_lines)
    n_q = n_lines - n_r - n_c
    ohms = np.array(E24)[rng.integers(0, 24, n_r)] * 10.0 ** rng.integers(1, 6, n_r)
    res = NS(line=np.arange(2, 2 + n_r), ohms=ohms, tolerance=rng.choice([0.01, 0.05], n_r),
             power_w=rng.choice([0.125, 0.25, 0.5], n_r), qty=rng.integers(0, 30, n_r))
    farads = np.array([1.0, 2.2, 4.7])[rng.integers(0, 3, n_c)] * 10.0 ** rng.integers(-9, -3, n_c)
    caps = NS(line=np.arange(2 + n_r, 2 + n_r + n_c), farads=farads, tolerance=np.full(n_c, 0.2),
              voltage_v=rng.choice([16.0, 25.0, 50.0, 63.0], n_c), polarised=farads >= 1e-6,
              qty=rng.integers(0, 20, n_c))
    kinds = [("2N3904", 100, 300), ("BC547B", 200, 450), ("BC337-25", 160, 400), ("2N2222A", 100, 300)]
    qs = [qline(2 + n_r + n_c + i, *kinds[i % 4], qty=int(rng.integers(1, 20))) for i in range(n_q)]
    return res, caps, qs


def job():
    from optimizer.spec import Spec

    return Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=2, low_cut_hz=30,
                min_rin_ohms=8e3)


def one(kind: str, n: int, depth: int) -> dict:
    import resource

    from optimizer.search.oracle import TooBig, oracle_front
    from optimizer.search.select import search

    rs, cs, qs = drawer(n)
    if kind == "solver":
        times, scores = [], None
        for _ in range(RUNS if n < 1000 else 1):
            t0 = time.perf_counter()
            sol = search(rs, cs, qs, job(), top=5, depth=depth, deadline=t0 + SOLVER_CAP_S)
            times.append(time.perf_counter() - t0)
            front = [] if sol.front_counts is None else sol.front_counts
            scores = sorted({tuple(int(x) for x in r) for r in front})
        out = {"seconds": statistics.median(times), "scores": [list(x) for x in scores],
               "screened": sol.near.screened, "proven": sol.exhaustive}
    else:
        t0 = time.perf_counter()
        try:
            out = {"seconds": None, "scores": [list(x) for x in oracle_front(rs, cs, qs, job(), depth=depth,
                                                                            max_combos=ORACLE_MAX_COMBOS)]}
            out["seconds"] = time.perf_counter() - t0
        except TooBig as exc:
            out = {"seconds": None, "why": f"too big ({exc})"}
    out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    return out


def _child(kind, n, depth, timeout):
    cmd = [sys.executable, "-m", "tests.bench.solver", "--one", kind, str(n), str(depth)]
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return {"seconds": None, "why": f"did not finish in {timeout:g} s"}
    if done.returncode:
        return {"seconds": None, "why": done.stderr.strip().splitlines()[-1] if done.stderr else "failed"}
    return json.loads(done.stdout)


def main(argv):
    if argv[:1] == ["--one"]:
        print(json.dumps(one(argv[1], int(argv[2]), int(argv[3]))))
        return 0
    sizes = SIZES[:3] if "--quick" in argv else SIZES
    print(f"{'lines':>5} {'depth':>5} {'solver s':>9} {'proven':>6} {'set':>4} {'peak MB':>8} {'oracle s':>9} "
          f"{'ratio':>7} {'gap':>4}  notes")
    for n in sizes:
        for depth in DEPTHS:
            s = _child("solver", n, depth, 600)
            o = _child("oracle", n, depth, ORACLE_CAP_S) if n <= 50 else {"seconds": None, "why": "not run"}
            ratio = gap = "-"
            if s.get("seconds") and o.get("seconds"):
                ratio = f"{o['seconds'] / s['seconds']:.0f}×"
                gap = "0" if s["scores"] == o["scores"] else "DIFF"
            so = f"{s['seconds']:.3f}" if s.get("seconds") is not None else "-"
            oo = f"{o['seconds']:.2f}" if o.get("seconds") is not None else "dnf"
            note = "; ".join(x for x in (s.get("why"), o.get("why")) if x)
            proven = {True: "yes", False: "no"}.get(s.get("proven"), "-")
            size = len(s.get("scores") or [])
            print(f"{n:>5} {depth:>5} {so:>9} {proven:>6} {size:>4} {s.get('peak_mb', 0):8.0f} {oo:>9} {ratio:>7} "
                  f"{gap:>4}  {note}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
