"""The design result document for a chain (the single-stage shape, plus "stages").

Each design keeps the keys every reader knows ("parts", "predicted", "uses", "at_hfe", "score",
"corners", "netlist", …) and adds "stages": [{"kind", "positions", "predicted"}], first stage first.
"parts" names the second stage's positions with the suffix "_B" and its transistor Q2; CIN_B is
the interstage capacitor.  "predicted" is the whole chain's (gain from the source EMF to the load,
Rin, Rout, f_low, swing, THD), with VB, VE, VC and IC of Q1; each stage's own are in "stages".
"at_hfe" gives the chain with both transistors at their hFE min, and both at their max.
"yield" and "mc" are the single stage's (search/result.py): the share of Monte Carlo samples of the
whole chain (chain/montecarlo.py: every part within its tolerance, each transistor's hFE over its
line's range and its VBE spread, one temperature per sample over the spec's range) meeting the
spec's gain, Rin, swing and current, and the first of the gain samples.
Both transistors share a polarity ("polarity" in parts.Q1 and parts.Q2); an all-PNP chain was solved
as its NPN mirror (chain/polarity.py) and every voltage here is in real polarity.
"""

from __future__ import annotations

import time
from dataclasses import replace

from optimizer.chain.analysis import analyze_chain
from optimizer.chain.check import corners as chain_corners
from optimizer.chain.deck import chain_netlist
from optimizer.chain.montecarlo import chain_monte_carlo, networks_from_parts
from optimizer.chain.search import CHECK_S, search_chain
from optimizer.physics.analysis import _plain
from optimizer.chain.polarity import mirror_v, real_node
from optimizer.search.candidates import usable_transistors
from optimizer.search.result import MC_SAMPLES, MC_SEED, mc_json, spec_json
from optimizer.search.stopwatch import seconds_text

ORIENTATION_NODES = {"in": "the input", "x": "the first stage's output", "out": "the output", "0": "ground",
                     "vcc": "the supply (+V)",
                     "base1": "Q1's base", "emit1": "Q1's emitter", "coll1": "Q1's collector",
                     "mid1": "the RE1–RE2 junction",
                     "base2": "Q2's base", "emit2": "Q2's emitter", "coll2": "Q2's collector",
                     "mid2": "the RE1_B–RE2_B junction"}
POST_S_PER_DESIGN = 0.6  # the exact analysis of one chain shown (three corners, the response, THD)
OVERRUN_S = 1.0
SEARCH_WIND_UP_S = 1.0


def _at(chain, bf1, bf2, swing_pp):
    c = replace(chain, first=replace(chain.first, transistor=chain.first.transistor.with_beta(bf1)),
                second=replace(chain.second, transistor=chain.second.transistor.with_beta(bf2)))
    return analyze_chain(c, swing_pp)


def chain_yield(cand, spec, tolerance_of, *, n=MC_SAMPLES, seed=MC_SEED):
    """(share of samples meeting `spec`, the MonteCarlo) of a chain Candidate; tolerance_of(line) is
    each resistor line's tolerance (fraction)."""
    mc = chain_monte_carlo(cand.chain, networks_from_parts(cand.parts, tolerance_of),
                           temp_range_c=spec.temp_range_c, n=n, seed=seed)
    return mc.share_meeting(spec), mc


def tolerances(rstock) -> dict:
    """line → tolerance (fraction) of every resistor line in stock."""
    return {int(line): float(tol) for line, tol in zip(rstock.line, rstock.tolerance, strict=True)}


def design_json(cand, spec, *, labels=(), locations=None, mc=None, yld=None) -> dict:
    """One entry of "designs" for a chain Candidate (search.py); `mc`, `yld` from `chain_yield`."""
    ch = cand.chain
    h1, h2 = cand.halves
    report = analyze_chain(ch, spec.swing_pp if spec.swing_pp > 0 else None)
    at = {end: _at(ch, getattr(h1.q.transistor, f"hfe_{end}"), getattr(h2.q.transistor, f"hfe_{end}"),
                   spec.swing_pp if spec.swing_pp > 0 else None).predicted for end in ("min", "max")}
    uses = [{"line": int(k), "qty": int(v)} for k, v in sorted(cand.uses.items())]
    parts = dict(cand.parts)
    # Each transistor names its polarity (both the same), as one stage's Q1 does: the drawings and decks read it.
    parts["Q1"] = {**parts["Q1"], "polarity": h1.q.transistor.polarity}
    parts["Q2"] = {**(parts.get("Q2") or {"line": int(h2.q.line), "part": h2.q.name}),
                   "polarity": h2.q.transistor.polarity}
    cautions = list(report.cautions)
    mirror = mirror_v(ch)
    for name, node in report.positive_nodes.items():
        part = parts.get(name) or {}
        if part.get("polarised"):
            node = real_node(node, mirror)  # an all-PNP chain's CE: + toward +V (the mirror's 0)
            cautions.append(f"{name} is polarised: fit its + lead toward {ORIENTATION_NODES.get(node, node)} "
                            f"(rated {part.get('voltage_v', 0):g} V)")
    v = cand.verdict
    corners = {}
    if v is not None and v.figures is not None:
        f = v.figures
        (c1, b1, e1), (c2, b2, e2) = f.net.qs
        for k, (name, (bf1, bf2, temp)) in enumerate(zip(v.names, chain_corners(h1.q, h2.q, spec).values(),
                                                        strict=True)):
            end1, _, rest = name.partition(".")
            corners[name] = {"hfe_end": end1, "hfe_end_b": rest.split("_")[0], "temp_c": temp, "hfe": bf1, "hfe_b": bf2,
                             "vb": f.volts(b1)[k], "ve": f.volts(e1)[k], "vc": f.volts(c1)[k],
                             "vb_b": f.volts(b2)[k], "ve_b": f.volts(e2)[k], "vc_b": f.volts(c2)[k],
                             "gain": f.gain[k], "rin": f.rin[k], "thd": None if f.thd is None else f.thd[k]}
    out = {
        "topology": ch.kind,
        "stages": report.stages,
        "parts": parts,
        "predicted": report.predicted,
        "uses": uses,
        "at_hfe": at,
        "hfe": {"min": h1.q.transistor.hfe_min, "typical": h1.q.transistor.bf, "max": h1.q.transistor.hfe_max},
        "hfe_b": {"min": h2.q.transistor.hfe_min, "typical": h2.q.transistor.bf, "max": h2.q.transistor.hfe_max},
        "score": {"parts": cand.part_count, "thd": None if v is None else v.thd,
                  "robustness": None if v is None else v.robustness, "supply_a": None if v is None else v.supply_a},
        "yield": None if yld is None else float(yld),
        "warnings": report.warnings,
        "cautions": cautions,
        "locations": {str(u["line"]): (locations or {}).get(u["line"], "") for u in uses},
        "response": {"freq_hz": report.response["freq_hz"], "gain_db": report.response["gain_db"]},
        "mc": mc_json(mc),
        "best_for": list(labels),
        "corners": corners,
        "netlist": chain_netlist(ch, parts),
    }
    return _plain(out)


def find_chain_designs(drawer, spec, *, top=5, depth=2, progress=None, cancel=None, hints=True, prefer="balanced",
                       time_limit_s=10.0, min_yield=None, seed=None) -> dict:
    """The result document for a chain spec (select.find_designs hands chain topologies here).

    min_yield: a chain whose Monte Carlo yield (seed `seed`, default MC_SEED) is below it is not
    taken, as for a single stage."""
    doc = {"designs": [], "why": [], "hints": [], "spec": spec_json(spec),
           "inventory": str(getattr(drawer, "path", "") or ""), "status": "unproven", "optimal": False,
           "unexplored": None}
    problems = spec.problems()
    if problems:
        doc.update(why=problems, error="spec", status="invalid")
        return doc
    t0 = time.perf_counter()
    limit = float(time_limit_s) if time_limit_s is not None else None
    post = POST_S_PER_DESIGN * max(1, top)
    # Stage searches wind up past their deadlines (CP-SAT realising the designs): a second kept for that.
    deadline = None if limit is None else t0 + max(0.6 * limit, limit - post - SEARCH_WIND_UP_S)
    qlines, notes = usable_transistors(drawer.transistors())
    locations = {p.line: p.location for p in drawer.parts}
    rstock = drawer.resistor_stock()
    tolerance = tolerances(rstock).get
    mc_seed = MC_SEED if seed is None else int(seed)
    seen_yields = []  # the yield of every chain that met the spec and was sampled for --min-yield

    def accept(cand) -> bool:
        # Only the yield is kept (a long search turns many chains down); a chain shown is sampled
        # again with the same seed, which gives the same samples (a few ms).
        y, _ = chain_yield(cand, spec, tolerance, seed=mc_seed)
        seen_yields.append(y)
        return y >= min_yield

    # While no chain is in hand, the search may go on until one chain's analysis is all the limit has left.
    empty = None if limit is None else t0 + limit - POST_S_PER_DESIGN - SEARCH_WIND_UP_S - CHECK_S
    sol = search_chain(rstock, drawer.capacitor_stock(), qlines, spec, depth=depth,
                       deadline=deadline, cancel=cancel, progress=progress, prefer=prefer, top=top,
                       empty_deadline=empty, accept=accept if min_yield is not None else None)
    notes = notes + _polarity_notes(qlines, sol.polarities)
    doc["search"] = {"seconds": round(sol.seconds, 3), "exhaustive": False, "depth": depth, "prefer": prefer,
                     "time_limit_s": limit, "stopped_by": sol.stopped_by,
                     "first_design_s": None if sol.first_design_s is None else round(sol.first_design_s, 3),
                     "stage_searches": sol.stage_searches,
                     "chains_checked": sol.pairs, "chains_meeting": len(sol.found)}
    for k, (cand, labels) in enumerate(sol.shown):
        if k and limit is not None and time.perf_counter() - t0 > limit + OVERRUN_S - POST_S_PER_DESIGN:
            doc["why"].append(f"{len(sol.shown) - k} more chain(s) of the trade-off set left out to keep the "
                              f"{seconds_text(limit)} s limit")
            break
        y, mc = chain_yield(cand, spec, tolerance, seed=mc_seed)
        doc["designs"].append(design_json(cand, spec, labels=labels, locations=locations, mc=mc, yld=y))
    if doc["designs"]:
        doc["unexplored"] = sol.unexplored
        doc["status"] = "found"
        doc["why"] = notes + doc["why"]
    else:
        doc["why"] = sol.why + _reasons(sol, spec) + notes
        if min_yield is not None and seen_yields:
            best = max(seen_yields)
            doc["why"].append(f"--min-yield {min_yield:g}: the best Monte Carlo yield among chains meeting "
                              f"the spec is {best:.1%}")
        doc["hints"] = list(sol.hints) if hints else []
        doc["status"] = "infeasible" if sol.proven_none else "unproven"
        doc["unexplored"] = None if sol.proven_none else sol.unexplored
    if sol.stopped_by == "cancelled":
        doc["cancelled"] = True
    if progress:
        progress(1.0, "done")
    return doc


def _polarity_notes(qlines, tried) -> list[str]:
    """Which transistor pairs the search tried, said when the drawer holds a PNP line (an NPN-only
    drawer's chains are NPN pairs, as ever)."""
    polarities = {str(q.transistor.polarity).upper() for q in qlines}
    if "PNP" not in polarities or not tried:
        return []
    left = sorted(polarities - set(tried))
    text = f"chains tried {' and '.join(p + ' pairs' for p in tried)} (both stages share a polarity; " \
           "mixed NPN/PNP chains are not designed)"
    if left:
        text += f"; {' and '.join(left)} line(s) left out: fewer than two {'/'.join(left)} parts in stock"
    return [text]


LIMIT_WORDS = {"gain": "the chain's gain left its tolerance at some corner",
               "gain spread": "the first stage's gain spreads over its corners more than the chain's tolerance allows",
               "rin": "the chain's input resistance fell below the floor at some corner",
               "thd": "the chain's THD at the swing was over --max-thd at some corner",
               "swing": "the chain clipped before the asked swing at some corner",
               "low_cut": "the chain's f_low was above --low-cut at some corner",
               "vce": "a transistor's VCE fell below --min-vce at some corner",
               "bias": "a transistor was cut off or saturated at some corner",
               "current": "the supply current was over --max-current at some corner",
               "ratings": "a capacitor or transistor rating was exceeded at some corner",
               "yield": "the chain's Monte Carlo yield was below --min-yield"}


def _reasons(sol, spec) -> list[str]:
    """Why no chain was found: the limits the chains checked broke, and what the stage searches said."""
    out = []
    if sol.failed:
        top = ", ".join(f"{LIMIT_WORDS.get(k, k)} ({n})" for k, n in sol.failed.most_common(3))
        out.append(f"{sol.pairs} chain(s) were checked whole and none met the spec: {top}")
    for stage_spec, why in sol.stage_empty[:2]:
        out.append(f"no {stage_spec.topology} stage for gain {stage_spec.gain:.3g} ±{stage_spec.gain_tol:.1%} "
                   f"(source {stage_spec.source_ohms:.3g} Ω, load {stage_spec.load_ohms:.3g} Ω): " + "; ".join(why))
    if not sol.proven_none:
        how = "within the time limit" if sol.stopped_by != "cancelled" else "before the stop"
        out.append(f"no chain found {how}; not proven impossible (the chain search tries a few gain splits and "
                   "stage pairs), so a longer --time-limit may find one")
    return out
