"""The demo chain: gain 100 from a 100 kΩ source at ≤ 1 % THD on the bundled demo drawer.  Prints figures.

`python -m tests.bench.chain_demo [--time-limit S] [--json FILE]`.  The request (our own scenario: a
high-impedance sensor into a 22 kΩ input) is beyond one stage: the source loses to a common emitter's
input resistance, and a single stage making gain 100 at the swing distorts more than 1 %
(HD2 ≈ ic/(4·IC) reduced by the emitter feedback; the collector's DC drop bounds IC·Rac on 12 V).
A follower in front keeps the source; the common emitter makes the gain.  The request widens the
gain tolerance to ±10 % and asks Rin ≥ 300 kΩ and 0.2 V p-p at the load: the default floor, 10 × 100 kΩ,
is proven out of reach at once (the chain's Rin is below its first stage's divider R1‖R2, at most 1 MΩ
from the demo drawer's largest resistor, 1 MΩ, two in series); the bench shows that proof first.

Prints: the default-floor request's status and time, then the search's time, time to the first chain and status, the first designs' parts and figures, each chain's gain, Rin
and THD at every corner (both transistors' hFE ends × the temperatures), and, with ngspice, the
largest deviations of ngspice from drawerfit at the typical, both-min and both-max hFE.
"""

from __future__ import annotations

import argparse
import json
import shutil
import time

DEMO_SPEC = dict(topology="emitter-follower+common-emitter", gain=100.0, gain_tol=0.10, source_ohms=100e3,
                 min_rin_ohms=300e3, swing_pp=0.2, max_thd=0.01)


def main(argv=None) -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--time-limit", type=float, default=30.0)
    ap.add_argument("--json", help="also write the result document here")
    args = ap.parse_args(argv)
    from inventory.drawer import Drawer
    from inventory.locate import demo_bytes
    from optimizer.search.select import find_designs
    from optimizer.spec import Spec

    drawer = Drawer.from_bytes(demo_bytes(), "demo drawer.csv")
    as_asked = Spec(topology=DEMO_SPEC["topology"], gain=100.0, source_ohms=100e3, max_thd=0.01)
    t0 = time.perf_counter()
    doc = find_designs(drawer, as_asked, time_limit_s=args.time_limit)
    print(f"as asked (default floor {as_asked.rin_floor:.3g} Ω, ±5 %, 1 V p-p): status {doc['status']} in "
          f"{time.perf_counter() - t0:.1f} s; {doc['why'][0] if doc['why'] else ''}")
    spec = Spec(**DEMO_SPEC)
    t0 = time.perf_counter()
    doc = find_designs(drawer, spec, time_limit_s=args.time_limit)
    took = time.perf_counter() - t0
    print(f"demo chain {spec.topology}, gain {spec.gain:g} ±{spec.gain_tol:.0%}, source {spec.source_ohms:g} Ω, "
          f"Rin ≥ {spec.rin_floor:g} Ω, {spec.swing_pp:g} V p-p, THD ≤ {spec.max_thd:.0%}")
    print(f"  {took:.1f} s (limit {args.time_limit:g} s), status {doc['status']}, optimal {doc['optimal']}, "
          f"search {doc.get('search')}")
    if args.json:
        with open(args.json, "w") as fh:
            json.dump(doc, fh)
    for w in doc["why"]:
        print(f"  why: {w}")
    for i, d in enumerate(doc["designs"], 1):
        p = d["predicted"]
        print(f"#{i} {d['best_for']} parts {d['score']['parts']}: gain {p['gain']:.2f}, Rin {p['rin']:.4g} Ω, "
              f"Rout {p['rout']:.4g} Ω, f_low {p['f_low']:.3g} Hz, THD {100 * p['thd']:.3f} %")
        values = (f"{k}={v.get('ohms') or v.get('farads') or v.get('part')}" for k, v in d["parts"].items())
        print("   " + ", ".join(values))
        c = d["corners"].values()
        print(f"   over {len(d['corners'])} corners: gain {min(x['gain'] for x in c):.2f} … "
              f"{max(x['gain'] for x in c):.2f}, "
              f"Rin {min(x['rin'] for x in c):.4g} … {max(x['rin'] for x in c):.4g} Ω, "
              f"THD {100 * min(x['thd'] for x in c):.3f} … {100 * max(x['thd'] for x in c):.3f} %")
        if shutil.which("ngspice"):
            _spice(d, spec, drawer)


def _spice(design, spec, drawer) -> None:
    from optimizer.chain.figures import figures
    from tests.helpers.verify_chain import chain_at
    from tests.test_chain_ngspice import simulate

    worst = {}
    hfe, hfe_b = design["hfe"], design["hfe_b"]
    for bf1, bf2 in ((hfe["typical"], hfe_b["typical"]), (hfe["min"], hfe_b["min"]), (hfe["max"], hfe_b["max"])):
        ch = chain_at(design, spec, drawer, bf1, bf2)
        mine = figures(ch, [(bf1, bf2, 27.0)], spec.swing_pp)
        dc, gain, rin, fl, thd, names = simulate(ch, bf1, bf2, 27.0, mine.amplitude[0], mine.f_low[0])
        nodes = {names[n]: n for n in mine.net.nodes}
        for node, v in dc.items():
            worst["DC (V)"] = max(worst.get("DC (V)", 0.0), abs(float(mine.node(nodes[node])[0]) - v))
        for key, a, b in (("gain", mine.gain[0], gain), ("Rin", mine.rin[0], rin), ("f_low", mine.f_low[0], fl),
                          ("THD", mine.thd[0], thd)):
            worst[key] = max(worst.get(key, 0.0), abs(b / a - 1))
    print("   ngspice vs drawerfit, largest deviation over hFE typical/min/max at 27 °C: "
          + ", ".join(f"{k} {v:.2g}" if k == "DC (V)" else f"{k} {100 * v:.3g} %" for k, v in worst.items()))


if __name__ == "__main__":
    main()
