"""drawerfit against the hand method: prints figures, asserts nothing.

    python -m tests.bench.versus_hand [--n 200] [--time-limit 10] [--seed 9] [--spice 20] [--only 0,5,7]

For each spec of tests.bench.specs.cases(n, seed): the hand design (tests.bench.hand) and
`find_designs(drawer, spec, time_limit_s=…)`, the latter in a fresh child process (a hang is
killed at the limit + 60 s; the child's wall time from spawn to exit, the find_designs call
itself, and the child's peak resident memory are kept).  Both methods' designs (drawerfit:
designs[0], and every design it returned for the property figure) are checked by
tests.helpers.verify at every hFE × temperature corner, and a sample of both is re-simulated
in ngspice (DC node voltages and midband gain at hFE min, 27 °C) against the exact analysis.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import shutil
import subprocess
import sys
import time
from collections import Counter

KILL_AFTER_S = 60.0  # beyond the time limit: the run is taken as hung and killed
MEM_CAP_MB = 2048  # address-space cap of each child: the machine is shared (the target is 1 GB)
OVERRUN_S = 1.0


def child(index: int, n: int, seed: int, time_limit: float) -> dict:
    """Run find_designs on one spec in this process; the parent reads the JSON printed."""
    import resource

    from optimizer.search.select import find_designs
    from tests.bench import specs

    key, spec = specs.cases(n, seed)[index]
    drawer = specs.drawer(key)
    t0 = time.perf_counter()
    try:
        doc = find_designs(drawer, spec, time_limit_s=time_limit)
        err = None
    except Exception as exc:  # the benchmark reports a crash as a figure, it does not stop
        doc, err = {}, f"{type(exc).__name__}: {exc}"
    seconds = time.perf_counter() - t0
    status = doc.get("status") if err is None else ("memory cap" if err.startswith("MemoryError") else "error")
    return {"seconds": seconds, "error": err, "status": status, "optimal": doc.get("optimal"),
            "designs": [{k: d.get(k) for k in ("topology", "parts", "uses", "best_for", "predicted")}
                        for d in doc.get("designs", [])],
            "why": doc.get("why", [])[:3],
            "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}


def _cap(mb):
    def limit():
        import resource

        resource.setrlimit(resource.RLIMIT_AS, (mb << 20, mb << 20))
    return limit if mb else None


def run_child(index, n, seed, time_limit, mem_cap_mb=MEM_CAP_MB) -> dict:
    cmd = [sys.executable, "-m", "tests.bench.versus_hand", "--child", str(index), "--n", str(n),
           "--seed", str(seed), "--time-limit", str(time_limit)]
    t0 = time.perf_counter()
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=time_limit + KILL_AFTER_S,
                              preexec_fn=_cap(mem_cap_mb))
    except subprocess.TimeoutExpired:
        return {"status": "killed", "wall": time.perf_counter() - t0, "seconds": None, "designs": [],
                "error": f"killed after {time_limit + KILL_AFTER_S:g} s"}
    wall = time.perf_counter() - t0
    try:
        out = json.loads(done.stdout.strip().splitlines()[-1])
    except (IndexError, json.JSONDecodeError):
        tail = done.stderr.strip().splitlines()[-1:] or ["no output"]
        out = {"status": "crashed", "seconds": None, "designs": [], "error": tail[0]}
        if "MemoryError" in tail[0]:
            out.update(status="memory cap", peak_mb=float(mem_cap_mb))
    out["wall"] = wall
    return out


def judge(key, spec, time_limit, index, n, seed, mem_cap_mb=MEM_CAP_MB) -> dict:
    """One spec: both methods, verified."""
    from tests.bench import specs
    from tests.bench.hand import NoHandDesign, hand_design
    from tests.helpers.verify import failures

    drawer = specs.drawer(key)
    row = {"index": index, "key": key, "spec": specs.describe(spec)}
    try:
        row["hand_design"] = hand_design(drawer, spec)
        row["hand"] = [str(f) for f in failures(row["hand_design"], spec, drawer)]
        row["hand_checks"] = sorted({f.check for f in failures(row["hand_design"], spec, drawer)})
    except NoHandDesign as exc:
        row["hand_design"], row["hand"], row["hand_checks"] = None, [f"no hand design: {exc}"], ["none"]
    res = run_child(index, n, seed, time_limit, mem_cap_mb)
    row["df"] = res
    verdicts = []
    for d in res.get("designs") or []:
        fs = failures(d, spec, drawer)
        verdicts.append(([str(f) for f in fs], sorted({f.check for f in fs})))
    row["df_all"] = verdicts
    row["df_fail"] = verdicts[0][0] if verdicts else [f"no design ({res.get('status')})"]
    row["df_checks"] = verdicts[0][1] if verdicts else [str(res.get("status"))]
    return row


def spice_compare(design, spec, drawer) -> dict | None:
    """ngspice against the exact analysis at hFE min, 27 °C: DC node volts and midband gain."""
    from optimizer.physics.analysis import analyze
    from optimizer.physics.netlist import node_names, to_netlist
    from tests import spice
    from tests.helpers.verify import stage_at, thd_against_ngspice

    try:
        stage = stage_at(design, spec, drawer, "min", 27.0)
    except ValueError:
        return None
    report = analyze(stage)
    p = report.predicted
    names = node_names(stage)
    out_node = f"v({names['out']})"
    corners = [c for c in report.corners_hz.values() if c] or [1.0]
    f_probe = 1e4 * max(corners)  # far above every coupling corner: midband
    nodes = [n for n in ("base", "emit", "coll") if names[n] not in ("0", "vcc")]
    deck = to_netlist(stage, analyses="")
    res = spice.run(deck, [("op", [f"v({names[n]})" for n in nodes]),
                           (f"ac lin 1 {f_probe:.6g} {f_probe:.6g}", [out_node])])
    mine = {"base": p["vb"], "emit": p["ve"], "coll": p["vc"]}
    dc = max(abs(mine[n] - float(res[0][f"v({names[n]})"][0].real)) for n in nodes)
    gain = complex(res[1][out_node][0]).real
    out = {"dc_v": dc, "gain_rel": abs(p["gain"] / gain - 1)}
    if spec.swing_pp > 0 and not (report.operating_point["saturated"] or report.operating_point["cutoff"]):
        try:
            mine_thd, spice_thd = thd_against_ngspice(stage, spec.swing_pp)
            out["thd_abs"] = abs(mine_thd - spice_thd)
            out["thd_ok"] = out["thd_abs"] <= max(0.2 * spice_thd, 1e-3)  # as tests/test_ngspice_stages.py
        except (RuntimeError, ValueError, subprocess.TimeoutExpired):
            pass
    return out


def _pct(xs, q):
    xs = sorted(xs)
    if not xs:
        return float("nan")
    k = (len(xs) - 1) * q
    lo, hi = math.floor(k), math.ceil(k)
    return xs[lo] + (xs[hi] - xs[lo]) * (k - lo)


def report(rows, time_limit, spice_rows) -> None:
    n = len(rows)
    hand_ok = [r for r in rows if not r["hand"]]
    df_ok = [r for r in rows if not r["df_fail"]]
    print(f"\n== drawerfit vs the hand method: {n} specs, --time-limit {time_limit:g} s ==")
    print(f"{'':34}{'figure':>12}  target")
    hs, ds = len(hand_ok) / n, len(df_ok) / n
    print(f"{'hand method meets the spec':34}{hs:>12.1%}")
    none = sum(r["hand_design"] is None for r in rows)
    print(f"{'hand method: no design at all':34}{none:>12}")
    print(f"{'drawerfit meets the spec':34}{ds:>12.1%}  >= 2 x hand ({2 * hs:.1%}) "
          f"{'MET' if ds >= 2 * hs else 'NOT MET'}")
    only_hand = [r for r in rows if not r["hand"] and r["df_fail"]]
    only_df = [r for r in rows if r["hand"] and not r["df_fail"]]
    print(f"{'only the hand design passes':34}{len(only_hand):>12}  0 {'MET' if not only_hand else 'NOT MET'}")
    print(f"{'only drawerfit passes':34}{len(only_df):>12}")
    all_designs = [v for r in rows for v in r["df_all"]]
    if all_designs:
        good = sum(1 for fs, _ in all_designs if not fs)
        share = good / len(all_designs)
        print(f"{'returned designs passing (all)':34}{share:>12.1%}  100% ({len(all_designs)} designs)")
    # A killed run counts at its kill time (a lower bound on what it would have taken).
    secs = [r["df"]["seconds"] if r["df"].get("seconds") is not None else r["df"]["wall"] for r in rows]
    walls = [r["df"]["wall"] for r in rows]
    print(f"{'find_designs p50 / p95 / max s':34}{_pct(secs, .5):>5.2f} {_pct(secs, .95):5.2f} "
          f"{max(secs or [0]):6.2f}  p50 <= 2, p95 <= 10 (killed runs at their kill time)")
    print(f"{'child wall p50 / p95 / max s':34}{_pct(walls, .5):>5.2f} {_pct(walls, .95):5.2f} {max(walls):6.2f}"
          "  (spawn to exit: interpreter start and imports included)")
    over = [r for r in rows if r["df"].get("seconds") is None or r["df"]["seconds"] > time_limit + OVERRUN_S]
    print(f"{'runs > 1 s past the limit':34}{len(over):>12}  0 {'MET' if not over else 'NOT MET'}")
    opt = [r for r in rows if r["df"].get("optimal") is True]
    print(f"{'optimal: true':34}{len(opt) / n:>12.1%}")
    mem = [r["df"].get("peak_mb") for r in rows if r["df"].get("peak_mb")]
    capped = sum(r["df"].get("status") == "memory cap" for r in rows)
    print(f"{'peak memory MB (max / p50)':34}{max(mem or [0]):>7.0f} {_pct(mem, .5):4.0f}  <= 1024"
          + (f"  ({capped} run(s) hit the {max(mem):.0f} MB cap)" if capped else ""))
    status = Counter(str(r["df"].get("status")) for r in rows)
    print(f"{'exit status mix':34}  " + ", ".join(f"{k} {v}" for k, v in sorted(status.items())))
    infeasible = [r for r in rows if not r["hand"] and r["df"].get("status") == "infeasible"]
    print(f"{'hand passes, drawerfit infeasible':34}{len(infeasible):>12}  0 {'MET' if not infeasible else 'NOT MET'}")
    why = Counter()
    for r in rows:
        why.update(("hand", c) for c in r["hand_checks"])
        why.update(("drawerfit", c) for c in r["df_checks"])
    for method in ("hand", "drawerfit"):
        tally = ", ".join(f"{c} {k}" for (m, c), k in sorted(why.items()) if m == method)
        print(f"failing checks, {method:>9} (specs): {tally or '-'}")
    for title, group, other in (("only the hand design passes", only_hand, ("df_fail", "drawerfit")),
                                ("only drawerfit passes", only_df, ("hand", "hand"))):
        print(f"\n-- {title} ({len(group)}) --")
        for r in group:
            fails = r[other[0]] or ["?"]
            more = f" (+{len(fails) - 1} more)" if len(fails) > 1 else ""
            print(f"  #{r['index']} [{r['key']}] {r['spec']}")
            print(f"      {other[1]} fails: {fails[0]}{more}")
    crashed = [r for r in rows if r["df"].get("error")]
    if crashed:
        print(f"\n-- drawerfit errors ({len(crashed)}) --")
        for r in crashed:
            print(f"  #{r['index']} [{r['key']}] {r['df']['error']}")
    if spice_rows:
        dc = max(s["dc_v"] for _, s in spice_rows)
        g = max(s["gain_rel"] for _, s in spice_rows)
        agree = sum(s["dc_v"] < 10e-3 and s["gain_rel"] < 0.01 for _, s in spice_rows)
        thd = [s for _, s in spice_rows if "thd_abs" in s]
        methods = ", ".join(f"{m} {k}" for m, k in sorted(Counter(m for m, _ in spice_rows).items()))
        print(f"\nngspice re-simulation (hFE min, 27 °C): {len(spice_rows)} designs ({methods}); "
              f"DC < 10 mV and gain < 1 %: {agree}; largest DC deviation {dc * 1e3:.3g} mV, gain {g:.3%}")
        if thd:
            print(f"  THD at the spec's swing vs .four (20 % rel. or 0.1 % abs.): {sum(s['thd_ok'] for s in thd)}"
                  f"/{len(thd)} agree; largest |difference| {max(s['thd_abs'] for s in thd):.3%}")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(prog="python -m tests.bench.versus_hand", description=__doc__.split("\n\n")[0])
    ap.add_argument("--n", type=int, default=200, help="number of specs (default 200)")
    ap.add_argument("--time-limit", type=float, default=10.0, help="find_designs time limit, s (default 10)")
    ap.add_argument("--seed", type=int, default=9)
    ap.add_argument("--spice", type=int, default=20, help="specs whose designs are re-simulated in ngspice")
    ap.add_argument("--only", default="", help="comma-separated spec indices (a slice of the n)")
    ap.add_argument("--mem-cap-mb", type=int, default=MEM_CAP_MB,
                    help=f"address-space cap per solver run, MB (default {MEM_CAP_MB}; 0 = none)")
    ap.add_argument("--json", default="", help="also write every row to this file")
    ap.add_argument("--child", type=int, default=None, help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.child is not None:
        print(json.dumps(child(a.child, a.n, a.seed, a.time_limit)))
        return 0
    from tests.bench import specs

    cases = specs.cases(a.n, a.seed)
    chosen = [int(i) for i in a.only.split(",") if i.strip()] or list(range(len(cases)))
    rows = []
    try:
        for k, i in enumerate(chosen):
            key, spec = cases[i]
            row = judge(key, spec, a.time_limit, i, a.n, a.seed, a.mem_cap_mb)
            rows.append(row)
            s = row["df"].get("seconds")
            print(f"[{k + 1}/{len(chosen)}] #{i} [{key}] hand {'pass' if not row['hand'] else 'fail'}, drawerfit "
                  f"{'pass' if not row['df_fail'] else 'fail'} ({row['df'].get('status')}, "
                  f"{'-' if s is None else f'{s:.2f}'} s)", flush=True)
    except KeyboardInterrupt:  # Ctrl-C: report what ran so far
        print(f"\ninterrupted after {len(rows)} specs")
        a.spice = 0
    if not rows:
        return 130
    spice_rows = []
    if a.spice and shutil.which("ngspice"):
        step = max(1, len(rows) // a.spice)
        for r in rows[::step][: a.spice]:
            drawer = specs.drawer(r["key"])
            spec = cases[r["index"]][1]
            for method, design in (("hand", r["hand_design"]), ("drawerfit", (r["df"]["designs"] or [None])[0])):
                if design:
                    s = spice_compare(design, spec, drawer)
                    if s:
                        spice_rows.append((method, s))
    report(rows, a.time_limit, spice_rows)
    if a.json:
        with open(a.json, "w") as fh:
            json.dump(rows, fh, indent=1, default=str)
    return 0


if __name__ == "__main__":
    os.environ.setdefault("PYTHONHASHSEED", "0")
    sys.exit(main())
