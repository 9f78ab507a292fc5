"""Why no design meets the spec: which constraint binds, and what is nearest.

Built from the search's own records: per constraint, the tuples that failed only
that one and the best figure among them (feasible.Near), the rows that met
everything but found no capacitors, and rows that met everything but could not
all be built from the counts on hand.
"""

from __future__ import annotations

from inventory.values import format_capacitance, format_resistance, format_si

from optimizer.parts import capchoice
from optimizer import kinds
from optimizer.kinds import spec_limits
from optimizer.physics.analysis import analyze
from optimizer.physics.stage import Stage


def rin_text(spec) -> str:
    """The Rin floor, saying where a default one comes from."""
    text = format_si(spec.rin_floor, "Ω")
    if spec.rin_floor_is_default:
        text += f" (the default: 10 × the {format_si(spec.source_ohms, 'Ω')} source, at least 1 kΩ)"
    return text


def reasons(sol, spec) -> list[str]:
    out = list(sol.why)
    near = sol.near
    if sol.why:
        return out
    g_lo, g_hi = spec.gain * (1 - spec.gain_tol), spec.gain * (1 + spec.gain_tol)
    if near.screened == 0:
        # Without a bound in words, "every one" holds only when the search ran to its end.
        which = "the resistors on hand" if sol.exhaustive else "the resistors tried before the search stopped"
        out.extend(list(_bounds(sol, spec).values()) or [
            f"no combination of {which} passes the first checks for "
            f"{'an' if spec.topology[0] in 'aeiou' else 'a'} {spec.topology} "
            f"with Rin ≥ {rin_text(spec)}, gain {spec.gain:g} and {spec.swing_pp:g} V p-p on "
            f"{spec_limits.supply_text(spec)} (the bias, gain, swing and headroom bounds rule every one out)"])
    b = near.best
    if "gain_low" in b:
        out.append(f"gain binds: meeting everything else, the highest gain reachable at every corner is "
                   f"{b['gain_low']:.3g} (asked ≥ {g_lo:.3g})")
    if "gain_high" in b and "gain_low" not in b:
        out.append(f"gain binds: meeting everything else, the lowest gain reachable is {b['gain_high']:.3g} "
                   f"(asked ≤ {g_hi:.3g})")
    if "swing" in b:
        out.append(f"swing binds: on {spec.supply_v:g} V the most clip-free swing at every corner with everything "
                   f"else met is {b['swing']:.3g} V p-p (asked {spec.swing_pp:g})")
    if "rin" in b:
        out.append(f"input resistance binds: the highest Rin with everything else met is "
                   f"{format_si(b['rin'], 'Ω')} (asked ≥ {rin_text(spec)})")
    if "vce" in b:
        out.append(f"bias headroom binds: with everything else met, the most quiescent VCE at every corner is "
                   f"{b['vce']:.3g} V (asked ≥ {spec.min_vce_v:g} V, --min-vce)")
    if "thd" in b:
        out.append(f"THD binds: the cleanest stage from this drawer gives {b['thd'] * 100:.2g} % at "
                   f"{spec.swing_pp:g} V p-p (asked ≤ {spec.max_thd * 100:g} %, --max-thd)")
    if "current" in b:
        out.append(f"supply current binds: the least with everything else met is {b['current'] * 1e3:.3g} mA "
                   f"(asked ≤ {spec.max_supply_a * 1e3:.3g} mA)")
    if "ratings" in b:
        out.append("the transistor ratings bind (dissipation above 50 % of PD(max), IC(max) or VCEO below the supply)")
    if sol.cap_failures:
        out.append(_capacitor_reason(sol, spec))
    if sol.stock_bound:
        out.append("value combinations that meet the spec exist, but not enough parts are on hand to build "
                   "any of them at once (the same line would be needed at several positions)")
    if not out and (sol.exhaustive or near.screened):
        which = "value combination" if sol.exhaustive else f"of the {near.screened:,} value combinations screened"
        out.append(f"no {which} meets every part of the spec at every hFE and temperature corner")
    if not sol.exhaustive:
        out.extend(sol.notes)
    return out


def no_purchase_helps(sol, spec, hint_max_ohms: float) -> str | None:
    """A note when a spec-level bound no bought part can move rules the spec out (hints are skipped).

    Gain against the supply and the current a swing needs are physics; Rin is capped by the bias network
    (spec_limits.rin_ceiling: R1‖R2 ≤ half the largest network, RB, or RB/(1 + |gain|)), which a bought
    resistor of at most hint_max_ohms can raise only to 3 × the larger of it and the largest part on hand
    (three in series).
    """
    if sol.near.screened or sol.why or kinds.get(spec.topology).spec_bounds is None:
        return None
    if {"gain", "current"} & set(_bounds(sol, spec)):
        return "no part bought would help: the bound above is set by the supply, the swing and the load"
    stock = sol.pool.stock if sol.pool is not None else None
    if stock is not None and len(stock.ohms):
        reach = 3 * max(float(max(stock.ohms)), hint_max_ohms)
        bias = kinds.get(spec.topology).bias
        most = spec_limits.rin_ceiling(bias, reach, spec)
        if spec.rin_floor > most:
            return (f"no resistor bought would help: even three of the largest in series give "
                    f"{spec_limits.RIN_WORDS[bias]} ≤ {format_resistance(most)}")
    return None


def _bounds(sol, spec) -> dict[str, str]:
    """The kind's spec-level bounds that rule out every value tuple at once, in words, by name."""
    hook = kinds.get(spec.topology).spec_bounds
    return hook(sol, spec) if hook is not None else {}


def _capacitor_reason(sol, spec) -> str:
    row, q = sol.cap_failures[0]
    opts = sol.options
    vdc = capchoice.dc_across(spec.topology, row)
    pos = capchoice.positions_for(row, spec)
    best, missing = {}, []
    for p in pos:
        idx = capchoice.usable(opts, vdc[p])
        if len(idx) == 0:
            missing.append(f"no capacitor on hand is rated for the {vdc[p]:.2g} V DC across {p} "
                           f"(with margin {capchoice.CAP_VOLTAGE_MARGIN:g}×)")
        else:
            best[p] = float(opts.value[idx].max())
    if missing:
        return "; ".join(missing)
    res = {k: float(row[k]) for k in kinds.get(spec.topology).resistors if k in row and row[k] > 0}
    stage = Stage(spec.topology, res, best, spec.supply_v, spec.source_ohms, spec.load_ohms,
                  q.transistor.with_beta(q.transistor.hfe_min), 27.0, spec.negative_supply_v)
    f_low = analyze(stage).predicted["f_low"]
    parts = ", ".join(f"{p} {format_capacitance(v)}" for p, v in best.items())
    return (f"low cut-off binds: even with the largest suitable capacitors on hand ({parts}) f_low = "
            f"{f_low:.3g} Hz at hFE min (asked ≤ {spec.low_cut_hz:g} Hz)")
