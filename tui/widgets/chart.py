"""Plots for the build sheet: a response curve on a decade axis and a histogram with whole counts.

Drawn with textual-plotext, with two precautions learned the hard way:
- plotext's own log axis re-applies log10 to its stored data on every redraw (a resize
  or a panel opening redraws), so 1 Hz becomes 0 and the next redraw fails with a math
  domain error.  We plot log10(f) on a plain axis and label the decades ourselves.
- Below a few cells plotext cannot lay out its axes; a `Chart` that small says so.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from rich.text import Text
from textual.color import Color
from textual_plotext import PlotextPlot

from . import figures

MIN_WIDTH, MIN_HEIGHT = 30, 8
TOO_SMALL = "(widen the window to see this plot)"


def decade_ticks(lo: float, hi: float, unit: str) -> tuple[list[float], list[str]]:
    """Positions (log10) and labels of the whole decades from lo to hi, e.g. 10 Hz, 100 Hz, 1 kHz."""
    if not (lo > 0 and hi > 0):
        return [], []
    first, last = math.ceil(math.log10(min(lo, hi)) - 1e-9), math.floor(math.log10(max(lo, hi)) + 1e-9)
    ks = list(range(first, last + 1))
    return [float(k) for k in ks], [figures.si(10.0**k, unit) for k in ks]


def nice_step(span: float, most: int) -> float:
    """The 1-2-5 × 10^k step giving at most `most` intervals over `span` (span > 0)."""
    raw = span / max(most, 1)
    base = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * base >= raw - 1e-12 * base:
            return m * base
    return 10.0 * base


def linear_ticks(lo: float, hi: float, most: int = 5) -> list[float]:
    """Round ticks (multiples of a 1-2-5 step) inside [lo, hi]."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo] if math.isfinite(lo) else []
    step = nice_step(hi - lo, most)
    start = math.ceil(lo / step - 1e-9)
    out = []
    k = start
    while k * step <= hi + 1e-9 * step:
        out.append(round(k * step, 12))
        k += 1
    return out


def count_ticks(highest: int, most: int = 4) -> list[int]:
    """Whole-number ticks from 0 to at least `highest` (a histogram's count axis)."""
    highest = max(int(highest), 1)
    step = max(1, int(nice_step(highest, most)))
    top = -(-highest // step) * step
    return list(range(0, top + 1, step))


def tick_text(value: float) -> str:
    """A tick label without float noise: 0.5, 10, -12."""
    return f"{value:g}"


class Chart(PlotextPlot):
    """A plotext plot in the theme's colours that says so instead of drawing when too small to draw.

    `painter(plt, rgb)` draws the figure; it runs again when the theme changes, with the
    theme's primary colour.
    """

    DEFAULT_CSS = """
    Chart {
        height: 14;
        width: 1fr;
    }
    """

    def __init__(self, painter: Callable[[object, tuple[int, int, int]], None], *, id: str | None = None,
                 classes: str | None = None) -> None:
        super().__init__(id=id, classes=classes)
        self.painter = painter

    def on_mount(self) -> None:
        super().on_mount()
        self.app.theme_changed_signal.subscribe(self, lambda _theme: self.paint())
        self.paint()

    def paint(self) -> None:
        self.plt.clear_figure()
        self.painter(self.plt, Color.parse(self.app.current_theme.primary).rgb)
        self.refresh()

    def render(self):
        if self.size.width < MIN_WIDTH or self.size.height < MIN_HEIGHT:
            return Text(TOO_SMALL)
        return super().render()


def draw_response(plt, freq_hz: list[float], gain_db: list[float], colour=None) -> None:
    """Gain (dB) against frequency on a decade axis."""
    pairs = [(f, g) for f, g in zip(freq_hz, gain_db, strict=False) if f > 0 and math.isfinite(g)]
    if not pairs:
        return
    x = [math.log10(f) for f, _ in pairs]
    y = [g for _, g in pairs]
    plt.plot(x, y, marker="braille", color=colour)
    ticks, labels = decade_ticks(pairs[0][0], pairs[-1][0], "Hz")
    plt.xticks(ticks, labels)
    yt = linear_ticks(min(y), max(y), 4)
    plt.yticks(yt, [tick_text(v) for v in yt])
    plt.title("Gain (dB) against frequency")


def draw_histogram(plt, samples: list[float], bins: int = 24, window: tuple[float, float] | None = None,
                   colour=None) -> None:
    """How many simulated builds fall at each gain; `window` (low, high) marks the gain asked for."""
    data = [s for s in samples if math.isfinite(s)]
    if not data:
        return
    lo, hi = min(data), max(data)
    width = (hi - lo) / bins or 1.0
    counts = [0] * bins
    for s in data:
        counts[min(int((s - lo) / width), bins - 1)] += 1
    centres = [lo + (i + 0.5) * width for i in range(bins)]
    plt.bar(centres, counts, width=0.8, marker="sd", color=colour)
    plt.ylim(0, None)
    if window is not None:
        for edge in window:
            if lo - width <= edge <= hi + width:
                plt.vline(edge)
    xt = linear_ticks(lo, hi, 5)
    plt.xticks(xt, [tick_text(v) for v in xt])
    yt = count_ticks(max(counts))
    plt.yticks(yt, [str(v) for v in yt])
