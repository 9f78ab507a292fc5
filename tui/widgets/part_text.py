"""How a drawer line is spelled on screen: RKM values, percent, ratings.  Spelling only."""

from __future__ import annotations

from dataclasses import dataclass

from inventory.drawer import Drawer
from inventory.parts import Part
from inventory.problems import printable
from inventory.store import describe as store_describe
from inventory.values import format_capacitance, format_resistance

COLUMNS = ("Line", "Kind", "Value", "Tol", "Rating", "Type", "Qty", "Location")
BROKEN_MARK = "✗"  # beside the line number of a line with errors
CELL_WIDTH = 24     # a broken line's cell is shown cut to this many characters


def number(value: float) -> str:
    """A plain figure without trailing zeros: 0.25, 50, 6.3."""
    return f"{value:.4g}"


def value_text(part: Part) -> str:
    if part.kind == "resistor" and part.value is not None:
        return format_resistance(part.value)
    if part.kind == "capacitor" and part.value:
        return format_capacitance(part.value)
    return part.polarity or ""


def tolerance_text(part: Part) -> str:
    return f"{number(part.tolerance * 100)}%" if part.tolerance is not None else ""


def rating_text(part: Part) -> str:
    if part.kind == "resistor":
        return f"{number(part.power_w)} W" if part.power_w else ""
    if part.kind == "capacitor":
        return f"{number(part.voltage_v)} V" if part.voltage_v else "? V"
    bits = []
    if part.hfe_min or part.hfe_max:
        lo = number(part.hfe_min) if part.hfe_min else "?"
        hi = number(part.hfe_max) if part.hfe_max else "?"
        bits.append(f"hFE {lo}-{hi}")
    if part.vceo_v:
        bits.append(f"{number(part.vceo_v)} V")
    return " ".join(bits)


def type_text(part: Part) -> str:
    if part.kind == "capacitor":
        return part.dielectric or part.part or ""
    return part.part or ""


def row_cells(part: Part) -> tuple[str, ...]:
    """The cells of one row, in `COLUMNS` order."""
    return (str(part.line), part.kind, value_text(part), tolerance_text(part), rating_text(part),
            type_text(part), str(part.qty), part.location)


def describe(part: Part) -> str:
    """One phrase for messages and journal reasons: "resistor 4k7 5% in A3 (line 5)"."""
    return f"{store_describe(part)} (line {part.line})"


def sort_key(column: int):
    """Key function over parts for sorting by column `column` of `COLUMNS`."""
    def kind_value(p: Part):
        return (p.kind, p.value or 0.0, p.part or "")

    keys = {
        0: lambda p: p.line,
        1: kind_value,
        2: kind_value,
        3: lambda p: (p.tolerance is None, p.tolerance or 0.0),
        4: lambda p: (p.kind, p.power_w or p.voltage_v or p.hfe_min or 0.0),
        5: lambda p: (type_text(p), p.value or 0.0),
        6: lambda p: p.qty,
        7: lambda p: (p.location, p.line),
    }
    return keys[column]


@dataclass(frozen=True)
class BrokenLine:
    """A data line the drawer left out of its parts because it has errors."""

    line: int
    cells: dict[str, str]   # column name -> cell text as typed (stripped)
    problems: tuple[str, ...]

    def row_cells(self) -> tuple[str, ...]:
        """The cells as typed, in `COLUMNS` order, escaped and cut to fit a table cell."""
        c = self.cells
        raw = (c.get("kind", ""), c.get("value", ""), c.get("tolerance", ""),
               c.get("power") or c.get("voltage", ""), c.get("part") or c.get("dielectric", ""),
               c.get("qty", ""), c.get("location", ""))
        return (f"{self.line} {BROKEN_MARK}", *(cut(printable(t)) for t in raw))

    def describe(self) -> str:
        """"line 12 (resistor,4k7k,3,…): value "4k7k" is not a resistance …" for dialogs."""
        return f"line {self.line}: " + "; ".join(self.problems or ("has errors",))


def cut(text: str, width: int = CELL_WIDTH) -> str:
    return text if len(text) <= width else text[:width - 1] + "…"


def record_cells(drawer: Drawer, line: int) -> dict[str, str]:
    """The cells of the data line on `line` as typed in the file, by column name ({} if none)."""
    idx = drawer.record_index(line)
    return cells_by_column(drawer, drawer.records[idx].cells) if idx is not None else {}


def cells_by_column(drawer: Drawer, cells: list[str]) -> dict[str, str]:
    return {name: cells[i].strip() for name, i in drawer.columns.items() if i < len(cells)}


def broken_lines(drawer: Drawer) -> list[BrokenLine]:
    """Every non-blank data line without a part, with its error messages, in file order."""
    if drawer.header is None:
        return []
    errors: dict[int, list[str]] = {}
    for p in drawer.problems:
        if p.is_error:
            errors.setdefault(p.line, []).append(printable(p.message))
    return [BrokenLine(rec.line, cells_by_column(drawer, rec.cells), tuple(errors.get(rec.line, ())))
            for rec in drawer.records[drawer.header + 1:]
            if not rec.blank and drawer.part_at(rec.line) is None]
