"""Build figures for the resistor networks: `python -m tests.bench.networks`.

Generated stocks (seeded) of 50/150/300/1000 lines, values drawn from E12 and E24 between
1 Ω and 10 MΩ, random counts, 1 % or 5 %, 1/8–1 W.  For each: depth, raw ordered
combinations, networks kept, distinct values, build time (wall and CPU), CPU µs per kept network, and tracemalloc peak.  Prints
figures only; nothing here is a pass/fail test.
"""

from __future__ import annotations

import time
import tracemalloc
from types import SimpleNamespace

import numpy as np

from inventory.eseries import series_values
from optimizer.parts.networks import resistor_networks

SIZES = (50, 150, 300, 1000)
SEED = 20261201


def generated_stock(n: int, rng: np.random.Generator) -> SimpleNamespace:
    values = np.concatenate([series_values("E12", 1.0, 10e6), series_values("E24", 1.0, 10e6)])
    return SimpleNamespace(
        line=np.arange(2, n + 2), ohms=rng.choice(values, n), tolerance=rng.choice([0.01, 0.05], n),
        power_w=rng.choice([0.125, 0.25, 0.5, 1.0], n), qty=rng.integers(1, 26, n),
    )


def measure(stock, depth, lo, hi, max_spread=None) -> dict:
    """Times from a plain run (wall and CPU: on a busy machine the CPU time is the steadier figure);
    the memory peak from a second run under tracemalloc (which slows it)."""
    t0, c0 = time.perf_counter(), time.process_time()
    table = resistor_networks(stock, depth, lo, hi, max_spread=max_spread)
    build, cpu = time.perf_counter() - t0, time.process_time() - c0
    t0 = time.perf_counter()
    distinct = table.distinct()
    screen = time.perf_counter() - t0
    stats = dict(table.stats, distinct=len(distinct), build_s=build, cpu_s=cpu, distinct_s=screen)
    del table, distinct
    tracemalloc.start()
    resistor_networks(stock, depth, lo, hi, max_spread=max_spread).distinct()
    stats["peak_mb"] = tracemalloc.get_traced_memory()[1] / 2**20
    tracemalloc.stop()
    return stats


def main() -> None:
    rng = np.random.default_rng(SEED)
    cases = [  # (label, depth, lo Ω, hi Ω, max_spread, largest stock to try)
        ("all values", 2, None, None, None, 1000),
        ("all values", 3, None, None, None, 150),
        ("4k7 ± 5 %", 3, 4.7e3 * 0.95, 4.7e3 * 1.05, None, 1000),
        ("4k7 ± 5 %, spread ≤ 100", 3, 4.7e3 * 0.95, 4.7e3 * 1.05, 100.0, 1000),
        ("1k – 10k", 3, 1e3, 10e3, 100.0, 300),
    ]
    head = f"{'lines':>5} {'window':<24} {'depth':>5} {'raw':>14} {'kept':>10} {'distinct':>9} " \
           f"{'build s':>8} {'cpu s':>7} {'distinct s':>10} {'peak MB':>8} {'µs/kept':>8}"
    print(head)
    print("-" * len(head))
    for n in SIZES:
        stock = generated_stock(n, rng)
        for label, depth, lo, hi, spread, largest in cases:
            if n > largest:
                continue
            f = measure(stock, depth, lo, hi, spread)
            per = 1e6 * f["cpu_s"] / max(f["kept"], 1)
            print(f"{n:>5} {label:<24} {depth:>5} {f['raw']:>14,} {f['kept']:>10,} {f['distinct']:>9,} "
                  f"{f['build_s']:>8.3f} {f['cpu_s']:>7.3f} {f['distinct_s']:>10.3f} {f['peak_mb']:>8.1f} {per:>8.3f}")


if __name__ == "__main__":
    main()
