"""`--topology any`: every kind the request can use, searched in turn, one trade-off set across them.

Each kind is searched by `select.find_designs` with a share of the time limit: the single-stage
kinds first, splitting half the limit between them, then the two-stage chains (optimizer/chain)
with the rest; within each group the kinds still to go split what is left equally, so a kind that
finishes early (proven, or nothing to build) hands its time on.  The chain most likely to fit
(chain/plan.likely_order: a follower in front for a high Rin floor, behind for a low load) goes
first and gets half of the chains' time: a chain's stage searches need seconds each.  The designs
found are pooled and the trade-off set is taken again over the pool with the same four counts
(tradeoff.py), so a design of one kind that another kind's design beats on every count drops out.
Kinds whose own gain limit rules the request out are skipped and named.

Order: the preference picks the first design as for one kind.  Under the default `balanced`
preference a design of fewer stages comes before one of more stages (a single stage that meets
the spec is what a bench builds first); any other preference is taken as asked, so "clean" may
put a two-stage chain first.  Kinds with more than one stage register `stages` > 1.

The document says "optimal": true only when every kind searched was proven complete (a chain's
search never is: chains are found, not proven).
"""

from __future__ import annotations

import time
from dataclasses import replace

from optimizer import kinds
from optimizer.search import tradeoff
from optimizer.spec import ANY_TOPOLOGY as ANY  # noqa: F401  (the request's name for "every kind")


def usable_kinds(spec) -> tuple[list[str], list[str]]:
    """(kinds to search, single stages first, then two-stage chains; notes on those left out and why)."""
    from optimizer.chain.names import CHAINS

    use, notes = [], []
    for name in (*kinds.names(), *CHAINS):
        # The kind's own limits (its gain, the rails it runs on, a DC-coupled input) say whether it can.
        problems = replace(spec, topology=name).problems()
        if problems:  # "--gain: 10; a … stage's gain is below 1" reads "left out (… below 1; asked 10)"
            option, _, why = problems[0].partition(": ")
            value, _, rest = why.partition("; ")
            plain = f"{rest}; asked {value}" if rest and value.replace(".", "", 1).isdigit() else why or option
            notes.append(f"{name}: left out ({plain})")
        else:
            use.append(name)
    return use, notes


def _stages(design) -> int:
    """Stages in a design: a chain lists its stages, a single-stage design has no "stages"."""
    return max(1, len(design.get("stages") or ()))


def merge(docs: dict[str, dict], prefer: str, top: int) -> list[dict]:
    """The designs of every kind's document pooled, the trade-off set over the pool, the preferred first."""
    pool = [d for doc in docs.values() for d in doc.get("designs", [])]
    if not pool:
        return []
    c = tradeoff.counts([d["score"]["parts"] for d in pool], [d["score"]["thd"] for d in pool],
                        [d["score"]["robustness"] for d in pool], [d["score"]["supply_a"] for d in pool])
    front = tradeoff.nondominated(c)
    picks = tradeoff.shown(c[front], prefer, top)
    out = []
    for i, labels in picks:
        d = dict(pool[int(front[i])])
        d["best_for"] = labels
        out.append(d)
    if prefer == "balanced":  # fewer stages first, the balanced order kept within each
        out.sort(key=_stages)
    return out


def find_any(drawer, spec, *, top, time_limit_s, progress=None, cancel=None, started=None, **kw) -> dict:
    """The result document (select.find_designs' shape) over every usable kind; the time limit counts
    from `started` (a time.perf_counter() value; default: the call)."""
    from optimizer.search.result import spec_json
    from optimizer.search.select import find_designs

    problems = spec.problems()
    if problems:
        return {"designs": [], "why": problems, "hints": [], "spec": spec_json(spec), "error": "spec",
                "status": "invalid", "optimal": False, "unexplored": None}
    from optimizer.chain.plan import likely_order

    names, notes = usable_kinds(spec)
    singles = [n for n in names if n in kinds.names()]
    names = singles + likely_order(spec, [n for n in names if n not in singles])
    t0 = time.perf_counter() if started is None else started
    limit = None if time_limit_s is None else float(time_limit_s)
    docs: dict[str, dict] = {}
    for k, name in enumerate(names):
        if cancel is not None and cancel.is_set():
            break
        left = None if limit is None else limit - (time.perf_counter() - t0)
        if left is not None and left <= 0.2:
            notes.append(f"{name}: not searched, the {limit:g} s limit was spent on the kinds before it")
            continue
        share = None if left is None else left / (len(names) - k)
        if left is not None and k < len(singles) < len(names):
            # Single stages first, with half the limit between them: the chains get the rest.
            share = max(0.0, left - limit / 2) / (len(singles) - k) if left > limit / 2 else left / (len(names) - k)
        elif left is not None and k == len(singles) and len(names) - k > 1:
            share = left / 2  # the likeliest chain first, with half of the chains' time

        def part(frac, text, k=k, name=name):
            if progress:
                progress((k + frac) / len(names), f"{name}: {text}")

        docs[name] = find_designs(drawer, replace(spec, topology=name), top=top, time_limit_s=share,
                                  progress=part, cancel=cancel, **kw)
    prefer = kw.get("prefer", "balanced")
    designs = merge(docs, prefer, top)
    doc = {"designs": designs, "spec": spec_json(spec), "inventory": str(getattr(drawer, "path", "") or ""),
           "hints": [], "why": list(notes), "kinds": {}}
    for name, d in docs.items():
        doc["kinds"][name] = {"status": d["status"], "optimal": d["optimal"], "found": len(d["designs"]),
                              "seconds": (d.get("search") or {}).get("seconds"), "unexplored": d.get("unexplored")}
        if not designs:
            doc["why"] += [f"{name}: {w}" for w in d.get("why", [])]
            doc["hints"] += [h for h in d.get("hints", []) if h not in doc["hints"]]
        if d.get("cancelled"):
            doc["cancelled"] = True
    searched_all = len(docs) == len(names)
    doc["optimal"] = bool(docs) and searched_all and all(d["optimal"] for d in docs.values())
    # One line for the header; each kind's own account is in doc["kinds"][name]["unexplored"].
    open_kinds = [n for n, d in docs.items() if not d["optimal"] and d["status"] != "infeasible"]
    left = [f"not proven complete for {', '.join(open_kinds)}"] if open_kinds else []
    unsearched = [n for n in names if n not in docs]
    left += [f"not searched: {', '.join(unsearched)}"] if unsearched else []
    doc["unexplored"] = "; ".join(left) or None
    proven = searched_all and docs and all(d["status"] == "infeasible" for d in docs.values())
    doc["status"] = "found" if designs else ("infeasible" if proven else "unproven")
    doc["search"] = {"kinds": list(docs), "seconds": round(time.perf_counter() - t0, 3), "time_limit_s": limit,
                     "prefer": prefer, "exhaustive": doc["optimal"]}
    if progress:
        progress(1.0, "done")
    return doc
