"""The chain's passband rule, the proven Rin bound and the chain search's anytime record.

* The passband (optimizer/physics/lowcut.py's rule for one stage, applied to the whole chain by
  optimizer/chain/check.py): at f_cut the gain is at least half power and a decade above it within
  1 % of midband, at every corner.  Checked against an independent route: each stage solved alone
  by the single-stage exact solver and the two cascaded as two-ports (a Thévenin source driving a
  load; any circuits textbook), H = H1,open · Zin2 / (Zin2 + Zout1) · H2.
* The Rin bound: a chain's input resistance is below its first stage's divider R1‖R2, which is at
  most half the largest network the stock makes; the largest network is checked against a brute
  force over every set of parts.
* first_design_s: the search records when the first chain met the spec.
"""

from __future__ import annotations

import itertools
import time
from dataclasses import replace
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from inventory.drawer import Drawer
from inventory.locate import demo_bytes
from optimizer.chain.check import check_chain, corners, passband_holds
from optimizer.chain.figures import figures
from optimizer.chain.search import largest_network_ohms
from optimizer.physics.circuit import NODES, build, operating_point, solve_small_signal
from optimizer.physics.stage import Stage
from optimizer.search.select import find_designs
from optimizer.spec import Spec
from tests.chain_designs import chain

IN, OUT = NODES.index("in"), NODES.index("out")


def cascade_gain(ch, bf1, bf2, temp_c, freq_hz=None) -> complex:
    """The chain's gain from two single-stage solves cascaded as two-ports (independent of chain/)."""
    s1, s2 = ch.first, ch.second
    a = Stage(s1.topology, s1.resistors, {k: v for k, v in s1.capacitors.items() if k != "COUT"}, s1.supply_v,
              s1.source_ohms, float("inf"), s1.transistor.with_beta(bf1), temp_c)
    b = Stage(s2.topology, s2.resistors, s2.capacitors, s1.supply_v, 0.0, s2.load_ohms,
              s2.transistor.with_beta(bf2), temp_c)
    ca, cb = build(a), build(b)
    oa, ob = operating_point(ca), operating_point(cb)
    f = None if freq_hz is None else np.atleast_1d(float(freq_hz))
    h1 = solve_small_signal(ca, oa, freq_hz=f)[0, OUT]
    z1 = solve_small_signal(ca, oa, freq_hz=f, source=0.0, inject=("out", "0"), skip=("RL",))[0, OUT]
    z2 = solve_small_signal(cb, ob, freq_hz=f, source=0.0, inject=("in", "0"), skip=("RS",))[0, IN]
    h2 = solve_small_signal(cb, ob, freq_hz=f)[0, OUT]
    return complex(h1 * z2 / (z2 + z1) * h2)


def _shelved(ce_farads):
    """CE+CE whose second stage has a small RE2 under a large RE1, bypassed by `ce_farads`: an
    undersized CE leaves a shelf a few dB deep, too shallow for the −3 dB test alone to notice."""
    ch = chain("common-emitter+common-emitter", source_ohms=1e3, load_ohms=22e3)
    r2 = dict(ch.second.resistors, RE1=680.0, RE2=220.0)
    c2 = dict(ch.second.capacitors, CE=ce_farads)
    return replace(ch, second=replace(ch.second, resistors=r2, capacitors=c2))


def _q(t):
    return SimpleNamespace(transistor=t)


@pytest.mark.parametrize("ce_farads, holds", [(1e-6, False), (2.2e-3, True)])
def test_passband_rule_matches_the_cascade_and_catches_a_shelf(ce_farads, holds):
    ch = _shelved(ce_farads)
    t1, t2 = ch.first.transistor, ch.second.transistor
    spec0 = Spec(topology=ch.kind, gain=1.0, supply_v=12.0, source_ohms=1e3, load_ohms=22e3, swing_pp=0.0)
    cs = list(corners(_q(t1), _q(t2), spec0).values())
    f = figures(ch, cs, None)
    fc = 1.05 * float(np.max(f.f_low))  # the −3 dB test passes at every corner, by construction
    got = passband_holds(f, fc)
    for k, (b1, b2, temp) in enumerate(cs):
        mid = abs(cascade_gain(ch, b1, b2, temp))
        at_fc = abs(cascade_gain(ch, b1, b2, temp, fc))
        decade = abs(cascade_gain(ch, b1, b2, temp, 10 * fc))
        assert at_fc >= mid / np.sqrt(2) * (1 - 1e-6)  # the half-power test alone passes
        assert got[k] == (decade >= 0.99 * mid), (k, decade / mid)
    assert bool(got.all()) is holds
    # The whole-chain check names the broken rule as the low cut-off.
    gain = float(np.median(np.abs(f.gain)))
    spec = replace(spec0, gain=gain, gain_tol=0.9, low_cut_hz=fc, min_rin_ohms=1.0, min_vce_v=0.0)
    verdict = check_chain(ch, spec, _q(t1), _q(t2), {})
    assert ("low_cut" in verdict.failed) is (not holds), verdict.failed


def _brute_largest(ohms, qty, depth):
    """Largest value of any series or parallel network of ≤ depth parts (parts counted with their qty)."""
    parts = [o for o, n in zip(ohms, qty, strict=True) for _ in range(n)]
    best = 0.0
    for k in range(1, depth + 1):
        for combo in itertools.combinations(range(len(parts)), k):
            vals = [parts[i] for i in combo]
            best = max(best, sum(vals), 1.0 / sum(1.0 / v for v in vals))
    return best


@pytest.mark.parametrize("depth", [1, 2, 3])
def test_largest_network_is_the_brute_force_maximum(depth):
    rng = np.random.default_rng(depth)
    for _ in range(20):
        n = int(rng.integers(1, 5))
        ohms = rng.choice([10.0, 470.0, 4.7e3, 22e3, 1e6, 2.2e6], size=n, replace=False)
        qty = rng.integers(1, 3, size=n)
        stock = SimpleNamespace(ohms=ohms, qty=qty)
        assert largest_network_ohms(stock, depth) == pytest.approx(_brute_largest(ohms, qty, depth))


@pytest.mark.parametrize("kind", ["emitter-follower+common-emitter", "common-emitter+common-emitter"])
def test_a_rin_floor_beyond_the_divider_is_proven_at_once(kind):
    # The demo drawer's largest resistor is 1 MΩ: two in series make 2 MΩ, so R1‖R2 ≤ 1 MΩ and the
    # default floor for a 100 kΩ source (10 × 100 kΩ) is out of reach for any chain.
    drawer = Drawer.from_bytes(demo_bytes(), "demo drawer.csv")
    assert largest_network_ohms(drawer.resistor_stock(), 2) == pytest.approx(2e6)
    spec = Spec(topology=kind, gain=100, source_ohms=100e3, supply_v=12, max_thd=0.01)
    t0 = time.perf_counter()
    doc = find_designs(drawer, spec, time_limit_s=10)
    assert doc["status"] == "infeasible" and not doc["designs"]
    assert time.perf_counter() - t0 < 10 + 1.0
    assert any("R1‖R2" in w for w in doc["why"]), doc["why"]
    # With a floor the divider can clear, the bound does not speak.
    doc2 = find_designs(drawer, replace(spec, min_rin_ohms=300e3, gain_tol=0.1, swing_pp=0.2), time_limit_s=1.0)
    assert not any("R1‖R2" in w for w in doc2["why"])


def test_the_chain_search_records_its_first_design():
    drawer = Drawer.load(Path(__file__).parent / "data" / "chain_drawer.csv")
    spec = Spec(topology="common-emitter+emitter-follower", gain=10, source_ohms=1e3, load_ohms=1e3, swing_pp=1.0)
    limit = 20.0
    t0 = time.perf_counter()
    doc = find_designs(drawer, spec, time_limit_s=limit)
    took = time.perf_counter() - t0
    assert took <= limit + 1.0  # the time limit holds (README: no run ends more than 1 s past it)
    assert doc["status"] == "found", doc["why"]
    first = doc["search"]["first_design_s"]
    assert first is not None and 0 < first <= doc["search"]["seconds"]
    assert doc["optimal"] is False and doc["unexplored"]


def test_the_likeliest_chain_goes_first_in_any():
    # Rules of the trade (common practice, no source): a follower in front keeps a high-resistance
    # source, a follower behind drives a low load, two common emitters otherwise.
    from optimizer.chain.names import CHAINS
    from optimizer.chain.plan import likely_order

    kinds = list(CHAINS)
    high = Spec(topology="any", gain=100, source_ohms=100e3)  # default floor 1 MΩ
    low_load = Spec(topology="any", gain=30, source_ohms=1e3, load_ohms=1e3)
    plain = Spec(topology="any", gain=30, source_ohms=1e3, load_ohms=22e3)
    assert likely_order(high, kinds)[0] == "emitter-follower+common-emitter"
    assert likely_order(low_load, kinds)[0] == "common-emitter+emitter-follower"
    assert likely_order(plain, kinds)[0] == "common-emitter+common-emitter"
    for s in (high, low_load, plain):
        assert sorted(likely_order(s, kinds)) == sorted(kinds)
