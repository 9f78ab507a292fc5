"""Shopping hints: one standard part whose purchase makes an infeasible spec feasible, verified.

Each candidate is added to the stock as a new drawer line and the whole search
is run again; a hint is reported only when that re-solve returns a design, and it
names the position the bought part takes in it.  Candidates: capacitors first
when the low cut-off (or a capacitor rating) binds, E6 electrolytics 1 µ…1000 µ
rated 25 V or more; otherwise E12 resistors 10 Ω…1 MΩ, values not on hand first.
A time budget bounds the work; the hints list says so when it ran out.
"""

from __future__ import annotations

import time

import numpy as np

from inventory.eseries import series_values
from inventory.values import format_capacitance, format_resistance
from optimizer.search.stopwatch import seconds_text

BUY_QTY = 5
BUDGET_S = 20.0
HINT_MAX_OHMS = 1e6  # the largest resistor a hint suggests


def _with_line(stock, cls_fields: dict):
    cols = {k: np.append(np.asarray(getattr(stock, k)), v) for k, v in cls_fields.items()}
    return type("Stock", (), cols)()


def _new_line(rstock, cstock, qlines) -> int:
    lines = [int(x) for x in np.concatenate([np.asarray(rstock.line), np.asarray(cstock.line)])]
    lines += [q.line for q in qlines]
    return max(lines, default=1) + 1


def shopping_hints(rstock, cstock, qlines, spec, sol, *, depth, search, budget_s=BUDGET_S, limit=1) -> list[dict]:
    """Verified purchases (dicts: position, buy, value, effect); `search` is select.search."""
    t0 = time.perf_counter()
    line = _new_line(rstock, cstock, qlines)
    out = []
    caps_bind = bool(sol.cap_failures)
    volts = max(25.0, float(np.ceil(spec.supply_v * 1.25 / 5) * 5))
    trials = []
    cap_vals = series_values("E6", 1e-6, 1e-3)
    res_vals = series_values("E12", 10.0, HINT_MAX_OHMS)
    have = set(np.round(np.asarray(rstock.ohms, dtype=float), 6))
    res_vals = sorted(res_vals, key=lambda v: (round(float(v), 6) in have, abs(np.log(v / 4.7e3))))
    if caps_bind:
        trials += [("capacitor", float(v)) for v in cap_vals]
    trials += [("resistor", float(v)) for v in res_vals]
    if not caps_bind:
        trials += [("capacitor", float(v)) for v in cap_vals]
    for kind, value in trials:
        if time.perf_counter() - t0 > budget_s or len(out) >= limit:
            break
        if kind == "resistor":
            r2 = _with_line(rstock, {"line": line, "ohms": value, "tolerance": 0.05, "power_w": 0.25, "qty": BUY_QTY})
            c2 = cstock
            buy = f"{BUY_QTY} × {format_resistance(value)} 5 % 0.25 W resistor"
        else:
            r2 = rstock
            c2 = _with_line(cstock, {"line": line, "farads": value, "tolerance": 0.2, "voltage_v": volts,
                                     "polarised": True, "qty": 2})
            buy = f"2 × {format_capacitance(value)} {volts:g} V electrolytic"
        try:
            trial = search(r2, c2, qlines, spec, top=1, depth=depth, deadline=t0 + budget_s, spare_parts=0)
        except (ValueError, RuntimeError):
            continue
        if not trial.designs:
            continue
        choice, row = trial.designs[0][:2]
        pos = _position_using(trial, choice, row, line)
        out.append({"position": pos, "buy": buy, "value": value, "line_added": line,
                    "effect": f"makes the spec feasible: the best design then uses {choice.score.parts} parts "
                              f"with a worst-case gain error of {choice.score.gain_error / 10:g} %"})
    if not out and time.perf_counter() - t0 > budget_s:
        out.append({"position": None, "buy": None, "value": None,
                    "effect": f"no single standard part tried within {seconds_text(budget_s)} s makes the spec "
                              "feasible"})
    return out


def _position_using(sol, choice, row, line) -> str | None:
    from optimizer.parts import network_tree
    from optimizer.search.result import capacitors_of, networks_of

    for p, node in networks_of(sol, choice).items():
        if any(leaf.line == line for leaf in network_tree.leaves(node)):
            return p
    for p, (_, node) in capacitors_of(sol, row).items():
        if any(leaf.line == line for leaf in network_tree.leaves(node)):
            return p
    return None
