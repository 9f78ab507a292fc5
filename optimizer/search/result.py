"""The design result document (DEVELOPERS.md, "The design result") from a solved search.

`predicted` is the exact analysis (analysis.analyze) at the line's typical hFE,
the geometric mean √(hFE min · hFE max); `at_hfe` repeats it at hFE min and max.
The yield is the share of Monte Carlo samples (part tolerances, hFE uniform over
the line's range, VBE spread, temperature over the spec's range) meeting the
spec's gain, swing, Rin and current (montecarlo.MonteCarlo.meeting).
"""

from __future__ import annotations

from dataclasses import asdict

import numpy as np

from optimizer.parts import capchoice, network_tree
from optimizer.physics import deck
from optimizer.search import feasible
from optimizer.physics.analysis import analyze
from optimizer.physics.montecarlo import monte_carlo
from optimizer.physics.stage import Stage
from optimizer.physics import polarity

MC_SAMPLES = 2000
MC_SEED = 1
MC_KEPT = 400  # gain samples kept in the JSON for the app's histogram


def networks_of(sol, choice) -> dict:
    """position → network_tree node of the resistor networks of a design."""
    return {p: sol.pool.table.node(int(n)) for p, n in choice.networks.items() if n is not None}


def capacitors_of(sol, row) -> dict:
    """position → (option index, node) of the capacitors of a design."""
    out = {}
    for p in capchoice.CAP_POSITIONS:
        i = int(row[f"opt_{p}"])
        if i >= 0:
            out[p] = (i, sol.options.node(i))
    return out


def stage_of(sol, choice, row, spec, bf=None) -> Stage:
    q = sol.qlines[choice.q].transistor
    if bf is not None:
        q = q.with_beta(bf)
    res = {p: float(network_tree.evaluate(n)) for p, n in networks_of(sol, choice).items()}
    caps = {p: float(sol.options.value[i]) for p, (i, _) in capacitors_of(sol, row).items()}
    return Stage(spec.topology, res, caps, spec.supply_v, spec.source_ohms, spec.load_ohms, q, 27.0,
                 spec.negative_supply_v)


def yield_of(sol, choice, spec, *, n=MC_SAMPLES, seed=MC_SEED):
    q = sol.qlines[choice.q].transistor
    mc = monte_carlo(spec.topology, networks_of(sol, choice), transistor=q, supply_v=spec.supply_v,
                     source_ohms=spec.source_ohms, load_ohms=spec.load_ohms, temp_range_c=spec.temp_range_c,
                     n=n, seed=seed, negative_supply_v=spec.negative_supply_v, dc_input=spec.dc_input)
    return mc.share_meeting(spec), mc


def uses_of(sol, choice, row) -> list[dict]:
    count = {}
    leaves = [leaf for node in networks_of(sol, choice).values() for leaf in network_tree.leaves(node)]
    leaves += [leaf for _, node in capacitors_of(sol, row).values() for leaf in network_tree.leaves(node)]
    for leaf in leaves:
        count[leaf.line] = count.get(leaf.line, 0) + 1
    q = sol.qlines[choice.q]
    count[q.line] = count.get(q.line, 0) + 1
    return [{"line": int(k), "qty": int(v)} for k, v in sorted(count.items())]


def _orientation(sol, row, report) -> list[str]:
    out = []
    names = {"base": "the base (Q1 side)", "in": "the input", "coll": "the collector (Q1 side)",
             "emit": "the emitter (Q1 side)", "out": "the output", "mid": "the RE1–RE2 junction", "0": "ground",
             "vcc": "the supply (+V)"}
    for p, (i, _) in capacitors_of(sol, row).items():
        if not bool(sol.options.polarised[i]):
            continue
        c = report.capacitors.get(p, {})
        node = names.get(c.get("positive_node"), c.get("positive_node", "?"))
        out.append(f"{p} is polarised: fit its + lead toward {node} (about {c.get('dc_v', 0.0):.2g} V DC across it, "
                   f"rated {sol.options.voltage_v[i]:g} V)")
    return out


def design_json(sol, choice, row, spec, *, locations=None, mc=None, yld=None, labels=()) -> dict:
    """One entry of "designs"; `labels` are the trade-off labels it wins (tradeoff.LABELS)."""
    typical = stage_of(sol, choice, row, spec)
    q = sol.qlines[choice.q]
    report = analyze(typical, spec.swing_pp)
    at = {c: analyze(stage_of(sol, choice, row, spec, bf), spec.swing_pp).to_json()["predicted"]
          for c, bf in (("min", q.transistor.hfe_min), ("max", q.transistor.hfe_max))}
    parts = {}
    for p, node in networks_of(sol, choice).items():
        parts[p] = {"ohms": float(network_tree.evaluate(node)), "network": network_tree.to_json(node, "ohms")}
    for p, (i, node) in capacitors_of(sol, row).items():
        parts[p] = {"farads": float(sol.options.value[i]), "network": network_tree.to_json(node, "farads"),
                    "polarised": bool(sol.options.polarised[i]), "voltage_v": float(sol.options.voltage_v[i])}
    parts["Q1"] = {"line": int(q.line), "part": q.name, "polarity": q.transistor.polarity}
    uses = uses_of(sol, choice, row)
    data = report.to_json()
    out = {
        "topology": spec.topology,
        "parts": parts,
        "predicted": data["predicted"],
        "uses": uses,
        "at_hfe": at,
        "hfe": {"min": q.transistor.hfe_min, "typical": q.transistor.bf, "max": q.transistor.hfe_max},
        "score": choice.score.to_json(),
        "yield": yld,
        "warnings": list(data["warnings"]),
        "cautions": list(data["cautions"]) + _orientation(sol, row, report),
        "locations": {str(u["line"]): (locations or {}).get(u["line"], "") for u in uses},
        "response": {"freq_hz": data["response"]["freq_hz"], "gain_db": data["response"]["gain_db"]},
        "mc": None,
    }
    out["best_for"] = list(labels)
    out["score"].update(trade_off_json(row))
    out["corners"] = polarity.real_corners(corners_json(row, spec), spec.supply_v, polarity.is_pnp(q.transistor))
    out["netlist"] = deck.design_netlist(typical, parts, report.capacitors)  # README: the netlist contract
    out["mc"] = mc_json(mc)
    return out


def mc_json(mc) -> dict | None:
    """The design JSON's "mc": the first MC_KEPT gain samples (for the histogram), n and the seed."""
    if mc is None:
        return None
    return {"gain": [float(g) for g in np.asarray(mc.samples["gain"])[:MC_KEPT]], "n": int(mc.n),
            "seed": int(mc.seed)}


def trade_off_json(row) -> dict:
    """The trade-off counts of a row (worst over every corner), SI units and fractions."""
    return {"thd": float(row["thd"]), "robustness": float(row["rob"]), "supply_a": float(row["isup"])}


def corners_json(row, spec) -> dict:
    """Per corner ("min", "max" at 27 °C; "min_lo" … at the temperature range's ends): its hFE (BF at
    27 °C), temperature and the screened DC points and gain, for the meter checks' ranges."""
    q_corners = {}
    for c in feasible.corner_names(row):
        end, _, tag = c.partition("_")
        temp = {"": 27.0, "lo": float(min(spec.temps_c)), "hi": float(max(spec.temps_c))}[tag]
        q_corners[c] = {"hfe_end": end, "temp_c": temp,
                        **{k: float(row[f"{c}_{k}"]) for k in ("vb", "ve", "vc", "gain")}}
    return q_corners


def spec_json(spec) -> dict:
    d = asdict(spec)
    d["temp_range_c"] = list(spec.temp_range_c)
    d["rin_floor_ohms"] = spec.rin_floor
    d["rin_floor_is_default"] = spec.rin_floor_is_default
    return d
