"""Split-supply kinds on the demo drawer: prints figures, asserts nothing.

`python -m tests.bench.split`.  Per spec: the shortest --time-limit (of a few tried) at which the
search hands back a design, with its wall time (time to first design); then the default 10 s run:
its first design, figures, whether the set was proven complete, and the tuples screened.
"""

from __future__ import annotations

import time

from inventory.drawer import Drawer
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.demo_job import DEMO

SPECS = {  # our own scenarios: the demo's gain of 10 on ±12 V from a ground-referenced source, and a follower
    "ce ±12 V dc-input gain 10": Spec(topology="split-common-emitter", gain=10, supply_v=12, negative_supply_v=-12,
                                     dc_input=True),
    "ce ±12 V with CIN gain 10": Spec(topology="split-common-emitter", gain=10, supply_v=12, negative_supply_v=-12),
    "follower ±9 V dc-input": Spec(topology="split-emitter-follower", gain=0.95, supply_v=9, negative_supply_v=-9,
                                   dc_input=True, load_ohms=2.2e3, swing_pp=3.0),
}
LIMITS_S = (0.3, 0.6, 1.0, 2.0, 4.0)


def main() -> None:
    drawer = Drawer.load(DEMO)
    for name, spec in SPECS.items():
        for limit in LIMITS_S:
            t0 = time.perf_counter()
            doc = find_designs(drawer, spec, time_limit_s=limit, hints=False, top=1)
            wall = time.perf_counter() - t0
            if doc["designs"]:
                print(f"{name}: first design within --time-limit {limit:g} s ({wall:.2f} s wall)")
                break
        else:
            print(f"{name}: no design within {LIMITS_S[-1]:g} s")
        t0 = time.perf_counter()
        doc = find_designs(drawer, spec, hints=False)
        wall = time.perf_counter() - t0
        s = doc["search"]
        print(f"  default run {wall:.1f} s: {len(doc['designs'])} designs, optimal {doc['optimal']}, "
              f"{s['tuples_screened']} tuples screened")
        if doc["designs"]:
            d = doc["designs"][0]
            parts = " ".join(f"{k}={v.get('ohms') or v.get('farads') or v.get('part')}" for k, v in d["parts"].items())
            p = d["predicted"]
            print(f"  first: {parts}")
            print(f"  gain {p['gain']:.3f}, VB {p['vb'] * 1e3:.2f} mV, VE {p['ve']:.3f} V, VC {p['vc']:.2f} V, "
                  f"IC {p['ic'] * 1e3:.3f} mA, Rin {p['rin'] / 1e3:.1f} kΩ, f_low {p['f_low']:.1f} Hz, "
                  f"swing {p['swing_pp']:.2f} V p-p, THD {100 * p['thd']:.3f} %, yield {d.get('yield')}")


if __name__ == "__main__":
    main()
