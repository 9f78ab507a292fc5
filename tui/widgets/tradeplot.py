"""The trade at a glance: each design as its number on a grid of parts (across) against distortion or yield.

A pure function draws the grid as text (tested on its own); the widget redraws it when
the chosen design changes, marking that one.  Designs at the same spot share it ("2,3").
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from . import figures


@dataclass(frozen=True)
class Axis:
    key: str        # "thd" or "yield"
    title: str
    better: str     # which way is better, in words


THD_AXIS = Axis("thd", "THD at the swing", "lower is cleaner")
YIELD_AXIS = Axis("yield", "Yield", "higher is more robust")


def point_of(design: dict, axis: Axis) -> tuple[int | None, float | None]:
    """(physical parts, the axis figure as a fraction) of one design; None where it is missing."""
    parts = (design.get("score") or {}).get("parts")
    if axis.key == "thd":
        y = (design.get("score") or {}).get("thd", (design.get("predicted") or {}).get("thd"))
    else:
        y = design.get("yield")
    try:
        return (int(parts) if parts is not None else None), (float(y) if y is not None else None)
    except (TypeError, ValueError):
        return None, None


def choose_axis(designs: list[dict]) -> Axis:
    """THD when the designs carry it (the trade the solver makes), else the yield."""
    return THD_AXIS if any(point_of(d, THD_AXIS)[1] is not None for d in designs) else YIELD_AXIS


def draw(designs: list[dict], chosen: int, axis: Axis, rows: int = 7, spacing: int = 6) -> list[tuple[str, str]]:
    """The grid as (text, role) lines; role "chosen" marks where design #chosen (1-based) sits.

    Lines are plain text; the widget styles the chosen label.  Empty when no design has both figures.
    """
    points = {}
    for rank, d in enumerate(designs, 1):
        x, y = point_of(d, axis)
        if x is not None and y is not None and y == y:
            points[rank] = (x, y)
    if not points:
        return []
    xs = sorted({x for x, _ in points.values()})
    xlo, xhi = xs[0] - 1, xs[-1] + 1
    ys = [y for _, y in points.values()]
    ylo, yhi = (0.0, max(ys) * 1.15 or 0.01) if axis.key == "thd" else (max(0.0, min(ys) - 0.05), 1.0)
    if yhi <= ylo:
        yhi = ylo + 0.01
    label_w = 8
    width = (xhi - xlo) * spacing + 1
    grid = [[" "] * width for _ in range(rows)]
    cells: dict[tuple[int, int], list[int]] = {}
    for rank, (x, y) in points.items():
        row = round((yhi - y) / (yhi - ylo) * (rows - 1))
        cells.setdefault((max(0, min(rows - 1, row)), (x - xlo) * spacing), []).append(rank)
    chosen_at = None
    for (row, col), ranks in cells.items():
        text = ",".join(str(r) for r in sorted(ranks))
        start = max(0, min(width - len(text), col - len(text) // 2))
        for i, ch in enumerate(text):
            grid[row][start + i] = ch
        if chosen in ranks:
            chosen_at = (row, start, len(text))
    out: list[tuple[str, str]] = [(f"{axis.title} ({axis.better})", "title")]
    for r in range(rows):
        value = yhi - (yhi - ylo) * r / (rows - 1)
        value = 0.0 if abs(value) < 1e-12 else value
        tick = figures.percent(value, 1) if r in (0, rows - 1, (rows - 1) // 2) else ""
        line = f"{tick:>{label_w - 1}}│" + "".join(grid[r])
        role = "chosen" if chosen_at and chosen_at[0] == r else "plain"
        out.append((line, role if role == "plain" else f"chosen:{label_w + chosen_at[1]}:{chosen_at[2]}"))
    axis_line = [" "] * width
    labels = [" "] * (width + 4)
    for x in range(xlo, xhi + 1):
        col = (x - xlo) * spacing
        axis_line[col] = "┬" if x in xs else "─"
        for i, ch in enumerate(str(x)):
            if col + i < len(labels):
                labels[col + i] = ch
    for i in range(width):
        axis_line[i] = axis_line[i] if axis_line[i] != " " else "─"
    out.append((" " * (label_w - 1) + "└" + "".join(axis_line), "plain"))
    out.append((" " * label_w + "".join(labels).rstrip() + "   physical parts →", "plain"))
    return out


class TradePlot(Widget):
    """Parts against distortion (or yield) for every design; the chosen one stands out."""

    DEFAULT_CSS = """
    TradePlot {
        height: auto;
        width: auto;
        padding: 0 1;
    }
    """

    chosen: reactive[int] = reactive(1)

    def __init__(self, designs: list[dict], *, id: str | None = None) -> None:
        super().__init__(id=id)
        self.designs = designs
        self.axis = choose_axis(designs)

    def render(self) -> Text:
        lines = draw(self.designs, self.chosen, self.axis)
        if not lines:
            return Text("(the designs carry no figures to plot)")
        accent = self.app.current_theme.accent or ""
        out = Text()
        for i, (line, role) in enumerate(lines):
            if i:
                out.append("\n")
            if role == "title":
                out.append(line, style="bold")
            elif role.startswith("chosen:"):
                _, start, length = role.split(":")
                s, n = int(start), int(length)
                out.append(line[:s])
                out.append(line[s:s + n], style=f"bold reverse {accent}")
                out.append(line[s + n:])
            else:
                out.append(line)
        return out
