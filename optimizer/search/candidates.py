"""The candidate space: which networks, capacitors and transistors a design may use, and the value tuples.

Candidate space (the README quotes this):
  * each resistor position takes one network of 1 … depth parts from the stock
    (`networks.resistor_networks`: single parts, series, parallel and the mixed
    3-part shapes), valued WINDOW_OHMS[0] … WINDOW_OHMS[1]; RE1 and RE2 may be
    absent; RE2 is the part bypassed by CE, so CE is fitted exactly when RE2 is;
  * each capacitor position takes one option of `capacitors.capacitor_options`
    (a single part or a parallel pair);
  * Q1 is one in-stock NPN or PNP line with both hFE min and hFE max given (a PNP stage is the
    mirror of the NPN one, polarity.py);
  * counts are shared across all positions.

Value tuples are screened by distinct value (many networks share a value).  They
are enumerated by "resistor part budget" B = Σ over positions of the fewest parts
that realise each value, B ascending (select.py stops when no larger B can win).
Within a budget the product is pruned only by conditions every design meeting the
spec must satisfy (a branch and bound per topology, see `tuples`).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field

import numpy as np

from optimizer import kinds
from optimizer.parts.networks import NetworkTable, resistor_networks
from optimizer.physics.transistor import Transistor

WINDOW_OHMS = (1.0, 10e6)
POSITIONS = kinds.ByKind("resistors")
OPTIONAL = kinds.ByKind("optional")  # includes optional capacitors, which resistor profiles never name
CAP_POSITIONS = ("CIN", "COUT", "CE")
CHUNK = 32_768


@dataclass(frozen=True)
class QLine:
    """One transistor drawer line as the solver sees it."""

    line: int
    qty: int
    transistor: Transistor
    name: str


def transistor_of(part) -> Transistor:
    """The model of a drawer transistor line: BF = √(hFE min · hFE max), the typical hFE (geometric mean)."""
    return Transistor(
        name=part.part or f"line {part.line}", polarity=(part.polarity or "NPN").upper(),
        bf=math.sqrt(part.hfe_min * part.hfe_max), hfe_min=part.hfe_min, hfe_max=part.hfe_max,
        vceo_v=part.vceo_v, ic_max_a=part.ic_max_a, pd_max_w=part.pd_max_w,
    )


def usable_transistors(parts) -> tuple[list[QLine], list[str]]:
    """In-stock NPN and PNP lines with an hFE range, and notes on the lines left out."""
    out, notes = [], []
    for p in parts:
        if p.qty <= 0:
            continue
        if not (p.hfe_min and p.hfe_max and 0 < p.hfe_min <= p.hfe_max):
            notes.append(f"transistor on line {p.line} ({p.part or '?'}) has no hFE range; left out")
            continue
        out.append(QLine(p.line, int(p.qty), transistor_of(p), p.part or f"line {p.line}"))
    return out, notes


@dataclass
class Pool:
    """Distinct resistor values realisable with up to `depth` parts, and their networks."""

    stock: object
    depth: int
    table: NetworkTable = field(init=False)

    def __post_init__(self):
        self.table = resistor_networks(self.stock, self.depth, *WINDOW_OHMS)
        self.distinct = self.table.distinct()
        self.groups = {k: self.distinct.value[self.distinct.min_parts == k] for k in range(1, self.depth + 1)}

    def group(self, k: int) -> np.ndarray:
        """Values (ohms) whose fewest realising parts is exactly k (k = 0: the absent position)."""
        return np.zeros(1) if k == 0 else self.groups.get(k, np.zeros(0))

    def networks_of(self, ohms: float) -> np.ndarray:
        """Table indices of every network realising `ohms`."""
        g = int(np.searchsorted(self.distinct.value, ohms * (1 - 1e-10)))
        if g >= len(self.distinct) or not abs(self.distinct.value[g] - ohms) <= 1e-9 * ohms:
            return np.zeros(0, dtype=np.int64)
        return np.arange(self.distinct.start[g], self.distinct.stop[g])


def min_positions(topology: str) -> int:
    return len(POSITIONS[topology]) - len(OPTIONAL[topology])


def profiles(topology: str, budget: int, depth: int):
    """Part-count profiles (k per position) with Σ k = budget; optional positions may take 0."""
    ranges = [range(0 if p in OPTIONAL[topology] else 1, depth + 1) for p in POSITIONS[topology]]
    for ks in itertools.product(*ranges):
        if sum(ks) == budget:
            yield dict(zip(POSITIONS[topology], ks, strict=True))


def tuples(topology: str, profile: dict, pool: Pool, spec, q: QLine):
    """Chunks (dict position → ohms array) of the value tuples of one profile that survive the bounds.

    Each kind has its branch and bound over boxes of sorted values (`Kind.boxes`), pruning only
    by conditions every design meeting the spec satisfies at hFE min and max.
    """
    g = {p: pool.group(k) for p, k in profile.items()}
    if any(len(v) == 0 for v in g.values()):
        return
    betas = (q.transistor.hfe_min, q.transistor.hfe_max)
    # Generators, most of them: the surviving tuples stream through, never all in memory at once.
    for chunk in kinds.get(topology).boxes(g, spec, q.transistor, betas):
        yield from _split(chunk)


def _split(chunk: dict):
    n = len(next(iter(chunk.values())))
    for s in range(0, n, CHUNK):
        yield {k: v[s:s + CHUNK] for k, v in chunk.items()}
