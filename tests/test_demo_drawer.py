"""The bundled demo drawer: every cell parses, counts are sane, and it can build the tutorial stage."""

from __future__ import annotations

import csv
import io
import re
from importlib.resources import files

import pytest

from inventory.eseries import nearest, series_values
from inventory.parts import DIELECTRICS, KINDS
from inventory.values import (
    format_capacitance,
    format_resistance,
    parse_capacitance,
    parse_current,
    parse_number,
    parse_power,
    parse_resistance,
    parse_tolerance,
    parse_voltage,
)

COLUMNS = ("kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,"
           "ic_max,pd_max,location,notes").split(",")


def _text() -> str:
    return (files("inventory") / "demo" / "drawer.csv").read_text(encoding="utf-8")


def _rows() -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(_text())))


ROWS = _rows()


def _of(kind):
    return [r for r in ROWS if r["kind"] == kind]


def test_shape():
    lines = _text().splitlines()
    assert lines[0].split(",") == COLUMNS
    assert 80 <= len(ROWS) <= 150 and 90 <= len(lines) <= 140
    for row in ROWS:
        assert None not in row and None not in row.values(), row   # exactly 16 fields per line
        assert row["kind"] in KINDS
        assert re.fullmatch(r"[0-9]+", row["qty"]), row            # whole counts, >= 0
        assert re.fullmatch(r"[A-D][1-6]", row["location"]), row   # cabinet A-D, bins 1-6


def test_every_cell_parses():
    for row in ROWS:
        if row["kind"] == "resistor":
            assert parse_resistance(row["value"]) > 0
            assert parse_power(row["power"]) > 0
        elif row["kind"] == "capacitor":
            assert parse_capacitance(row["value"]) > 0
            assert parse_voltage(row["voltage"]) > 0
            assert row["dielectric"] in DIELECTRICS
        else:
            assert row["value"] == ""
            assert parse_voltage(row["vceo"]) > 0 and parse_current(row["ic_max"]) > 0
            assert parse_power(row["pd_max"]) > 0
        if row["tolerance"]:
            assert 0 < parse_tolerance(row["tolerance"]) <= 0.2


def test_no_two_lines_are_the_same_stock():
    # The store re-finds a line by its identity after edits, so identities must be unique.
    canonical = {
        "resistor": lambda s: format_resistance(parse_resistance(s)),
        "capacitor": lambda s: format_capacitance(parse_capacitance(s)),
        "transistor": str,
    }
    seen = set()
    for row in ROWS:
        key = tuple(row[c] for c in COLUMNS if c not in ("qty", "notes", "value"))
        key += (canonical[row["kind"]](row["value"]),)
        assert key not in seen, row
        seen.add(key)


def test_transistors():
    rows = _of("transistor")
    assert {r["polarity"] for r in rows} == {"NPN", "PNP"}
    for r in rows:
        assert r["polarity"] in ("NPN", "PNP")
        assert 0 < parse_number(r["hfe_min"]) < parse_number(r["hfe_max"])
        assert "from memory" in r["notes"] and "measure your own" in r["notes"]


def test_resistor_values_are_preferred_values():
    # IEC 60063: 5 % carbon film comes in E12 (E24 at most); 1 % metal film in E24/E96.
    for r in _of("resistor"):
        ohms = parse_resistance(r["value"])
        series = "E12" if parse_tolerance(r["tolerance"]) >= 0.05 else "E96"
        if nearest(ohms, series) != pytest.approx(ohms):
            assert nearest(ohms, "E24") == pytest.approx(ohms), r


def test_spellings_are_mixed_and_round_trip():
    spellings = [r["value"] for r in _of("resistor")]
    assert any(re.fullmatch(r"[0-9]+[kKM][0-9]+", s) for s in spellings)     # 4k7
    assert any(re.fullmatch(r"[0-9]+\.[0-9]+[kKM]", s) for s in spellings)   # 4.7k
    assert any(re.fullmatch(r"[0-9]+", s) for s in spellings)                # 4700
    assert any(re.fullmatch(r"[0-9]+R[0-9]+", s) for s in spellings)         # 2R2
    for s in spellings:
        ohms = parse_resistance(s)
        assert parse_resistance(format_resistance(ohms, digits=4)) == ohms


def _stock(kind, parse):
    """value -> total qty in stock (qty > 0 lines only)."""
    out: dict[float, int] = {}
    for r in _of(kind):
        if int(r["qty"]) > 0:
            v = parse(r["value"])
            out[v] = out.get(v, 0) + int(r["qty"])
    return out


def test_holds_what_a_12v_gain_10_stage_needs():
    # Common practice, no source: a 12 V common-emitter stage with gain 10 into 22 kΩ wants
    # divider and collector values around 1k…100k, an emitter resistor of 220 Ω…1 kΩ and
    # electrolytic coupling/bypass capacitors of 10 µ…220 µ rated at 16 V or more.
    r = _stock("resistor", parse_resistance)
    for ohms in (1e3, 4.7e3, 10e3, 47e3, 56e3, 100e3):
        assert r.get(ohms, 0) >= 2, ohms
    assert any(220 <= ohms <= 1000 for ohms in r)
    big_caps = [
        row for row in _of("capacitor")
        if row["dielectric"] == "electrolytic" and int(row["qty"]) > 0
        and 10e-6 <= parse_capacitance(row["value"]) <= 220e-6 and parse_voltage(row["voltage"]) >= 16
    ]
    assert len({parse_capacitance(row["value"]) for row in big_caps}) >= 3
    assert any(row["polarity"] == "NPN" and int(row["qty"]) > 0 for row in _of("transistor"))


def test_not_every_e12_value_is_there():
    # Gaps are the point of the demo: some values can only be made from series/parallel pairs.
    in_stock = _stock("resistor", parse_resistance)
    missing = [v for v in series_values("E12", 10, 1e6) if v not in in_stock]
    assert len(missing) >= 8
    assert any(int(r["qty"]) == 0 for r in _of("resistor"))
    assert any(int(r["qty"]) in (1, 2) for r in _of("resistor"))


def test_polarised_capacitors_carry_a_caution():
    # Reversed or over-volted electrolytics and tantalums can vent or fail short (fact of the trade).
    polarised = [r for r in _of("capacitor") if r["dielectric"] in ("electrolytic", "tantalum")]
    assert polarised and any("polarised" in r["notes"] for r in polarised)
    assert all(r["voltage"] for r in polarised)


def test_the_drawer_reader_takes_it_without_a_problem():
    drawer_mod = pytest.importorskip("inventory.drawer")
    drawer = drawer_mod.Drawer.load(files("inventory") / "demo" / "drawer.csv")
    assert [str(p) for p in drawer.problems] == []
    assert len(drawer.parts) == len(ROWS)
