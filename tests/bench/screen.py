"""Throughput of the vectorised stage model and the Monte Carlo.  Run: python -m tests.bench.screen

Prints candidates per second for each topology at n = 1e5 and 1e6 (random
log-uniform resistor values over design-like ranges, every output computed),
the most Newton iterations any candidate needed, and the time of a 10 000-sample
Monte Carlo.  Both wall-clock and process CPU time are shown: on a shared
machine the CPU figure is the steadier one, and "exp-equiv" (a candidate's
cost in numpy exp calls measured in the same run) the one to compare across
machines.  Target: ≥ 1e6 candidates/s on one core.
"""

from __future__ import annotations

import time

import numpy as np

from optimizer.parts import network_tree as nt
from optimizer.physics.montecarlo import monte_carlo, worst_case
from optimizer.physics.screen import screen
from optimizer.physics.transistor import Transistor

RANGES = {  # ohms, log-uniform; "0" marks positions left out for a fifth of the candidates
    "common-emitter": {"R1": (4.7e3, 1e6), "R2": (1e3, 220e3), "RC": (470, 47e3), "RE1": (0, 10, 2.2e3), "RE2": (0, 100, 10e3)},
    "emitter-follower": {"R1": (4.7e3, 1e6), "R2": (4.7e3, 1e6), "RE": (220, 22e3)},
    "collector-feedback": {"RB": (22e3, 4.7e6), "RC": (470, 47e3), "RE1": (0, 10, 2.2e3), "RE2": (0, 100, 10e3)},
}


def candidates(topology, n, rng):
    out = {}
    for pos, spec in RANGES[topology].items():
        lo, hi = spec[-2:]
        v = np.exp(rng.uniform(np.log(lo), np.log(hi), n))
        if len(spec) == 3:
            v = np.where(rng.random(n) < 0.2, 0.0, v)
        out[pos] = v
    return out


def timed(fn):
    w, c = time.perf_counter(), time.process_time()
    result = fn()
    return result, time.perf_counter() - w, time.process_time() - c


def reference_rate():
    """Element-wise numpy throughput of this machine now (multiply-adds and exps per second, CPU time)."""
    a = np.random.default_rng(1).random(32768)
    _, _, cpu_mul = timed(lambda: [a * a + a for _ in range(300)])
    _, _, cpu_exp = timed(lambda: [np.exp(a) for _ in range(300)])
    return 300 * a.size / cpu_mul, 300 * a.size / cpu_exp


def main():
    q = Transistor(hfe_min=100.0, hfe_max=400.0)
    rng = np.random.default_rng(0)
    mul, exp = reference_rate()
    print(f"machine now: {mul:.3g} multiply-adds/s, {exp:.3g} exp/s (numpy, CPU time, 32k arrays)")
    print(f"{'topology':20s} {'n':>9s} {'cand/s wall':>12s} {'cand/s CPU':>12s} {'exp-equiv':>9s} "
          f"{'Newton its':>10s} {'converged':>9s} {'saturated':>9s}")
    for topology in RANGES:
        for n in (100_000, 1_000_000):
            r = candidates(topology, n, rng)
            screen(topology, {k: v[:1000] for k, v in r.items()}, transistor=q, supply_v=12.0,
                   source_ohms=1e3, load_ohms=22e3)  # warm up
            op, wall, cpu = timed(lambda: screen(topology, r, transistor=q, supply_v=12.0,
                                                 source_ohms=1e3, load_ohms=22e3))
            # exp-equiv: the cost of one candidate in numpy exps on this machine now (load-independent)
            print(f"{topology:20s} {n:9d} {n / wall:12.3g} {n / cpu:12.3g} {exp * cpu / n:9.0f} {int(op['iterations']):10d} "
                  f"{op['converged'].mean():9.4f} {op['saturated'].mean():9.3f}")
    networks = {"R1": nt.Series((nt.Leaf(39e3, 0.05, 1), nt.Leaf(8.2e3, 0.05, 2))), "R2": nt.Leaf(10e3, 0.01, 3),
                "RC": nt.Leaf(4.7e3, 0.05, 4), "RE1": nt.Leaf(220.0, 0.05, 5), "RE2": nt.Leaf(820.0, 0.1, 6)}
    args = {"transistor": q, "supply_v": 12.0, "source_ohms": 600.0, "load_ohms": 22e3}
    mc, wall, cpu = timed(lambda: monte_carlo("common-emitter", networks, n=10_000, seed=0, **args))
    print(f"Monte Carlo, 10 000 samples: {wall * 1e3:.1f} ms wall, {cpu * 1e3:.1f} ms CPU "
          f"(gain {mc.gain.min():.2f}…{mc.gain.max():.2f})")
    wc, wall, cpu = timed(lambda: worst_case("common-emitter", networks, **args))
    print(f"worst case, 2^8 vertices: {wall * 1e3:.1f} ms wall, {cpu * 1e3:.1f} ms CPU "
          f"(gain {wc['gain'][0]:.2f}…{wc['gain'][1]:.2f})")


if __name__ == "__main__":
    main()
