"""The plot axes (decades, round ticks, whole counts) and the trade grid, checked as text."""

from __future__ import annotations

import math
import re

import pytest
from textual_plotext.plot import Plot

from tui.widgets import chart
from tui.widgets.tradeplot import THD_AXIS, YIELD_AXIS, choose_axis, draw

from .trade_docs import old_doc, trade_doc


def test_log_axis_has_decades_only():
    ticks, labels = chart.decade_ticks(1.0, 1e6, "Hz")
    assert ticks == [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0]
    assert labels == ["1 Hz", "10 Hz", "100 Hz", "1 kHz", "10 kHz", "100 kHz", "1 MHz"]
    assert chart.decade_ticks(3.0, 500.0, "Hz")[1] == ["10 Hz", "100 Hz"]


@pytest.mark.parametrize(("lo", "hi"), [(-10.37, -9.61), (0.0, 21.3), (-43.2, 20.05), (0.991, 0.998)])
def test_linear_ticks_are_round(lo, hi):
    ticks = chart.linear_ticks(lo, hi, 5)
    assert 2 <= len(ticks) <= 6
    step = ticks[1] - ticks[0]
    mantissa = step / 10 ** math.floor(math.log10(step))
    assert min(abs(mantissa - m) for m in (1, 2, 5, 10)) < 1e-9  # a 1-2-5 step
    assert all(lo - 1e-12 <= t <= hi + 1e-12 for t in ticks)
    assert all(len(chart.tick_text(t)) <= 6 for t in ticks)  # no 31622.8-like labels


@pytest.mark.parametrize("highest", [1, 3, 7, 21, 38, 160])
def test_count_ticks_are_whole(highest):
    ticks = chart.count_ticks(highest)
    assert ticks[0] == 0 and ticks[-1] >= highest and all(isinstance(t, int) for t in ticks)
    assert len(ticks) <= 6


def test_response_plot_survives_redraws_at_any_size():
    # plotext's own log axis re-applied log10 on every redraw: 1 Hz → 0 → math domain error.
    plt = Plot()
    freqs = [10 ** (k / 10) for k in range(61)]  # 1 Hz … 1 MHz
    chart.draw_response(plt, freqs, [20 - 20 / (1 + f / 30) for f in freqs])
    for width, height in ((78, 14), (48, 14), (38, 10), (78, 14)):
        plt.plotsize(width, height)
        plt._set_size(width, height)
        assert "kHz" in plt.build() or width < 40


def test_histogram_counts_and_window():
    plt = Plot()
    chart.draw_histogram(plt, [-10.2, -10.0, -9.9, -10.1, -10.0], bins=4, window=(-10.5, -9.5))
    plt.plotsize(60, 12)
    plt._set_size(60, 12)
    text = re.sub(r"\x1b\[[0-9;]*m", "", plt.build())
    labels = [line.split("┤")[0].strip() for line in text.splitlines() if "┤" in line]
    assert labels and all(label.isdigit() for label in labels), labels  # whole counts on the count axis
    assert max(int(label) for label in labels) >= 2  # two samples share the bin at -10.0


def test_trade_grid_places_designs_by_parts_and_distortion():
    doc = trade_doc()
    lines = [text for text, _ in draw(doc["designs"], 1, THD_AXIS)]
    grid = lines[1:-2]
    row_of = {r: next(i for i, line in enumerate(grid) if str(r) in line.split("│", 1)[1]) for r in (1, 2, 3)}
    col_of = {r: grid[row_of[r]].split("│", 1)[1].index(str(r)) for r in (1, 2, 3)}
    # Design 2 has the fewest parts (left), design 3 the most (right); 3 is cleanest (lowest), 2 dirtiest (top).
    assert col_of[2] < col_of[1] < col_of[3]
    assert row_of[2] < row_of[1] < row_of[3]
    assert "physical parts" in lines[-1]


def test_trade_grid_marks_the_chosen_design():
    doc = trade_doc()
    for chosen in (1, 2, 3):
        marked = [(text, role) for text, role in draw(doc["designs"], chosen, THD_AXIS) if role.startswith("chosen")]
        assert len(marked) == 1
        text, role = marked[0]
        _, start, length = role.split(":")
        assert text[int(start):int(start) + int(length)] == str(chosen)


def test_older_documents_plot_the_yield_or_nothing():
    doc = old_doc()
    assert choose_axis(doc["designs"]) in (THD_AXIS, YIELD_AXIS)  # predicted THD where the file has it
    for d in doc["designs"]:
        d["predicted"].pop("thd", None)
    assert choose_axis(doc["designs"]) is YIELD_AXIS
    assert draw([{"score": {}}], 1, THD_AXIS) == []
