"""The joint search for a two-stage chain: stages designed one after the other on shared stock,
then every pair checked whole at every corner (check.py).

The plan per chain kind (the gain split and which stage is designed first):
  * emitter-follower+common-emitter: the follower first (source: the spec's; load: the least input
    resistance the second stage will be asked for; its gain left free), then the common emitter
    driven by the follower's output resistance, for the gain the chain still needs;
  * common-emitter+common-emitter: the second stage first (driven from the interstage node, the
    real load), at a share of the gain the transistors make (√(G/loss) first, with loss the source's division into about
    twice the Rin floor, then exponents 0.4 and 0.6 while time is left), then
    the first stage loaded by the second's input resistance, for the rest of the gain;
  * common-emitter+emitter-follower: the follower first (the real load, its gain left free), then
    the common emitter loaded by the follower's input resistance.
Each single stage comes from select.search (its trade-off set, anytime, within a share of the
time); the second search sees the stock the first design leaves (select.search on less stock and
one transistor fewer), so every chain is buildable from the counts on hand.  The gain tolerance is
split so the product of the two stages' corner spreads stays within the chain's; THD, low cut-off
and ratings get shares too; the whole chain is then checked exactly, so the shares only steer.

Transistors: a chain's two stages share a polarity (an all-PNP chain is solved as the mirror of the
all-NPN chain, chain/polarity.py; mixed chains are not designed).  The first stage's search sees the
lines of every polarity with two parts or more in stock (NPN pairs and PNP pairs are both tried,
`ChainSolution.polarities`), the second stage's only the lines of the first's polarity.

Anytime: each stage search stops once its own trade-off set has settled (select.search's
patience, STAGE_PATIENCE_S) rather than running to its slice's end, so the first pair is checked
within seconds and the time left goes to the next first-stage designs and gain splits; the moment
the first chain met the spec is kept (first_design_s).  Every stage search screens the stocked
neighbours of its kind's ideal values first (search/seed.py), so a bench's textbook stage is tried
before anything else.

This is a heuristic over gain splits and stage pairs: the chain's trade-off set is never proven
complete, and the document says "optimal": false with what was left unexplored.  One thing is
proven before any search: the chain's input resistance is below its first stage's bias divider,
R1‖R2 ≤ (the largest network the stock makes)/2, so a Rin floor at or above that is out of reach
(status "infeasible"; e.g. the default floor of 1 MΩ for a 100 kΩ source on a drawer whose
largest resistor is 1 MΩ, two per position).
"""

from __future__ import annotations

import time
from collections import Counter
from dataclasses import dataclass, field, replace

import numpy as np

from optimizer.chain.check import Verdict, check_chain, corners
from optimizer.chain.circuit import Chain
from optimizer.chain.halves import Half, half_of, less_stock, less_transistor
from optimizer.chain.names import CE, CHAINS, EF, second
from optimizer.chain.plan import CE_SPLITS, first_plan, rin2_floor, second_plan
from optimizer.search import tradeoff
from optimizer.search.select import search as stage_search

POLARITIES = ("NPN", "PNP")
FIRSTS = 3  # designs of the first search carried on
SECONDS = 3  # designs of each second search
# Of a split's time, for the stage designed first: a follower is quick to design, a common emitter
# of a share of the gain is as hard as the second stage.
FIRST_SHARE = {f"{EF}+{CE}": 0.3, f"{CE}+{CE}": 0.4, f"{CE}+{EF}": 0.3}
# select.search works past its deadline to realise the designs it shows (CP-SAT, loaded on first use):
# each stage search is handed its slice less this much (measured 0.3–0.9 s on this project's machines).
STAGE_RESERVE_S = 0.8
# Seconds of search a stage needs for its first designs (measured 0.4–0.7 s, wind-up included, on the demo
# drawer): on a short limit the stage designed first gets at least this past its reserve, up to half the split's
# time, or a follower's share of a 5 s limit is all reserve and the chain search ends at once with nothing.
STAGE_MIN_S = 0.5
SPLIT_MIN_S = 30.0  # time left below which the first gain split gets all of it
CHECK_S = 0.4  # one chain checked at every corner (measured 0.35 s for 12 corners)
# A stage search stops once its trade-off set has not changed for this long (select.search's settled
# rule): the stage's first designs are what the chain needs; the time saved goes to more pairs.
STAGE_PATIENCE_S = 1.0
QUICK_PATIENCE_S = 0.3  # the same, until the first chain is in hand: its stages' first designs, soon
DEEP_ROUND_MIN_S = 10.0  # time left below which no second, deeper round over the gain splits starts


@dataclass
class Candidate:
    chain: Chain
    halves: tuple  # (Half of stage 1, Half of stage 2)
    parts: dict  # design-JSON parts with suffixed positions, Q1, Q2
    uses: Counter
    ratings: dict  # capacitor → (volts, polarised)
    verdict: Verdict | None = None

    @property
    def part_count(self) -> int:
        return int(sum(self.uses.values()))


@dataclass
class ChainSolution:
    spec: object
    found: list = field(default_factory=list)  # Candidates meeting the spec
    shown: list = field(default_factory=list)  # (Candidate, labels), the preferred first
    why: list = field(default_factory=list)
    hints: list = field(default_factory=list)
    failed: Counter = field(default_factory=Counter)  # limit → chains that broke it
    pairs: int = 0
    stage_searches: int = 0
    stage_empty: list = field(default_factory=list)  # reasons single-stage searches found nothing
    proven_none: bool = False
    stopped_by: str | None = None
    seconds: float = 0.0
    started: float = 0.0  # time.perf_counter() at the start
    first_design_s: float | None = None  # seconds from the start until a chain met the spec
    polarities: list = field(default_factory=list)  # the transistor polarities whose pairs were tried
    unexplored: str = ("other gain splits and other pairs of stages: the chain search designs the stages one "
                       "after the other from a few designs of each stage's trade-off set, so its set is not "
                       "proven complete")


def _join(kind, spec, h1: Half, h2: Half, index) -> Candidate:
    """The chain of two halves.  The first stage's COUT and the second's CIN are one capacitor in a
    chain (CIN_B): the one chosen by the stage designed second, which saw the real surroundings."""
    donor = h1 if index == 1 else h2  # the stage designed second
    inter = donor.parts.get("COUT" if donor is h1 else "CIN")
    c1 = {k: v for k, v in h1.capacitors.items() if k != "COUT"}
    c2 = {k: v for k, v in h2.capacitors.items() if k != "CIN"}
    if inter is not None:
        c2["CIN"] = float(inter["farads"])
    s1 = h1.stage(spec, load_ohms=float("inf"))
    s1 = replace(s1, capacitors=c1)
    s2 = replace(h2.stage(spec, source_ohms=0.0), capacitors=c2)
    parts = {p: v for p, v in h1.parts.items() if p != "COUT"}
    parts.update({second(p): v for p, v in h2.parts.items() if p != "CIN"})
    if inter is not None:
        parts["CIN_B"] = inter
    uses = h1.counter(leave_out=("COUT",)) + h2.counter(leave_out=("CIN",))
    uses.update(donor.uses.get("COUT" if donor is h1 else "CIN", Counter()))
    ratings = {p: (float(v.get("voltage_v", float("nan"))), bool(v.get("polarised", False)))
               for p, v in parts.items() if "farads" in v}
    return Candidate(Chain(kind, s1, s2), (h1, h2), parts, uses, ratings)


def search_chain(rstock, cstock, qlines, spec, *, depth=2, deadline=None, cancel=None, progress=None,
                 prefer="balanced", top=5, empty_deadline=None, accept=None) -> ChainSolution:
    """The chains found for `spec` (spec.topology a chain kind) within `deadline` (perf_counter).

    empty_deadline (later than deadline): when the search stops while no chain has met the spec yet;
    the time `deadline` keeps for analysing the chains shown is not needed for them then.
    accept(Candidate) -> bool, if given, is one more test a chain meeting the spec must pass (the
    Monte Carlo yield); a chain it turns down counts as failing "yield"."""
    t0 = time.perf_counter()
    kind = spec.topology
    sol = ChainSolution(spec, started=t0)
    if not _stocked(rstock, cstock, qlines, sol) or not _rin_reachable(rstock, spec, depth, sol):
        sol.seconds = time.perf_counter() - t0
        return sol
    # Both stages share a polarity: NPN pairs and PNP pairs, each from lines with two parts or more
    # between them; the second stage is searched among the first's polarity only (_one_split).
    qlines, sol.polarities = pairable(qlines)
    floor2 = rin2_floor(spec, qlines, kind)
    splits = CE_SPLITS if CHAINS[kind] == (CE, CE) else (None,)
    found_end = deadline if deadline is not None else t0 + 60.0
    ends = (found_end, max(found_end, empty_deadline if empty_deadline is not None else found_end))

    def end_now():
        return ends[0] if sol.found else ends[1]

    seen = set()
    # Round 1 is quick (stage searches stop soon after their first designs): a chain in hand early.
    # Round 2, while time is left, searches each stage until its trade-off set settles, for better pairs.
    for patience in (QUICK_PATIENCE_S, STAGE_PATIENCE_S):
        if patience == STAGE_PATIENCE_S and end_now() - time.perf_counter() < DEEP_ROUND_MIN_S:
            break
        for k, split in enumerate(splits):
            if _stop(cancel, end_now(), sol):
                break
            # The first split gets most of the time; later ones what is left, while a design is still missing.
            if k and (sol.found or end_now() - time.perf_counter() < 3.0):
                break
            # A single-stage search needs seconds to get going: more than one split only on a long limit.
            left = end_now() - time.perf_counter()
            share = 0.6 if k + 1 < len(splits) and left > SPLIT_MIN_S else 1.0
            slot_end = time.perf_counter() + left * share
            _one_split(kind, spec, split, floor2, rstock, cstock, qlines, depth, slot_end, cancel, sol, seen, progress,
                       patience, end_now, accept)
        if sol.stopped_by == "cancelled":
            break
    if sol.stopped_by is None and deadline is not None and time.perf_counter() >= end_now():
        sol.stopped_by = "time limit"
    sol.shown = _shown(sol.found, prefer, top)
    sol.seconds = time.perf_counter() - t0
    return sol


def _polarity(q) -> str:
    return str(q.transistor.polarity or "NPN").upper()


def pairable(qlines) -> tuple[list, list[str]]:
    """(the transistor lines a chain may use, the polarities tried): a chain's two transistors share a
    polarity (chain/polarity.py), so only lines of a polarity with two or more parts in stock."""
    count = Counter()
    for q in qlines:
        count[_polarity(q)] += int(q.qty)
    tried = [p for p in POLARITIES if count[p] >= 2]
    return [q for q in qlines if _polarity(q) in tried], tried


def _stocked(rstock, cstock, qlines, sol) -> bool:
    """False (with the reason, proven) when the drawer cannot hold any chain at all."""
    if not qlines:
        sol.why.append("no usable transistor line is in stock (a chain needs two NPN or two PNP transistors)")
    elif not pairable(qlines)[1]:
        # At most one part of each polarity: name each and what a second one would be.
        for q in qlines:
            pol = _polarity(q)
            sol.why.append(f"the drawer lacks a second {pol}: only one usable {pol} transistor is in stock "
                           f"({q.name}, line {q.line}); a chain needs two of one polarity")
            sol.hints.append({"position": "Q2", "buy": f"one more {q.name} (or any {pol} with an hFE range)",
                              "value": q.name, "effect": "a second transistor for the chain's second stage"})
    if len(rstock.qty) == 0:
        sol.why.append("no resistors are in stock")
    if len(cstock.qty) == 0:
        sol.why.append("no capacitors are in stock (a chain fits CIN, the interstage CIN_B and COUT_B)")
    if sol.why:
        sol.proven_none = True
        return False
    return True


def largest_network_ohms(rstock, depth: int) -> float:
    """Ω: the largest value any network of at most `depth` resistor parts from the stock makes
    (the largest parts in series; any parallel pair is smaller than its larger part)."""
    values = np.repeat(np.asarray(rstock.ohms, dtype=float), np.asarray(rstock.qty, dtype=np.int64))
    return float(np.sort(values)[::-1][:max(1, int(depth))].sum()) if len(values) else 0.0


def _ohms(x: float) -> str:
    """SI with a space and the unit, three significant digits (README: how figures are spelled)."""
    for scale, prefix in ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, "")):
        if abs(x) >= scale:
            return f"{x / scale:.3g} {prefix}Ω"
    return f"{x:.3g} Ω"


def _rin_reachable(rstock, spec, depth, sol) -> bool:
    """False (with the reason, proven) when the Rin floor is beyond every chain the stock can make.

    The chain's Rin is its first stage's: R1‖R2 in parallel with the base's own input resistance
    (positive and finite), so Rin < R1‖R2 ≤ M/2 with M the largest network the stock makes
    (R1‖R2 grows with both and is M/2 at R1 = R2 = M).  Both chain kinds' first stages are
    divider-biased (a common emitter or an emitter follower, R1 and R2 always fitted)."""
    top = largest_network_ohms(rstock, depth)
    floor = spec.rin_floor
    if top / 2 > floor:
        return True
    whose = "the default floor, 10 × the source" if spec.rin_floor_is_default else "--min-rin"
    sol.why.append(f"the chain's input resistance cannot reach {_ohms(floor)} ({whose}): it is below the "
                   f"first stage's bias divider R1‖R2, at most {_ohms(top / 2)} with the largest network "
                   f"of ≤ {depth} part(s) the drawer's resistors make ({_ohms(top)}); ask a lower "
                   f"--min-rin, or stock resistors above {_ohms(2 * floor)}")
    sol.proven_none = True
    return False


def _stop(cancel, end, sol) -> bool:
    if cancel is not None and cancel.is_set():
        sol.stopped_by = "cancelled"
        return True
    if time.perf_counter() >= end:
        sol.stopped_by = sol.stopped_by or "time limit"
        return True
    return False


def _run_stage(rstock, cstock, qlines, spec, depth, end, cancel, sol, patience=STAGE_PATIENCE_S):
    left = end - time.perf_counter() - STAGE_RESERVE_S
    if left <= 0.05:
        sol.stage_empty.append((spec, ["no time was left for this stage's search"]))
        return []
    sub = stage_search(rstock, cstock, qlines, spec, top=FIRSTS, depth=depth, cancel=cancel,
                       deadline=time.perf_counter() + left, patience=patience)
    sol.stage_searches += 1
    if not sub.designs:
        from optimizer.search.explain import reasons

        why = reasons(sub, spec)[:2]
        if sub.stopped_by:
            why = [f"its search stopped ({sub.stopped_by}) after {sub.near.screened:,} value tuples"] + why[1:]
        sol.stage_empty.append((spec, why))
    return [half_of(sub, choice, row, spec.topology) for choice, row, _ in sub.designs]


def _one_split(kind, spec, split, floor2, rstock, cstock, qlines, depth, end, cancel, sol, seen, progress,
               patience=STAGE_PATIENCE_S, end_now=None, accept=None):
    index, spec_a = first_plan(spec, kind, split, floor2)
    start = time.perf_counter()
    span = max(end - start, 0.0)
    first_span = max(FIRST_SHARE[kind] * span, min(0.5 * span, STAGE_RESERVE_S + STAGE_MIN_S))
    firsts = _run_stage(rstock, cstock, qlines, spec_a, depth, start + first_span, cancel, sol, patience)
    if progress:
        progress(0.3, f"{len(firsts)} design(s) of the {'first' if index == 0 else 'second'} stage")
    for j, h in enumerate(firsts):
        if _stop(cancel, end if end_now is None else min(end, end_now()), sol):
            return
        spec_b = second_plan(spec, kind, h, index, floor2)
        if spec_b is None:
            sol.failed["gain spread"] += 1
            continue
        leave = ("COUT",) if index == 0 else ("CIN",)
        r_left = less_stock(rstock, h.counter(leave_out=leave))
        c_left = less_stock(cstock, h.counter(leave_out=leave))
        pol = _polarity(h.q)
        q_left = [q for q in less_transistor(qlines, h.q.line) if _polarity(q) == pol]  # no mixed chains
        if not q_left:
            sol.why.append(f"the drawer lacks a second {pol}: the first stage takes the last one in stock")
            continue
        # Anytime: the most promising first design may take all that is left (its search stops once
        # its set settles, handing the rest on); once a chain is in hand, half of it, the next half of the rest, …
        left = start + span - (SECONDS if sol.found else 1) * CHECK_S - time.perf_counter()
        slice_end = time.perf_counter() + left * (0.5 if sol.found and j + 1 < len(firsts) else 1.0)
        if end_now is not None:  # with no chain in hand yet, one pair's check is all that must follow
            slice_end = min(slice_end, end_now() - (SECONDS if sol.found else 1) * CHECK_S)
        seconds = _run_stage(r_left, c_left, q_left, spec_b, depth, slice_end, cancel, sol, patience)
        for h2 in seconds[:SECONDS]:
            pair = (h, h2) if index == 0 else (h2, h)
            key = (tuple(sorted(pair[0].resistors.items())), tuple(sorted(pair[1].resistors.items())),
                   pair[0].q.line, pair[1].q.line)
            if key in seen:
                continue
            seen.add(key)
            cand = _join(kind, spec, pair[0], pair[1], index)
            cand.verdict = check_chain(cand.chain, spec, pair[0].q, pair[1].q, cand.ratings)
            sol.pairs += 1
            if cand.verdict.ok and accept is not None and not accept(cand):
                sol.failed["yield"] += 1
            elif cand.verdict.ok:
                sol.found.append(cand)
                if sol.first_design_s is None:
                    sol.first_design_s = time.perf_counter() - sol.started
            else:
                sol.failed.update(cand.verdict.failed)
        if progress:
            progress(0.3 + 0.6 * (j + 1) / len(firsts), f"{sol.pairs} chain(s) checked, {len(sol.found)} meet the spec")


def _shown(found, prefer, top):
    if not found:
        return []
    c = tradeoff.counts([x.part_count for x in found], [x.verdict.thd for x in found],
                        [x.verdict.robustness for x in found], [x.verdict.supply_a for x in found])
    front = tradeoff.nondominated(c)
    return [(found[int(front[i])], labels) for i, labels in tradeoff.shown(c[front], prefer, top)]


__all__ = ["search_chain", "ChainSolution", "Candidate", "corners"]
