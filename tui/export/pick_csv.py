"""The pick list as CSV: one row per drawer line taken (header: location, line, part, value, qty, positions)."""

from __future__ import annotations

import csv
import io

from .content import Sheet

COLUMNS = ("location", "line", "part", "value", "qty", "positions")


def render(sheet: Sheet) -> str:
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=COLUMNS, extrasaction="ignore", lineterminator="\n")
    w.writeheader()
    for row in sheet.picks:
        w.writerow(row)
    return buf.getvalue()
