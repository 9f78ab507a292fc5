"""Capacitor options from the drawer: a single part or two in parallel.

Capacitors in parallel add (C = C1 + C2); the pair's voltage rating is the
lower of the two, and a pair with one polarised member must be fitted as a
polarised part.  Coupling and bypass positions need *at least* a value, so
`at_least` orders the adequate options fewest parts first, then smallest.
"""

from __future__ import annotations

import numpy as np

from optimizer.parts.network_table import COUNT, FRACTION, PARALLEL2, POSITIVE, RATING, SINGLE, PartsTable, check_stock, stock_columns


class CapacitorOptions(PartsTable):
    """Capacitor options sorted by capacitance (F); see `PartsTable` for the shared columns.

    members [n, 2] stock rows (−1 padding); voltage_v [n] rating (V, lower member's);
    polarised [n] bool (any member polarised).  stock_voltage_v, stock_polarised per stock row.
    """

    kind = "capacitor"
    _tie_break = ("voltage_v",)

    def __init__(self, *, voltage_v, polarised, stock_voltage_v, stock_polarised, **columns):
        super().__init__(**columns)
        self.voltage_v = voltage_v
        self.polarised = polarised
        self.stock_voltage_v = stock_voltage_v
        self.stock_polarised = stock_polarised

    def at_least(self, c_farads: float, *, worst_case: bool = False, polarised_ok: bool = True) -> np.ndarray:
        """Indices of options with capacitance ≥ c_farads, fewest parts first, then smallest.

        worst_case: compare the low tolerance limit C·(1 − tol) instead of the nominal value.
        polarised_ok: False leaves out options with a polarised member.
        """
        low = self.value * (1.0 - self.tolerance) if worst_case else self.value
        ok = low >= c_farads
        if not polarised_ok:
            ok &= ~self.polarised
        idx = np.flatnonzero(ok)
        return idx[np.lexsort((self.tolerance[idx], self.value[idx], self.parts[idx]))]


def capacitor_options(stock, min_voltage_v: float = 0.0, depth: int = 2, *,
                      voltage_margin: float = 0.0) -> CapacitorOptions:
    """Single parts and (depth 2) parallel pairs realisable from `stock`, sorted by capacitance.

    stock: any object (or mapping) with equal-length arrays `line, farads` (F), `tolerance` (fraction),
    `voltage_v` (V, NaN if unknown; a pair with an unknown member has an unknown rating), `polarised` (bool), `qty`; rows with qty 0 are skipped.
    Only parts rated ≥ min_voltage_v·(1 + voltage_margin) are used (a part of unknown rating is
    used only when min_voltage_v is 0).  Derating, e.g. voltage_margin=0.5 for a rating 1.5× the
    working voltage, is common practice, no source.
    """
    if depth not in (1, 2):
        raise ValueError(f"capacitor depth must be 1 or 2 (got {depth!r})")
    if not (min_voltage_v >= 0 and voltage_margin >= 0):
        raise ValueError(f"min_voltage_v and voltage_margin must be ≥ 0 (got {min_voltage_v!r}, {voltage_margin!r})")
    cols = stock_columns(stock, ("line", "farads", "tolerance", "voltage_v", "polarised", "qty"), "capacitor")
    check_stock(cols, {"farads": POSITIVE, "tolerance": FRACTION, "voltage_v": RATING, "qty": COUNT}, "capacitor")
    farads, tol = cols["farads"].astype(float), cols["tolerance"].astype(float)
    volts, pol, qty = cols["voltage_v"].astype(float), cols["polarised"].astype(bool), cols["qty"].astype(np.int64)
    need = min_voltage_v * (1.0 + voltage_margin)
    usable = (qty > 0) & ((volts >= need) | (np.isnan(volts) & (need == 0)))
    rows = np.flatnonzero(usable)

    a, b = [rows], [np.full(len(rows), -1)]
    if depth == 2:
        i, j = np.triu_indices(len(rows))  # i ≤ j: each unordered pair once
        same_ok = (i != j) | (qty[rows[i]] >= 2)
        a.append(rows[i[same_ok]])
        b.append(rows[j[same_ok]])
    a, b = np.concatenate(a), np.concatenate(b)
    pair = b >= 0
    bb = np.where(pair, b, a)  # stand-in row for singles, masked out below
    cb = np.where(pair, farads[bb], 0.0)
    value = farads[a] + cb
    tolerance = (farads[a] * tol[a] + cb * tol[bb]) / value  # worst case: both at the same limit
    voltage = np.where(pair, np.minimum(volts[a], volts[bb]), volts[a])
    polarised = pol[a] | (pair & pol[bb])
    sort = np.argsort(value, kind="stable")
    return CapacitorOptions(
        value=value[sort], tolerance=tolerance[sort], parts=np.where(pair, 2, 1).astype(np.int8)[sort],
        shape=np.where(pair, PARALLEL2, SINGLE).astype(np.int8)[sort],
        members=np.column_stack((a, b)).astype(np.int32)[sort],
        voltage_v=voltage[sort], polarised=polarised[sort], stock_voltage_v=volts, stock_polarised=pol,
        stock_line=cols["line"].astype(np.int64), stock_value=farads, stock_tolerance=tol,
    )
