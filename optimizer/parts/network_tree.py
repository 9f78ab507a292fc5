"""Series/parallel networks of physical parts, as a small tree.

A leaf is one physical part from one drawer line.  The tree is what the build
sheet draws, what the JSON prints and what the Monte Carlo samples part by part.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Leaf:
    """One part: nominal value (Ω or F), tolerance (fraction), drawer line, power rating (W) if a resistor."""

    value: float
    tolerance: float
    line: int
    power_w: float | None = None


@dataclass(frozen=True)
class Series:
    parts: tuple  # of nodes


@dataclass(frozen=True)
class Parallel:
    parts: tuple  # of nodes


def _combine(node, kind: str, values):
    # Series resistors and parallel capacitors add; the other pairings add reciprocals.
    adds = isinstance(node, Series) == (kind == "resistor")
    if adds:
        return sum(values)
    return 1.0 / sum(1.0 / v for v in values)


def evaluate(node, kind: str = "resistor", leaf_value=None):
    """Value of the network (Ω or F); `leaf_value(leaf)` may substitute sampled arrays."""
    if isinstance(node, Leaf):
        return node.value if leaf_value is None else leaf_value(node)
    return _combine(node, kind, [evaluate(p, kind, leaf_value) for p in node.parts])


def leaves(node) -> list[Leaf]:
    if isinstance(node, Leaf):
        return [node]
    return [leaf for p in node.parts for leaf in leaves(p)]


def part_count(node) -> int:
    return len(leaves(node))


def sample(node, kind: str, rng: np.random.Generator, n: int):
    """n Monte Carlo values of the network, each part drawn independently.

    Each part is uniform within ±tolerance (common practice, no source: a
    uniform spread is a pessimistic stand-in for the unknown distribution of a
    sorted batch).
    """
    return evaluate(node, kind, lambda leaf: leaf.value * (1.0 + rng.uniform(-leaf.tolerance, leaf.tolerance, n)))


def bounds(node, kind: str = "resistor") -> tuple[float, float]:
    """Worst-case (low, high) network value with every part at its tolerance limit.

    Both pairings are monotonic increasing in every part, so the extremes are all-low and all-high.
    """
    lo = evaluate(node, kind, lambda leaf: leaf.value * (1.0 - leaf.tolerance))
    hi = evaluate(node, kind, lambda leaf: leaf.value * (1.0 + leaf.tolerance))
    return float(lo), float(hi)


def to_json(node, unit_key: str = "ohms") -> dict:
    """The JSON node: a leaf `{"line": N, "ohms": x}` or `{"series"|"parallel": [nodes]}`."""
    if isinstance(node, Leaf):
        return {"line": node.line, unit_key: float(node.value)}
    key = "series" if isinstance(node, Series) else "parallel"
    return {key: [to_json(p, unit_key) for p in node.parts]}


def from_json(data: dict, tolerance_of=None, unit_key: str = "ohms"):
    """Inverse of `to_json`; `tolerance_of(line)` supplies each leaf's tolerance (default 0)."""
    if "series" in data or "parallel" in data:
        cls = Series if "series" in data else Parallel
        return cls(tuple(from_json(d, tolerance_of, unit_key) for d in data.get("series", data.get("parallel"))))
    line = int(data["line"])
    tol = tolerance_of(line) if tolerance_of else 0.0
    return Leaf(float(data[unit_key]), tol, line)
