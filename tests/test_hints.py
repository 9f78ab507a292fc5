"""Infeasible specs: the reasons name what binds, and the shopping hint really fixes it.

The check is independent of the hint code: the suggested part is added to the
stock here and the whole search run again.
"""

from __future__ import annotations

from types import SimpleNamespace as NS

import numpy as np

from optimizer.search.explain import reasons
from optimizer.search.hints import shopping_hints
from optimizer.search.select import search
from optimizer.spec import Spec
from tests.demo_job import LEGACY
from tests.test_select_oracle import CAPS, QS, capacitors, resistors

SPEC = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
            min_rin_ohms=8e3, **LEGACY)
GOOD = [(2, 220e3, 2), (3, 20e3, 1), (4, 12.1e3, 2), (5, 680.0, 2), (6, 1e3, 1), (7, 27e3, 1)]


def _add(stock, row: dict):
    return NS(**{k: np.append(np.asarray(getattr(stock, k)), row[k]) for k in row})


def _apply(hint, rs, cs):
    if "Ω" in hint["buy"] or "resistor" in hint["buy"]:
        rs = _add(rs, {"line": hint["line_added"], "ohms": hint["value"], "tolerance": 0.05, "power_w": 0.25,
                       "qty": 5})
    else:
        cs = _add(cs, {"line": hint["line_added"], "farads": hint["value"], "tolerance": 0.2,
                       "voltage_v": 25.0, "polarised": True, "qty": 2})
    return rs, cs


def test_low_cut_binds_and_a_capacitor_fixes_it():
    rs = resistors(GOOD)
    cs = capacitors([(40, 1e-6, 50.0, False, 2)])  # 1 µ only: f_low ≈ 10 Hz, asked 5 Hz
    spec = Spec(**{**SPEC.__dict__, "low_cut_hz": 5.0})
    sol = search(rs, cs, QS, spec, top=1, depth=1)
    assert sol.designs == []
    why = reasons(sol, spec)
    assert any("low cut-off binds" in w and "f_low" in w for w in why), why
    hints = shopping_hints(rs, cs, QS, spec, sol, depth=1, search=search)
    assert hints and hints[0]["buy"] and "electrolytic" in hints[0]["buy"]
    rs2, cs2 = _apply(hints[0], rs, cs)
    assert search(rs2, cs2, QS, spec, top=1, depth=1).designs  # the purchase really makes it feasible


def test_missing_emitter_resistor_is_bought():
    rs = resistors([x for x in GOOD if x[1] not in (680.0, 1e3)])  # no value near 680 Ω for RE1
    sol = search(rs, CAPS, QS, SPEC, top=1, depth=1)
    assert sol.designs == []
    assert reasons(sol, SPEC)
    hints = shopping_hints(rs, CAPS, QS, SPEC, sol, depth=1, search=search, budget_s=60)
    assert hints and hints[0]["buy"], hints
    rs2, cs2 = _apply(hints[0], rs, CAPS)
    assert search(rs2, cs2, QS, SPEC, top=1, depth=1).designs


def test_swing_beyond_a_low_supply_is_explained():
    rs = resistors(GOOD)
    spec = Spec(**{**SPEC.__dict__, "supply_v": 5.0, "swing_pp": 4.5})
    sol = search(rs, CAPS, QS, spec, top=1, depth=1)
    assert sol.designs == []
    assert reasons(sol, spec)


def _why(spec, depth=3):
    # The demo-style drawer of GOOD plus a 3 M line, at depth 3: the groups hold thousands of values, so
    # these reasons must come from the bounds that rule out whole boxes, not from enumeration.
    rs = resistors(GOOD + [(8, 3e6, 2)])
    return reasons(search(rs, CAPS, QS, spec, depth=depth), spec)


def test_gain_beyond_the_supply_is_explained_by_gm_rc():
    # Handbook bound: |A| ≤ gm·RC = IC·RC/VT, and IC·RC ≤ VCC − VCE(sat) − swing/2; on 12 V with 5 V p-p,
    # at the hottest corner of the default 0..50 °C (where the gain must still be met and gm is least),
    # VT = kT/q = 27.85 mV (scipy.constants), (12 − 0.2 − 2.5)/0.02785 ≈ 334 (VCE(sat) 0.2 V: common
    # practice, no source); at 27 °C (VT 25.85 mV) it would be ≈ 360.
    spec = Spec(gain=500, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30)
    why = _why(spec)
    assert any(w.startswith("gain binds") and "= 334" in w for w in why), why
    warm = _why(Spec(gain=500, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5,
                     low_cut_hz=30, temp_range_c=(27.0, 27.0)))
    assert any(w.startswith("gain binds") and "= 360" in w for w in warm), warm


def test_supply_current_below_what_the_swing_needs_is_explained():
    # A 5 V p-p swing into 22 kΩ needs a 2.5 V / 22 kΩ = 0.114 mA peak (Ohm's law), so IC ≥ 0.114 mA.
    spec = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
                max_supply_a=20e-6)
    why = _why(spec)
    assert any(w.startswith("supply current binds") and "0.114 mA" in w for w in why), why


def test_input_resistance_beyond_the_divider_is_explained():
    # Rin ≤ R1‖R2 (the bias divider is in parallel with the base); with 6 M at most per position
    # (two 3 M in series), R1‖R2 ≤ 3 M.
    spec = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
                min_rin_ohms=50e6)
    why = _why(spec, depth=2)
    assert any(w.startswith("input resistance binds") and "3M" in w for w in why), why


def test_capacitors_too_small_are_explained_by_the_rc_corner():
    # First-order high-pass corner f = 1/(2π·R·C) (handbook formula): the 10 nF + 10 nF pair on hand
    # needs R ≥ 1/(2π·30 Hz·20 nF) ≈ 265 kΩ around every capacitor, so COUT needs RC ≥ 243 kΩ, and then
    # IC ≤ 9.3 V / 243 kΩ ≈ 38 µA, below the 114 µA a 5 V p-p swing into 22 kΩ needs.
    from optimizer.spec import Bounds

    b = Bounds.of(SPEC, 20e-9)
    assert abs(b.min_re2_ohms - 1 / (2 * np.pi * 30 * 20e-9)) < 1e-6
    assert abs(b.min_rc_ohms - (b.min_re2_ohms - 22e3)) < 1e-6
    cs = capacitors([(40, 10e-9, 50.0, False, 2)])
    why = reasons(search(resistors(GOOD + [(8, 3e6, 2)]), cs, QS, SPEC, depth=3), SPEC)
    assert any(w.startswith("low cut-off binds") and "265k" in w for w in why), why


def test_no_hint_is_searched_when_physics_rules_the_spec_out():
    # gm·RC bound as above: no bought part raises (VCC − VCE(sat) − swing/2)/Vt, so no hint is tried.
    from optimizer.search.explain import no_purchase_helps

    spec = Spec(gain=500, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30)
    sol = search(resistors(GOOD), CAPS, QS, spec, depth=2)
    assert no_purchase_helps(sol, spec, 1e6).startswith("no part bought would help")
    # Rin ≤ R1‖R2 ≤ (3 × 1 MΩ)/2 with 1 MΩ the largest hint: 50 MΩ is out of reach, 1 MΩ is not.
    far = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
               min_rin_ohms=50e6)
    assert "three of the largest" in no_purchase_helps(search(resistors(GOOD), CAPS, QS, far, depth=2), far, 1e6)
    near = Spec(gain=10, gain_tol=0.05, supply_v=12, load_ohms=22e3, source_ohms=1e3, swing_pp=5, low_cut_hz=30,
                min_rin_ohms=1e6)
    assert no_purchase_helps(search(resistors(GOOD), CAPS, QS, near, depth=2), near, 1e6) is None
