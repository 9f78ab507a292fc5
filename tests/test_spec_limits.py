"""The spec-level bounds behind "… binds" reasons (optimizer/kinds/spec_limits.py), against designs.

A bound that says a request is impossible must hold for every design that exists, so every design
the search returns (each re-analysed by the exact solver, result.design_json) must sit inside it:

* Rin of a divider-biased stage ≤ R1‖R2; of a stage with RB to ground ≤ RB; of a collector-feedback
  stage ≤ RB/(1 + |A|) (Miller's theorem: the current RB draws from the base is (vb − vc)/RB =
  vb·(1 + |A_bc|)/RB, and the base-to-collector gain |A_bc| is at least the source-to-load gain;
  Sedra & Smith, "Microelectronic Circuits", Miller's theorem, from memory);
* |gain| ≤ gm·RC ≤ (the collector's room)/Vt at every corner, Vt = kT/q at the corner's
  temperature (k and q from scipy.constants).
The reasons' wording is checked on requests beyond each bound.
"""

from __future__ import annotations

import pytest
from scipy import constants

from inventory.drawer import Drawer
from optimizer.kinds import spec_limits
from optimizer.physics import swing as loadline
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.demo_job import DEMO

REQUESTS = [
    Spec(gain=10, supply_v=9),
    Spec(topology="emitter-follower", gain=0.95, supply_v=9, load_ohms=4.7e3),
    Spec(topology="collector-feedback", gain=8, supply_v=12),
    Spec(topology="split-common-emitter", gain=10, supply_v=12, negative_supply_v=-12),
    Spec(topology="split-emitter-follower", gain=0.95, supply_v=12, negative_supply_v=-12, load_ohms=4.7e3),
]


def _ohms(design, pos):
    part = design["parts"].get(pos)
    return float(part["ohms"]) if part else 0.0


@pytest.fixture(scope="module")
def designs():
    drawer = Drawer.load(DEMO)
    out = []
    for spec in REQUESTS:
        doc = find_designs(drawer, spec, hints=False, time_limit_s=6.0, patience_s=1.0)
        assert doc["designs"], spec.topology
        out += [(spec, d) for d in doc["designs"]]
    return out


def test_rin_sits_under_its_bias_network(designs):
    for spec, d in designs:
        rin, gain = d["predicted"]["rin"], abs(d["predicted"]["gain"])
        if "R1" in d["parts"]:
            r1, r2 = _ohms(d, "R1"), _ohms(d, "R2")
            cap = r1 * r2 / (r1 + r2)
        elif spec.topology == "collector-feedback":
            cap = _ohms(d, "RB") / (1 + gain)
        else:
            cap = _ohms(d, "RB")
        assert rin <= cap * (1 + 1e-9), (spec.topology, rin, cap)
        # …and so under the ceiling the reason quotes for the largest network (two largest in series).
        largest = 2 * max(_ohms(d, p) for p in d["parts"] if p.startswith("R"))
        bias = {"collector-feedback": "feedback"}.get(spec.topology, "divider" if "R1" in d["parts"] else "ground")
        assert rin <= spec_limits.rin_ceiling(bias, max(largest, cap * 2), spec)


def test_gain_sits_under_the_collector_room_over_vt(designs):
    for spec, d in designs:
        if spec.topology not in ("common-emitter", "collector-feedback", "split-common-emitter"):
            continue
        room = spec.span_v - loadline.VCE_SAT_V - spec.swing_pp / 2
        for corner in d["corners"].values():
            vt = constants.k * (corner["temp_c"] + constants.zero_Celsius) / constants.e
            assert abs(corner["gain"]) <= room / vt, (spec.topology, corner)


@pytest.mark.parametrize("spec, words", [
    (Spec(topology="collector-feedback", gain=30, supply_v=9, min_rin_ohms=500e3),
     "input resistance binds: Rin ≤ RB/(1 + |gain|)"),
    (Spec(topology="split-common-emitter", gain=30, supply_v=12, negative_supply_v=-12, min_rin_ohms=5e6),
     "input resistance binds: Rin ≤ RB,"),
    (Spec(topology="split-common-emitter", gain=150, supply_v=2, negative_supply_v=-2, swing_pp=1),
     "gain binds: with 1 V p-p on ±2 V no split-common-emitter reaches"),
    (Spec(topology="split-emitter-follower", gain=0.95, supply_v=5, negative_supply_v=-5, swing_pp=8,
          load_ohms=100, max_supply_a=0.01), "supply current binds: 8 V p-p into 100R"),
    (Spec(topology="emitter-follower", gain=0.95, supply_v=9, min_rin_ohms=2e6), "input resistance binds: Rin ≤ R1‖R2"),
])
def test_a_binding_bound_is_the_reason_given(spec, words):
    doc = find_designs(Drawer.load(DEMO), spec, hints=True, time_limit_s=10.0)
    assert doc["status"] == "infeasible" and doc["optimal"] is True
    assert any(w.startswith(words) for w in doc["why"]), doc["why"]


def test_supply_text():
    assert spec_limits.supply_text(Spec(gain=5, supply_v=9)) == "9 V"
    assert spec_limits.supply_text(Spec(gain=5, supply_v=12, negative_supply_v=-12)) == "±12 V"
    assert spec_limits.supply_text(Spec(gain=5, supply_v=12, negative_supply_v=-5)) == "+12 V / −5 V"
