"""Spec-level bounds several kinds share: limits that rule out every value tuple of a kind at once,
said in words for the reasons a user reads when nothing fits (`Kind.spec_bounds`).

Each is a necessary condition every design meeting the spec satisfies at every corner, so a bound
that binds proves the request impossible for that kind:

  gain      |gain| ≤ gm·RC = IC·RC/Vt ≤ (the collector's room)/Vt, Vt at the hottest corner (where the
            gain must still be met and gm is least);
  current   a class-A stage's quiescent current carries the load's peak current: IC ≥ swing/(2·RL);
  rin       Rin is at most what the bias network lets through: R1‖R2 (half the largest network the
            stock makes), RB returned to ground (the largest network), or RB from the collector
            divided by 1 + |gain| (its Miller effect: the base-to-collector gain is at least the
            overall gain, which the source divider only lowers).
"""

from __future__ import annotations

from inventory.values import format_resistance
from optimizer.physics.transistor import thermal_voltage

RIN_WORDS = {"divider": "R1‖R2", "ground": "RB", "feedback": "RB/(1 + |gain|)"}


def gain_bound(spec, room_v: float, room_words: str) -> str | None:
    """The gain reason when (room_v)/Vt cannot reach the least gain asked."""
    vt = float(thermal_voltage(max(spec.temp_range_c)))
    g_min = spec.gain * (1 - spec.gain_tol)
    if room_v <= g_min * vt:
        return (f"gain binds: with {spec.swing_pp:g} V p-p on {supply_text(spec)} no {spec.topology} reaches "
                f"{g_min:.3g}: |gain| < gm·RC ≤ ({room_words})/Vt = {max(room_v, 0.0) / vt:.3g}")
    return None


def current_bound(spec) -> str | None:
    """The supply current reason when the load's peak current exceeds the current limit."""
    i_need = spec.swing_pp / (2 * spec.load_ohms)
    if spec.max_supply_a is not None and spec.max_supply_a < i_need:
        return (f"supply current binds: {spec.swing_pp:g} V p-p into {format_resistance(spec.load_ohms)} needs a "
                f"quiescent current ≥ swing/(2·RL) = {i_need * 1e3:.3g} mA "
                f"(asked ≤ {spec.max_supply_a * 1e3:.3g} mA)")
    return None


def rin_ceiling(bias: str, largest_ohms: float, spec) -> float:
    """The most input resistance (Ω) a stage biased this way has when no network exceeds largest_ohms."""
    if bias == "divider":
        return largest_ohms / 2
    if bias == "feedback":
        return largest_ohms / (1 + spec.gain * (1 - spec.gain_tol))
    return largest_ohms


def rin_bound(sol, spec, bias: str) -> str | None:
    """The input resistance reason when the largest network on hand caps Rin below the floor."""
    pool = sol.pool
    if pool is None or not len(pool.distinct):
        return None
    top = float(pool.distinct.value[-1])
    most = rin_ceiling(bias, top, spec)
    if spec.rin_floor > most:
        return (f"input resistance binds: Rin ≤ {RIN_WORDS[bias]}, at most {format_resistance(most)} from the "
                f"resistors on hand (largest network {format_resistance(top)}; asked ≥ "
                f"{format_resistance(spec.rin_floor)})")
    return None


def supply_text(spec) -> str:
    """"12 V", "±12 V" or "+12 V / −5 V"."""
    vee = float(getattr(spec, "negative_supply_v", 0.0) or 0.0)
    if not vee:
        return f"{spec.supply_v:g} V"
    if abs(vee + spec.supply_v) < 1e-9:
        return f"±{spec.supply_v:g} V"
    return f"+{spec.supply_v:g} V / −{abs(vee):g} V"


def collect(**reasons) -> dict[str, str]:
    """The reasons that bind, by name."""
    return {k: v for k, v in reasons.items() if v}
