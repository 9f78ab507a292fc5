"""Stock summaries of a drawer: lines and pieces per location and kind (pandas group-bys)."""

from __future__ import annotations

from dataclasses import asdict, fields

import pandas as pd

from .parts import KINDS, Part


def parts_frame(parts: list[Part]) -> pd.DataFrame:
    """One row per drawer line, one column per Part field (SI values)."""
    return pd.DataFrame([asdict(p) for p in parts], columns=[f.name for f in fields(Part)])


def per_location(parts: list[Part]) -> list[tuple[str, int, int, str]]:
    """(location, lines, pieces, "N resistors, M capacitors…") sorted by location; "" becomes "(none)".

    A kind is named for a location when it has a line there, even one with no pieces left.
    """
    frame = parts_frame(parts)
    if frame.empty:
        return []
    by_kind = frame.groupby(["location", "kind"])["qty"].agg(["size", "sum"])
    out = []
    for loc, group in by_kind.groupby(level="location", sort=True):
        pieces = group["sum"].droplevel("location")
        kinds = ", ".join(f"{int(pieces[k])} {k}s" for k in KINDS if k in pieces.index)
        out.append((loc or "(none)", int(group["size"].sum()), int(pieces.sum()), kinds))
    return out
