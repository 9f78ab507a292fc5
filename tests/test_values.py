"""Value spelling: RKM code (IEC 60062) and SI notation, parsed and formatted both ways."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inventory.values import (
    ValueFormatError,
    format_capacitance,
    format_resistance,
    format_si,
    parse_capacitance,
    parse_current,
    parse_fraction,
    parse_frequency,
    parse_number,
    parse_temperature,
    parse_power,
    parse_resistance,
    parse_tolerance,
    parse_voltage,
)

# IEC 60062 RKM code, examples from memory: the letter replaces the decimal point and gives the
# multiplier (R = 1, k = 10^3, M = 10^6, G = 10^9 for resistors; p, n, µ for capacitors).
RKM_STANDARD = [
    ("R47", 0.47), ("R10", 0.1), ("4R7", 4.7), ("47R", 47.0), ("100R", 100.0), ("1K0", 1e3),
    ("4k7", 4.7e3), ("47k", 47e3), ("4M7", 4.7e6), ("1M0", 1e6), ("1G0", 1e9),
]
RKM_STANDARD_C = [("p68", 0.68e-12), ("1p0", 1e-12), ("4n7", 4.7e-9), ("4µ7", 4.7e-6), ("10n", 10e-9)]

# Spellings as people type them in a drawer file (common practice, no source).
RESISTANCE_TYPED = [
    ("4k7", 4700.0), ("4.7k", 4700.0), ("4700", 4700.0), ("2R2", 2.2), ("0R47", 0.47),
    ("1M", 1e6), ("1M5", 1.5e6), ("4K7", 4700.0), ("4.7 kΩ", 4700.0), ("4k7Ω", 4700.0),
    ("4.7kohm", 4700.0), ("470 ohm", 470.0), ("470 Ohms", 470.0), ("10 Ω", 10.0), ("1G", 1e9),
    ("100m", 0.1), ("  4k7\t", 4700.0), ("4.7\u00a0kΩ", 4700.0), ("4.7 k\u2126", 4700.0),
    ("2r2", 2.2), ("0", 0.0), ("0R", 0.0), ("k47", 470.0), ("1.", 1.0), (".5k", 500.0),
]
RESISTANCE_BAD = [
    "4k7k", "", "   ", "-4k7", "abc", "1..2", "nan", "NaN", "inf", "1e3k", "4R7Ω", "4 k7",
    "4.7k7", "k", "R", "m", "1kk", "4k7 ohm ohm", "+4k7", "4,7k", "٤k7", "1e999", "9" * 400,
]
CAPACITANCE_TYPED = [
    ("100n", 100e-9), ("0.1u", 0.1e-6), ("4u7", 4.7e-6), ("10\u00b5", 10e-6), ("10\u03bc", 10e-6),
    ("47p", 47e-12), ("10uF", 10e-6), ("2n2", 2.2e-9), ("1µF", 1e-6), ("0.1 uF", 0.1e-6),
    ("1m", 1e-3), ("1F", 1.0), ("100N", 100e-9), ("10uf", 10e-6), ("4.7 nF", 4.7e-9),
]
CAPACITANCE_BAD = ["220", "", "10f", "1M", "1FF", "0p", "0", "-1u", "u", "4u7u", "1uFF", "abc"]
VOLTAGE = [("25V", 25.0), ("6V3", 6.3), ("6.3V", 6.3), ("50", 50.0), ("1kV", 1e3), ("1k", 1e3),
           ("25 v", 25.0), ("500mV", 0.5)]
CURRENT = [("200mA", 0.2), ("0.2A", 0.2), ("200m", 0.2), ("100uA", 100e-6), ("100µA", 100e-6),
           ("1A5", 1.5), ("0.8", 0.8)]
POWER = [("0.25W", 0.25), ("1/4W", 0.25), ("1/8 W", 0.125), ("250mW", 0.25), ("0.25", 0.25),
         ("2W", 2.0), ("1/2", 0.5), ("0W25", 0.25)]
TOLERANCE = [("5%", 0.05), ("±1%", 0.01), ("+/-1 %", 0.01), ("+-2%", 0.02), ("0.5%", 0.005),
             ("1", 0.01), ("0.05", 0.0005), ("10 %", 0.10)]
OTHER_BAD = [
    (parse_voltage, "0"), (parse_voltage, "25VV"), (parse_voltage, "-5V"), (parse_current, "200MA"),
    (parse_current, "A"), (parse_power, "0/4"), (parse_power, "1/0"), (parse_power, "1/4/2"),
    (parse_power, "1kW"), (parse_tolerance, "100%"), (parse_tolerance, "0%"), (parse_tolerance, "-5%"),
    (parse_tolerance, "%"), (parse_tolerance, "5%%"), (parse_number, "-1"), (parse_number, "1e999"),
    (parse_number, "nan"), (parse_number, ""), (parse_capacitance, "1e-400"), (parse_capacitance, "1e3u"),
    (parse_frequency, "1e400"), (parse_frequency, "-30"), (parse_frequency, "30 kHzz"), (parse_fraction, "%"),
    (parse_fraction, "-1%"), (parse_temperature, "-300"), (parse_temperature, "-273.15"),
    (parse_temperature, "-inf"), (parse_temperature, "inf"), (parse_temperature, "nan"), (parse_temperature, "1e400"),
]
# Exponent notation as scripts and spreadsheets write numbers (issue: `--cin 4.7e-06`, `--r1 1e3`).
EXPONENT = [
    (parse_resistance, "1e3", 1e3), (parse_resistance, "4E7", 4e7), (parse_resistance, "2.2E+4", 2.2e4),
    (parse_resistance, "4.7e3 Ω", 4.7e3), (parse_capacitance, "4.7e-06", 4.7e-6), (parse_capacitance, "1E-7F", 1e-7),
    (parse_voltage, "1.2e1", 12.0), (parse_current, "2e-3", 2e-3), (parse_power, "2.5e-1", 0.25),
    (parse_number, "1e2", 100.0), (parse_frequency, "1.8e3", 1800.0),
]
# SI prefixes and RKM for every plain figure (issue: `--low-cut 1.8k`).
PLAIN = [
    (parse_number, "1.8k", 1800.0), (parse_number, "1k8", 1800.0), (parse_number, "100", 100.0),
    (parse_number, "0", 0.0), (parse_frequency, "1.8k", 1800.0), (parse_frequency, "1.8 kHz", 1800.0),
    (parse_frequency, "30Hz", 30.0), (parse_frequency, "30", 30.0), (parse_fraction, "1%", 0.01),
    (parse_fraction, "0.01", 0.01), (parse_fraction, "2.5 %", 0.025), (parse_temperature, "-10", -10.0),
    (parse_temperature, "25°C", 25.0), (parse_temperature, "+50", 50.0), (parse_temperature, "-2e1", -20.0),
]


@pytest.mark.parametrize(("parse", "text", "value"), EXPONENT + PLAIN)
def test_exponent_and_prefix_spellings(parse, text, value):
    assert parse(text) == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize(("text", "ohms"), RKM_STANDARD + RESISTANCE_TYPED)
def test_parse_resistance(text, ohms):
    assert parse_resistance(text) == pytest.approx(ohms, rel=1e-12)


@pytest.mark.parametrize(("text", "farads"), RKM_STANDARD_C + CAPACITANCE_TYPED)
def test_parse_capacitance(text, farads):
    assert parse_capacitance(text) == pytest.approx(farads, rel=1e-12)


@pytest.mark.parametrize(
    ("parse", "text", "value"),
    [(parse_voltage, t, v) for t, v in VOLTAGE] + [(parse_current, t, v) for t, v in CURRENT]
    + [(parse_power, t, v) for t, v in POWER] + [(parse_tolerance, t, v) for t, v in TOLERANCE]
    + [(parse_number, "100", 100.0), (parse_number, "1e2", 100.0), (parse_number, " 0.5 ", 0.5)],
)
def test_parse_other(parse, text, value):
    assert parse(text) == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("text", RESISTANCE_BAD)
def test_resistance_rejected_with_hint(text):
    with pytest.raises(ValueFormatError) as err:
        parse_resistance(text)
    assert err.value.text == text
    assert err.value.expected == "expected e.g. 4k7, 4.7k, 4700"
    assert "is not a resistance (expected e.g. 4k7, 4.7k, 4700)" in str(err.value)


def test_message_shape():
    with pytest.raises(ValueFormatError, match=r'^"4k7k" is not a resistance \(expected e\.g\. 4k7'):
        parse_resistance("4k7k")
    with pytest.raises(ValueFormatError) as err:
        parse_resistance("4k7\nx" + "y" * 100)
    assert "\n" not in str(err.value) and len(str(err.value)) < 120


@pytest.mark.parametrize("text", CAPACITANCE_BAD)
def test_capacitance_rejected(text):
    with pytest.raises(ValueFormatError):
        parse_capacitance(text)


def test_bare_capacitance_asks_for_a_unit_letter():
    with pytest.raises(ValueFormatError) as err:
        parse_capacitance("220")
    assert "p, n, u or µ" in err.value.expected


@pytest.mark.parametrize(("parse", "text"), OTHER_BAD)
def test_other_rejected(parse, text):
    with pytest.raises(ValueFormatError):
        parse(text)


def test_non_text_is_a_type_error():
    with pytest.raises(TypeError):
        parse_resistance(4700)  # type: ignore[arg-type]


# Formatting: RKM spelling (IEC 60062, examples from memory) and SI with a space (SI brochure style).
FORMAT_R = [
    (4700, "4k7"), (2.2, "2R2"), (0.47, "0R47"), (1e6, "1M"), (1.5e6, "1M5"), (100e3, "100k"),
    (1500, "1k5"), (5636.4, "5k64"), (10, "10R"), (1, "1R"), (0, "0R"), (999.7, "1k"), (47e3, "47k"),
    (4.7e6, "4M7"), (0.047, "47m"), (2.2e9, "2G2"), (330, "330R"), (4990, "4k99"),
]
FORMAT_C = [
    (100e-9, "100n"), (4.7e-6, "4u7"), (47e-12, "47p"), (1e-6, "1u"), (2.2e-9, "2n2"),
    (220e-6, "220u"), (4700e-6, "4700u"), (0.68e-12, "0p68"), (1e-9, "1n"), (1.0, "1F"),
]
FORMAT_SI = [
    (4700, "Ω", "4.7 kΩ"), (100e-9, "F", "100 nF"), (12, "V", "12 V"), (0.25, "W", "250 mW"),
    (4.7e-6, "F", "4.7 µF"), (-12, "V", "-12 V"), (0, "A", "0 A"), (999.7, "Ω", "1 kΩ"),
    (1e-3, "A", "1 mA"), (2.2e6, "Ω", "2.2 MΩ"),
]


@pytest.mark.parametrize(("ohms", "text"), FORMAT_R)
def test_format_resistance(ohms, text):
    assert format_resistance(ohms) == text
    assert parse_resistance(text) == pytest.approx(ohms, rel=5e-3, abs=1e-12)


@pytest.mark.parametrize(("farads", "text"), FORMAT_C)
def test_format_capacitance(farads, text):
    assert format_capacitance(farads) == text
    assert parse_capacitance(text) == pytest.approx(farads, rel=5e-3)


@pytest.mark.parametrize(("value", "unit", "text"), FORMAT_SI)
def test_format_si(value, unit, text):
    assert format_si(value, unit) == text


def test_format_digits():
    assert format_resistance(5636.4, digits=2) == "5k6"
    assert format_resistance(5636.4, digits=4) == "5k636"
    assert format_si(5636.4, "Ω", digits=2) == "5.6 kΩ"


@pytest.mark.parametrize("bad", [-1.0, math.nan, math.inf])
def test_format_refuses_nonsense(bad):
    with pytest.raises(ValueError):
        format_resistance(bad)
    with pytest.raises(ValueError):
        format_capacitance(bad)


# Canonical RKM spellings come back unchanged: format(parse(s)) == s (IEC 60062, examples from memory).
@pytest.mark.parametrize(
    ("parse", "fmt", "text"),
    [(parse_resistance, format_resistance, t) for t in ("4R7", "47R", "100R", "1k", "4k7", "47k", "4M7", "0R47")]
    + [(parse_capacitance, format_capacitance, t) for t in ("0p68", "47p", "4n7", "100n", "4u7", "220u")],
)
def test_canonical_text_round_trip(parse, fmt, text):
    assert fmt(parse(text)) == text


# Up to 100 GΩ: format_si would go on to TΩ, which no resistor drawer needs.
positive = st.floats(min_value=1e-3, max_value=1e11)


@settings(max_examples=300, deadline=None, derandomize=True)
@given(positive, st.integers(min_value=1, max_value=6))
def test_resistance_round_trip(ohms, digits):
    half_step = 0.5 * 10.0 ** (1 - digits)        # rounding to `digits` significant digits
    for text in (format_resistance(ohms, digits), format_si(ohms, "Ω", digits)):
        assert parse_resistance(text) == pytest.approx(ohms, rel=half_step * 1.000001)


@settings(max_examples=300, deadline=None, derandomize=True)
@given(st.floats(min_value=1e-12, max_value=10.0), st.integers(min_value=1, max_value=6))
def test_capacitance_round_trip(farads, digits):
    half_step = 0.5 * 10.0 ** (1 - digits)
    for text in (format_capacitance(farads, digits), format_si(farads, "F", digits)):
        assert parse_capacitance(text) == pytest.approx(farads, rel=half_step * 1.000001)


@settings(max_examples=200, deadline=None, derandomize=True)
@given(st.floats(min_value=1e-3, max_value=900.0))  # kA is no bench current
def test_volt_amp_watt_round_trip(x):
    for parse, unit in ((parse_voltage, "V"), (parse_current, "A"), (parse_power, "W")):
        assert parse(format_si(x, unit)) == pytest.approx(x, rel=5e-3 * 1.000001)


PARSERS = (parse_resistance, parse_capacitance, parse_voltage, parse_current, parse_power,
           parse_tolerance, parse_number)
# Text drawn from the characters that matter here, plus anything at all.
value_like = st.text(alphabet="0123456789.,/+-±%eE kKmMRrGpPnNuUµμFfVvAWwΩohms\t\u00a0", max_size=12)


@pytest.mark.fuzz
@settings(max_examples=3000, deadline=None, derandomize=True)
@given(st.one_of(value_like, st.text(max_size=20)))
def test_any_text_is_a_value_or_a_value_format_error(text):
    for parse in PARSERS:
        try:
            value = parse(text)
        except ValueFormatError as err:
            assert err.text == text and err.expected
        else:
            assert math.isfinite(value) and value >= 0.0


@settings(max_examples=300, deadline=None, derandomize=True)
@given(value_like)
def test_any_text_quick(text):
    """The quick-set slice of the fuzz trial above."""
    for parse in PARSERS:
        try:
            value = parse(text)
        except ValueFormatError:
            continue
        assert math.isfinite(value) and value >= 0.0
