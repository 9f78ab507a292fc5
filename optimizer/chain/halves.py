"""One stage of a chain as the single-stage search found it, and the stock a chain takes.

A `Half` holds a stage design of select.search (values, networks, capacitors, transistor line,
the drawer lines it uses) so two of them can be joined into a chain and their stock counted together.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field, fields, replace

import numpy as np

from optimizer.parts import network_tree
from optimizer.physics.stage import Stage
from optimizer.search.result import capacitors_of, networks_of


@dataclass
class Half:
    topology: str
    resistors: dict  # position → Ω
    capacitors: dict  # position → F
    parts: dict  # position → design-JSON part ({"ohms"|"farads", "network", …})
    q: object  # candidates.QLine
    uses: dict  # position → Counter(line → qty); "Q1" for the transistor
    row: dict = field(default_factory=dict)  # the single-stage search's row (corner figures)

    def stage(self, spec, *, source_ohms=None, load_ohms=None, bf=None, temp_c=27.0) -> Stage:
        t = self.q.transistor if bf is None else self.q.transistor.with_beta(bf)
        return Stage(self.topology, dict(self.resistors), dict(self.capacitors), spec.supply_v,
                     spec.source_ohms if source_ohms is None else source_ohms,
                     spec.load_ohms if load_ohms is None else load_ohms, t, temp_c)

    def counter(self, leave_out=()) -> Counter:
        total = Counter()
        for p, c in self.uses.items():
            if p not in leave_out:
                total.update(c)
        return total


def half_of(sol, choice, row, topology) -> Half:
    """A Half from one of select.search's designs (its Choice and row)."""
    resistors, capacitors, parts, uses = {}, {}, {}, {}
    for p, node in networks_of(sol, choice).items():
        resistors[p] = float(network_tree.evaluate(node))
        parts[p] = {"ohms": resistors[p], "network": network_tree.to_json(node, "ohms")}
        uses[p] = Counter(leaf.line for leaf in network_tree.leaves(node))
    for p, (i, node) in capacitors_of(sol, row).items():
        capacitors[p] = float(sol.options.value[i])
        parts[p] = {"farads": capacitors[p], "network": network_tree.to_json(node, "farads"),
                    "polarised": bool(sol.options.polarised[i]), "voltage_v": float(sol.options.voltage_v[i])}
        uses[p] = Counter(leaf.line for leaf in network_tree.leaves(node))
    q = sol.qlines[choice.q]
    parts["Q1"] = {"line": int(q.line), "part": q.name}
    uses["Q1"] = Counter({int(q.line): 1})
    return Half(topology, resistors, capacitors, parts, q, uses, dict(row))


def less_stock(stock, used: Counter):
    """The stock with `used` (line → qty) taken off; lines left empty are dropped."""
    qty = np.asarray(stock.qty, dtype=np.int64).copy()
    lines = np.asarray(stock.line)
    for line, n in used.items():
        qty[lines == line] -= n
    keep = qty > 0
    cols = {f.name: np.asarray(getattr(stock, f.name))[keep] for f in fields(stock)}
    cols["qty"] = qty[keep]
    return replace(stock, **cols)


def less_transistor(qlines, line: int):
    """The transistor lines with one part of `line` taken."""
    out = []
    for q in qlines:
        if q.line == line:
            if q.qty > 1:
                out.append(replace(q, qty=q.qty - 1))
        else:
            out.append(q)
    return out
