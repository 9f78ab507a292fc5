"""The printed build sheet (CLI): each part once, ranges low to high, each safety line once, one spelling rule."""

from __future__ import annotations

import re

from inventory.values import format_resistance, parse_resistance
from tui import sheet_text
from tui.widgets import figures

from .trade_docs import solved_doc, trade_doc


def section(text: str, title: str) -> list[str]:
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith(title))
    out = []
    for line in lines[start + 1:]:
        if not line.strip():
            break
        out.append(line)
    return out


def test_each_part_is_listed_once_with_its_place():
    doc = solved_doc()
    design = doc["designs"][0]
    text = sheet_text.sheet(design, doc["spec"])
    parts = section(text, "Parts")
    assert len(parts) == len(design["parts"])  # one line per position, no "from line" follow-up
    assert not any("from line" in p for p in parts)
    for use in design["uses"]:
        hits = [p for p in parts if re.search(rf"\bline {use['line']}\b", p)]
        # a line serving two positions (e.g. CIN and COUT from one drawer line) appears once per position
        assert 1 <= len(hits) <= int(use["qty"]), (use, parts)
    for p in parts:
        assert len(re.findall(r"\[line \d+\]", p)) == 0


def test_meter_range_is_low_then_high():
    design = {"predicted": {"vb": 1.0, "ve": 0.35, "vc": 5.97, "ic": 5e-4},
              "at_hfe": {"min": {"vb": 0.98, "ve": 0.33, "vc": 6.18}, "max": {"vb": 0.99, "ve": 0.34, "vc": 5.81}}}
    lines = sheet_text.meter_lines(design)
    vc = next(line for line in lines if "VC" in line)
    assert "5.81 V … 6.18 V" in vc  # the collector sits lower at hFE max: the range still reads low … high
    assert figures.span(6.18, 5.81, figures.volts) == "5.81 V … 6.18 V"
    from tui.screens.sheet import meter_text  # the app's sheet says it the same way

    assert "5.81 V … 6.18 V" in meter_text(design)


def test_safety_lines_are_not_repeated():
    doc = solved_doc()
    text = sheet_text.sheet(doc["designs"][0], doc["spec"])
    safety = section(text, "Safety")
    assert len(safety) == len(set(safety)) >= 2
    codes = [s for s in safety if "licensed practice" in s.lower() or "local codes" in s.lower()]
    assert len(codes) == 1, safety
    # A design without cautions of its own still gets the local-codes line, once.
    bare = sheet_text.cautions({"cautions": []})
    assert sum("local codes" in c for c in bare) == 1


def test_one_spelling_rule():
    doc = solved_doc()
    design = doc["designs"][0]
    text = sheet_text.sheet(design, doc["spec"])
    # Part values in RKM (IEC 60062): the resistor positions read like "4k7", never "4.7 kΩ".
    parts = section(text, "Parts")
    for pos, entry in design["parts"].items():
        if "ohms" in entry and "network" in entry and "line" in entry["network"]:
            row = next(p for p in parts if p.split()[0] == pos)
            assert format_resistance(entry["ohms"]) == row.split()[1]
            assert parse_resistance(row.split()[1]) == entry["ohms"]
    # Everything else in SI with a space and a unit.
    assert "load 22 kΩ" in text and "source 1 kΩ" in text and "Rin ≥ 8 kΩ" in text
    assert re.search(r"Rin \d+(\.\d+)? kΩ", text)
    assert re.search(r"f_low \d+(\.\d+)? Hz", text)


def test_table_names_the_trade():
    text = sheet_text.table(trade_doc())
    assert "fewest parts, least current" in text and "cleanest, most robust" in text


def test_the_printed_sheet_and_the_request_list_never_load_textual():
    import subprocess
    import sys

    code = ("import sys, tui.sheet_text, tui.request_fields, tui.saved, tui.widgets.figures; "
            "print('textual' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, timeout=60)
    assert out.stdout.strip() == "False"
