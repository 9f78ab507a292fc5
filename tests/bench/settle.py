"""What the settled stop rule costs: prints figures, asserts nothing.

    python -m tests.bench.settle [--n 200] [--step 3] [--time-limit 10] [--patience 0.5,1,2,3,5]

Each spec of tests.bench.specs.cases(n) (every `step`-th) is searched once to the full time
limit with the settled rule off (select.search, the deadline find_designs would give it), in a
fresh child process, recording every change of the trade-off set (time into the search and the
set's counts, select.Solution.front_trace).  The search's order does not depend on the rule, so
for each patience P the rule's stop is read off the trace: the first change followed by no other
within P seconds; the set at that change is what the rule would have returned (give or take the
rows screened in the last half patience, which the rule also folds in; the full run folds rows
in every 0.25 s, the rule every half patience up to 1 s).  Against the set at the
end of the full run it prints, per P: the search time p50 / p95, the share of specs whose
preferred design (balanced) differs, how much worse the rule's preferred design is on each
count where it differs (parts, THD in 0.01 %, margin in %, current in 10 µA; mean and max), and
the share of the full set's members the rule's set holds.
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import time

import numpy as np

KILL_AFTER_S = 60.0
FOLD_EVERY_S = 0.25


def child(index: int, n: int, seed: int, time_limit: float) -> dict:
    import importlib

    from optimizer.search import select
    from optimizer.search.candidates import usable_transistors
    from tests.bench import specs

    key, spec = specs.cases(n, seed)[index]
    drawer = specs.drawer(key)
    t0 = time.perf_counter()
    for name in select.LAZY_IMPORTS:
        importlib.import_module(name)
    post = select.POST_S_PER_DESIGN * select.DEFAULT_TOP
    deadline = t0 + max(select.SEARCH_SHARE * time_limit, time_limit - post - (time.perf_counter() - t0))
    qlines, _ = usable_transistors(drawer.transistors())
    # The rule off (a patience past the deadline), rows folded in as often as under the shortest
    # patience tried, so the trace sees changes when the rule would.
    select.SETTLE_EVERY_MAX_S = FOLD_EVERY_S
    sol = select.search(drawer.resistor_stock(), drawer.capacitor_stock(), qlines, spec, top=select.DEFAULT_TOP,
                        depth=select.DEFAULT_DEPTH, deadline=deadline, patience=1e6)
    return {"key": key, "seconds": sol.seconds, "exhaustive": sol.exhaustive, "stopped_by": sol.stopped_by,
            "trace": [(t, c.tolist()) for t, c in sol.front_trace]}


def run_child(index, n, seed, time_limit) -> dict | None:
    cmd = [sys.executable, "-m", "tests.bench.settle", "--child", str(index), "--n", str(n), "--seed", str(seed),
           "--time-limit", str(time_limit)]
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=time_limit + KILL_AFTER_S)
        return json.loads(done.stdout.strip().splitlines()[-1])
    except (subprocess.TimeoutExpired, IndexError, json.JSONDecodeError):
        return None


def preferred(c: np.ndarray) -> np.ndarray:
    from optimizer.search import tradeoff

    return c[tradeoff.preference_order(c, "balanced")[0]]


def watched(c: np.ndarray, watch: str):
    """What a rule watching `watch` sees of a set: the whole set, or the preferred design alone."""
    return frozenset(map(tuple, c.tolist())) if watch == "set" else tuple(preferred(c).tolist())


def settled_at(trace, patience: float, end: float, watch: str = "preferred") -> tuple[float, np.ndarray]:
    """(search seconds at the rule's stop, the set then) read off a trace of the full run, for a rule
    whose clock restarts when what it watches ("set" or "preferred") changes."""
    changes, last = [], None
    for t, c in trace:
        c = np.asarray(c)
        seen = watched(c, watch)
        if seen != last:
            changes.append(t)
            last = seen
    for k, t in enumerate(changes):
        nxt = changes[k + 1] if k + 1 < len(changes) else None
        if nxt is None or nxt - t > patience:
            stop = min(t + patience, end)
            return stop, np.asarray([c for tc, c in trace if tc <= stop][-1])
    return end, np.zeros((0, 4))


def report(runs, patiences, watches=("preferred", "set")) -> None:
    runs = [r for r in runs if r and r["trace"]]
    print(f"\n== the settled rule against the full run: {len(runs)} specs with designs ==")
    ends = [r["seconds"] for r in runs]
    print(f"full run search seconds p50 / p95: {np.percentile(ends, 50):.2f} / {np.percentile(ends, 95):.2f}; "
          f"proven: {sum(r['exhaustive'] for r in runs)}")
    print(f"{'watching':>9} {'patience s':>10} {'search p50':>10} {'p95':>6} {'pref differs':>12}   worse where it differs "
          f"(mean / max): parts, THD 0.01 %, margin %, current 10 µA   {'full set held':>13}")
    for watch, p in [(w, p) for w in watches for p in patiences]:
        stops, differ, worse, held = [], 0, [], []
        for r in runs:
            full = np.asarray(r["trace"][-1][1])
            t, c = settled_at(r["trace"], p, r["seconds"], watch)
            stops.append(t if not r["exhaustive"] or t < r["seconds"] else r["seconds"])
            a, b = preferred(c), preferred(full)
            if tuple(a) != tuple(b):
                differ += 1
                worse.append(a - b)
            have = {tuple(x) for x in c.tolist()}
            held.append(np.mean([tuple(x) in have for x in full.tolist()]))
        w = np.asarray(worse) if worse else np.zeros((1, 4))
        cols = "  ".join(f"{m:+.1f}/{x:+d}" for m, x in zip(w.mean(axis=0), w.max(axis=0).astype(int), strict=True))
        print(f"{watch:>9} {p:>10g} {np.percentile(stops, 50):>10.2f} {np.percentile(stops, 95):>6.2f} "
              f"{differ / len(runs):>12.1%}   {cols:<60} {np.mean(held):>12.1%}")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(prog="python -m tests.bench.settle", description=__doc__.split("\n\n")[0])
    ap.add_argument("--n", type=int, default=200)
    ap.add_argument("--step", type=int, default=3, help="every step-th spec of the n (default 3)")
    ap.add_argument("--seed", type=int, default=9)
    ap.add_argument("--time-limit", type=float, default=10.0)
    ap.add_argument("--patience", default="0.5,1,1.5,2,3,5")
    ap.add_argument("--json", default="", help="also write the traces to this file")
    ap.add_argument("--traces", default="", help="report on traces a --json run wrote instead of searching")
    ap.add_argument("--child", type=int, default=None, help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.child is not None:
        print(json.dumps(child(a.child, a.n, a.seed, a.time_limit)))
        return 0
    if a.traces:
        with open(a.traces) as fh:
            report(json.load(fh), [float(x) for x in a.patience.split(",")])
        return 0
    runs = []
    chosen = list(range(0, a.n, a.step))
    try:
        for k, i in enumerate(chosen):
            r = run_child(i, a.n, a.seed, a.time_limit)
            runs.append(r)
            if r:
                last = f"{r['trace'][-1][0]:.2f}" if r["trace"] else "-"
                print(f"[{k + 1}/{len(chosen)}] #{i} [{r['key']}] {r['seconds']:.2f} s, {r['stopped_by'] or 'proven'}, "
                      f"{len(r['trace'])} changes, last at {last} s", flush=True)
    except KeyboardInterrupt:
        print(f"\ninterrupted after {len(runs)} specs")
    report(runs, [float(x) for x in a.patience.split(",")])
    if a.json:
        with open(a.json, "w") as fh:
            json.dump(runs, fh)
    return 0


if __name__ == "__main__":
    sys.exit(main())
