"""E-series tables checked against the `eseries` package (an independent implementation of IEC 60063)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import eseries as ref
from inventory.eseries import SERIES, TOLERANCE, nearest, neighbours, series_values
from inventory.values import format_capacitance, format_resistance, parse_capacitance, parse_resistance

NAMES = ["E3", "E6", "E12", "E24", "E48", "E96", "E192"]
REF_KEY = {name: getattr(ref, name) for name in NAMES}


@pytest.mark.parametrize("name", NAMES)
def test_table_matches_eseries_package(name):
    # The package stores E3–E24 as 10…91 and E48–E192 as 100…988.
    expected = np.array(ref.series(REF_KEY[name]), dtype=float)
    expected /= 10.0 ** math.floor(math.log10(expected[0]))
    np.testing.assert_array_equal(SERIES[name], expected)
    assert len(SERIES[name]) == int(name[1:])
    assert SERIES[name][0] == 1.0 and SERIES[name][-1] < 10.0
    assert np.all(np.diff(SERIES[name]) > 0)


@pytest.mark.parametrize("name", NAMES)
def test_tolerance_matches_eseries_package(name):
    assert TOLERANCE[name] == pytest.approx(ref.tolerance(REF_KEY[name]))


def test_irregular_values_of_the_standard():
    # IEC 60063: these E24 values differ from round(10**(i/24), 1); E192 has 9.20, not 9.19.
    e24 = set(SERIES["E24"].tolist())
    for v in (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2):
        assert v in e24
        geometric = round(10 ** (list(SERIES["E24"]).index(v) / 24), 1)
        assert geometric != v
    assert 9.2 in SERIES["E192"].tolist() and 9.19 not in SERIES["E192"].tolist()


def test_tables_are_read_only():
    with pytest.raises(ValueError):
        SERIES["E12"][0] = 2.0


@pytest.mark.parametrize("name", NAMES)
@pytest.mark.parametrize(("lo", "hi"), [(10, 1e6), (1e-12, 1e-6), (4.7, 4.7), (3.3e3, 6.8e3), (1.0, 9.9)])
def test_series_values_match_eseries_erange(name, lo, hi):
    expected = np.array(list(ref.erange(REF_KEY[name], lo, hi)))
    np.testing.assert_allclose(series_values(name, lo, hi), expected, rtol=1e-12)


def test_e12_resistors_spell_as_rkm():
    # Common practice, no source: the E12 decade 10 Ω … 82 Ω is marked 10R, 12R, … 82R.
    got = [format_resistance(v) for v in series_values("E12", 10, 82)]
    assert got == ["10R", "12R", "15R", "18R", "22R", "27R", "33R", "39R", "47R", "56R", "68R", "82R"]


def test_series_values_equal_parsed_values_bit_for_bit():
    # So a drawer value "4k7" can be looked up in a series table with ==.
    values = series_values("E24", 1, 1e6)
    assert all(parse_resistance(format_resistance(v)) == v for v in values)
    caps = series_values("E12", 1e-12, 0.01)
    assert all(parse_capacitance(format_capacitance(v)) == v for v in caps)


def test_bad_arguments():
    with pytest.raises(ValueError):
        series_values("E7", 1, 10)
    with pytest.raises(ValueError):
        series_values("E12", 10, 1)
    with pytest.raises(ValueError):
        nearest(-1.0, "E12")
    with pytest.raises(ValueError):
        nearest(math.nan, "E12")


def _brute_nearest(value: float, name: str) -> float:
    """Oracle: scan every value of the three decades around `value`, smallest |log ratio|, ties low."""
    d = math.floor(math.log10(value))
    cands = [float(f"{m!r}e{d + k}") for k in (-1, 0, 1, 2) for m in SERIES[name].tolist()]
    return min(cands, key=lambda c: (abs(math.log(c / value)), c))


@settings(max_examples=150, deadline=None, derandomize=True)
@given(st.floats(min_value=1e-13, max_value=1e10), st.sampled_from(NAMES))
def test_nearest_against_brute_force(value, name):
    got = nearest(value, name)
    assert got == pytest.approx(_brute_nearest(value, name), rel=1e-12)
    # Independent check: the `eseries` package's two nearest values (by difference) contain ours.
    assert min(abs(got - c) / got for c in ref.find_nearest_few(REF_KEY[name], value, num=2)) < 1e-12


@settings(max_examples=100, deadline=None, derandomize=True)
@given(st.floats(min_value=1e-13, max_value=1e10), st.sampled_from(NAMES))
def test_neighbours_bracket(value, name):
    below, above = neighbours(value, name)
    assert below <= value * (1 + 1e-12) and above >= value * (1 - 1e-12)
    # The package has no slack for float noise; skip values a hair from a series value.
    gap = min(abs(math.log(below / value)), abs(math.log(above / value)))
    assume(gap == 0.0 or gap > 1e-11)
    ref_below = ref.find_less_than_or_equal(REF_KEY[name], value)
    ref_above = ref.find_greater_than_or_equal(REF_KEY[name], value)
    assert below == pytest.approx(ref_below, rel=1e-9) and above == pytest.approx(ref_above, rel=1e-9)


def test_nearest_examples_and_arrays():
    # E12 … 4.7, 5.6 …: 5000/4700 = 1.064 beats 5600/5000 = 1.12 (ratio distance).
    assert nearest(5000, "E12") == 4700.0
    assert nearest(4700, "E12") == 4700.0
    assert nearest(9.9, "E12") == 10.0                 # wraps into the next decade
    # 5150 is the arithmetic midpoint of 4700 and 5600 but above the geometric one (5130).
    assert nearest(5150, "E12") == 5600.0 and nearest(5130, "E12") == 4700.0
    got = nearest(np.array([5000.0, 5200.0, 0.00105, 0.0011]), "E12")
    np.testing.assert_array_equal(got, [4700.0, 5600.0, 0.001, 0.0012])   # 1.1/1.0 > 1.2/1.1
    lo, hi = neighbours(np.array([[5000.0]]), "E6")
    assert lo.shape == (1, 1) and lo[0, 0] == 4700.0 and hi[0, 0] == 6800.0
