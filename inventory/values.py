"""Component values as people write them: RKM code (IEC 60062) and SI notation, both ways.

Accepted spellings, and the decisions behind the doubtful ones:

* RKM code: the letter stands where the decimal point goes, ``4k7`` = 4.7 kΩ, ``2R2`` = 2.2 Ω,
  ``6V3`` = 6.3 V.  A leading letter is the standard's sub-unit form: ``R47`` = 0.47 Ω, ``p68`` =
  0.68 pF, and by the same rule ``k47`` = 470 Ω.
* SI: ``4.7k``, ``4.7 kΩ``, ``4.7kohm``, ``100 nF``, ``0.1 uF``, ``250mW``.  ``µ`` (U+00B5),
  ``μ`` (U+03BC) and ``u`` all mean micro; ``K`` is tolerated for kilo.
* Resistors: ``m`` is milli (``100m`` = 0.1 Ω), ``M`` mega.  ``0``/``0R`` (a zero-ohm link) is allowed.
* Capacitors: a bare number (``220``) is refused: is it pF or µF?  Add p, n, u or µ.  ``M`` is
  refused too (old "MF" meant microfarad).  ``1m`` = 1 mF, ``1F`` = 1 F.
* Voltage, current, power: a bare number is in V, A or W.  Power also takes ``1/4W``, ``1/8 W``.
* Tolerance: ``5%``, ``±1%``, ``+/-1 %``; a bare number is in percent (``1`` = 1 %, ``0.05`` = 0.05 %),
  because that is how the column is written; returned as a fraction (0.05 for 5 %).
* Exponent notation as scripts and spreadsheets write it: ``1e3``, ``4.7e-06``, ``2.2E+4``.  RKM
  code never uses the letter e, so it is unambiguous.  A number with an exponent is in the base
  unit (``4.7e-06`` = 4.7 µF: the bare-number refusal for capacitors does not apply, an exponent
  says the scale) and takes no prefix letter after it (``1e3k`` is refused).
* Plain numbers (`parse_number`: hFE, gain, frequency) take the SI prefixes p n u m k M G and
  RKM spelling too (``1.8k``, ``1k8``); `parse_frequency` also takes ``Hz``; `parse_fraction`
  takes ``1%`` or ``0.01``; `parse_temperature` takes a signed °C figure above absolute zero.
* A value may be written with or without its unit; the text is never rewritten: the drawer file
  keeps the spelling it was given.

Bad text raises `ValueFormatError` and nothing else (non-strings raise `TypeError`).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from decimal import Decimal

__all__ = [
    "ValueFormatError", "parse_resistance", "parse_capacitance", "parse_voltage", "parse_current",
    "parse_power", "parse_tolerance", "parse_number", "parse_frequency", "parse_fraction", "parse_temperature", "format_resistance", "format_capacitance",
    "format_si",
]


class ValueFormatError(ValueError):
    """Text that is not a value of the asked kind.  `.text` is the input, `.expected` the hint."""

    def __init__(self, text: str, noun: str, expected: str) -> None:
        self.text = text
        self.expected = expected
        super().__init__(f'"{_show(text)}" is not {noun} ({expected})')


def _show(text: str) -> str:
    """The offending text for a one-line message: control characters escaped, long text cut."""
    shown = "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)
    return shown if len(shown) <= 40 else shown[:37] + "..."


# Both micro signs become "u" before matching; the ohm sign U+2126 becomes the letter Ω.
_FOLD = str.maketrans({"\u00b5": "u", "\u03bc": "u", "\u2126": "\u03a9"})
# ASCII digits only: `\d` and float() would also take other scripts' digits.
_NUM = r"[0-9]+(?:\.[0-9]*)?|\.[0-9]+"
_EXP = r"[eE][+-]?[0-9]{1,6}"


@dataclass(frozen=True)
class _Kind:
    noun: str
    expected: str
    letters: dict[str, int]        # letter -> power of ten: SI prefix after a number, decimal point in RKM
    markers: str                   # letters that are the unit itself (R, V, A, W, F): no unit after them
    unit: str                      # regex for the unit spelling
    bare_hint: str | None = None   # set when a number without letter or unit is refused
    needs_letter: str = ""         # unit spellings accepted only after a multiplier letter
    zero_ok: bool = False
    si: re.Pattern = field(init=False, repr=False, compare=False)
    rkm: re.Pattern = field(init=False, repr=False, compare=False)
    cache: dict = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        letters = "|".join(re.escape(k) for k in self.letters)
        unit = rf"(?:\s*(?P<unit>{self.unit}))?"
        object.__setattr__(self, "cache", {})
        object.__setattr__(self, "si", re.compile(
            rf"(?P<num>(?:{_NUM})(?P<exp>{_EXP})?)(?:\s*(?P<pre>{letters}))?{unit}"))
        object.__setattr__(
            self, "rkm", re.compile(rf"(?P<int>[0-9]*)(?P<pre>{letters})(?P<frac>[0-9]+){unit}")
        )

    def parse(self, text: str) -> float:
        if not isinstance(text, str):
            raise TypeError(f"expected text, got {type(text).__name__}")
        hit = self.cache.get(text)  # a drawer repeats the same few spellings thousands of times
        if hit is None:
            hit = self._parse(text)  # a refusal raises and is not cached
            if len(self.cache) < 65_536:
                self.cache[text] = hit
        return hit

    def _parse(self, text: str) -> float:
        s = text.strip().translate(_FOLD)
        m = self.si.fullmatch(s)
        exp = False
        if m:
            number, exp = m["num"], bool(m["exp"])
            if exp and m["pre"] and m["pre"] not in self.markers.split():  # "1e3k": an exponent already says the scale
                raise ValueFormatError(text, self.noun, self.expected)
        else:
            m = self.rkm.fullmatch(s)
            if not m:
                raise ValueFormatError(text, self.noun, self.expected)
            number = f"{m['int'] or '0'}.{m['frac']}"
        pre, unit = m["pre"], m["unit"]
        if pre in self.markers.split() and unit:      # "4R7Ω", "6V3V", "1FF"
            raise ValueFormatError(text, self.noun, self.expected)
        if unit and unit in self.needs_letter.split() and not pre:   # "10f": femto or farad?
            raise ValueFormatError(text, self.noun, self.expected)
        if not pre and not unit and self.bare_hint and not exp:
            raise ValueFormatError(text, self.noun, self.bare_hint)
        # Decimal keeps "100n" at the float nearest 1e-7, not 100 * 1e-9 = 1.0000000000000001e-07.
        value = float(Decimal(number).scaleb(self.letters.get(pre or "", 0)))
        if not math.isfinite(value) or (value == 0.0 and not self.zero_ok):
            raise ValueFormatError(text, self.noun, self.expected)
        return value


_RESISTANCE = _Kind(
    "a resistance", "expected e.g. 4k7, 4.7k, 4700",
    {"R": 0, "r": 0, "m": -3, "k": 3, "K": 3, "M": 6, "G": 9},
    "R r", r"\u03a9|(?i:ohms?)", zero_ok=True,
)
_CAPACITANCE = _Kind(
    "a capacitance", "expected e.g. 100n, 4u7, 47p, 10uF",
    {"p": -12, "P": -12, "n": -9, "N": -9, "u": -6, "U": -6, "m": -3, "F": 0},
    "F", r"F|f", bare_hint="add a unit letter p, n, u or µ, e.g. 220p or 220u", needs_letter="f",
)
_VOLTAGE = _Kind(
    "a voltage", "expected e.g. 25V, 6V3, 6.3V, 50",
    {"m": -3, "k": 3, "K": 3, "V": 0, "v": 0}, "V v", r"V|v",
)
_CURRENT = _Kind(
    "a current", "expected e.g. 200mA, 0.2A, 200m, 100uA",
    {"n": -9, "u": -6, "U": -6, "m": -3, "A": 0}, "A", r"A",
)
_POWER = _Kind(
    "a power", "expected e.g. 0.25W, 1/4W, 250mW, 0.25",
    {"m": -3, "W": 0, "w": 0}, "W w", r"W|w",
)
_NUMBER = _Kind(
    "a number", "expected e.g. 100, 1.8k, 1e2",
    {"p": -12, "n": -9, "u": -6, "m": -3, "k": 3, "K": 3, "M": 6, "G": 9}, "", r"(?!)", zero_ok=True,
)
_FREQUENCY = _Kind(
    "a frequency", "expected e.g. 30, 30Hz, 1.8k, 1.8kHz",
    {"m": -3, "k": 3, "K": 3, "M": 6, "G": 9}, "", r"(?i:hz)", zero_ok=True,
)
_FRACTION = re.compile(r"([0-9]{1,6})\s*/\s*([0-9]{1,6})(?:\s*[Ww])?")
_TOLERANCE = re.compile(rf"(?:±|\+\s*/\s*-|\+-)?\s*({_NUM})\s*%?")


def parse_resistance(text: str) -> float:
    """Resistance in Ω from ``4k7``, ``4.7k``, ``4700``, ``2R2``, ``R47``, ``1M5``, ``4.7 kΩ``, ``100m``."""
    return _RESISTANCE.parse(text)


def parse_capacitance(text: str) -> float:
    """Capacitance in F from ``100n``, ``0.1u``, ``4u7``, ``10µ``, ``47p``, ``10uF``, ``1m``, ``1F``."""
    return _CAPACITANCE.parse(text)


def parse_voltage(text: str) -> float:
    """Voltage in V from ``25V``, ``6V3``, ``6.3V``, ``50``, ``1kV``."""
    return _VOLTAGE.parse(text)


def parse_current(text: str) -> float:
    """Current in A from ``200mA``, ``0.2A``, ``200m``, ``100uA``."""
    return _CURRENT.parse(text)


def parse_power(text: str) -> float:
    """Power in W from ``0.25W``, ``1/4W``, ``1/8 W``, ``250mW``, ``0.25``, ``2W``."""
    if isinstance(text, str):
        m = _FRACTION.fullmatch(text.strip())
        if m:
            num, den = int(m[1]), int(m[2])
            if num == 0 or den == 0:
                raise ValueFormatError(text, _POWER.noun, _POWER.expected)
            return num / den
    return _POWER.parse(text)


def parse_tolerance(text: str) -> float:
    """Tolerance as a fraction from ``5%``, ``±1%``, ``+/-1 %``, ``0.5%``; a bare number is percent."""
    if not isinstance(text, str):
        raise TypeError(f"expected text, got {type(text).__name__}")
    m = _TOLERANCE.fullmatch(text.strip())
    pct = float(m[1]) if m else math.nan
    if not 0.0 < pct < 100.0:
        raise ValueFormatError(text, "a tolerance", "expected e.g. 5%, ±1%, 0.5%")
    return pct / 100.0


def parse_number(text: str) -> float:
    """A plain non-negative number such as an hFE or a gain: ``100``, ``1e2``, ``0.5``, ``1.8k``, ``1k8``."""
    return _NUMBER.parse(text)


def parse_frequency(text: str) -> float:
    """Frequency in Hz from ``30``, ``30Hz``, ``1.8k``, ``1k8``, ``1.8 kHz``, ``3e4``."""
    return _FREQUENCY.parse(text)


def parse_fraction(text: str) -> float:
    """A share as a fraction from ``1%``, ``0.5 %`` or ``0.01`` (a bare number is the fraction itself)."""
    if not isinstance(text, str):
        raise TypeError(f"expected text, got {type(text).__name__}")
    s = text.strip()
    pct = s.endswith("%")
    value = _NUMBER.parse(s[:-1]) if pct else _NUMBER.parse(s)
    return value / 100.0 if pct else value


_TEMPERATURE = re.compile(rf"(?P<sign>[+-]?)\s*(?P<num>(?:{_NUM})(?:{_EXP})?)\s*(?:°\s*C|C|°)?", re.IGNORECASE)
ABSOLUTE_ZERO_C = -273.15


def parse_temperature(text: str) -> float:
    """Temperature in °C from ``25``, ``-10``, ``25°C``, ``-1e1``; at or below absolute zero is refused."""
    if not isinstance(text, str):
        raise TypeError(f"expected text, got {type(text).__name__}")
    m = _TEMPERATURE.fullmatch(text.strip())
    value = float(m["sign"] + m["num"]) if m else math.nan
    if not math.isfinite(value):
        raise ValueFormatError(text, "a temperature", "expected °C, e.g. 25 or -10")
    if value <= ABSOLUTE_ZERO_C:
        raise ValueFormatError(text, "a temperature", f"{value:g} °C is at or below absolute zero, -273.15 °C")
    return value


# ---- formatting -------------------------------------------------------------------------------

def _rounded(value: float, digits: int) -> Decimal:
    if not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be a positive integer, got {digits!r}")
    if not math.isfinite(value) or value < 0:
        raise ValueError(f"cannot format {value!r}: need a finite value >= 0")
    return Decimal(f"{value:.{digits - 1}e}")


def _mantissa(d: Decimal, exp: int) -> str:
    """`d` / 10**exp written out without exponent or trailing zeros: 4.70E+3, 3 -> "4.7"."""
    return format(d.scaleb(-exp).normalize(), "f")


def _rkm(d: Decimal, groups: tuple[tuple[float, int, str], ...]) -> str:
    """Write `d` in RKM code, taking the first group whose lower bound it reaches."""
    for lower, exp, letter in groups:
        if d >= Decimal(repr(lower)):
            whole, _, frac = _mantissa(d, exp).partition(".")
            return f"{whole}{letter}{frac}"
    raise AssertionError("the last group has lower bound 0")


_R_GROUPS = ((1e9, 9, "G"), (1e6, 6, "M"), (1e3, 3, "k"), (0.1, 0, "R"), (0.0, -3, "m"))
_C_GROUPS = ((1.0, 0, "F"), (0.1, -3, "m"), (1e-6, -6, "u"), (1e-9, -9, "n"), (0.0, -12, "p"))


def format_resistance(ohms: float, digits: int = 3) -> str:
    """RKM spelling of a resistance in Ω, rounded to `digits` significant digits.

    4700 -> "4k7", 2.2 -> "2R2", 0.47 -> "0R47", 10 -> "10R" (the R marks the unit in RKM code),
    1.5e6 -> "1M5", 0.047 -> "47m".
    """
    d = _rounded(ohms, digits)
    return "0R" if d == 0 else _rkm(d, _R_GROUPS)


def format_capacitance(farads: float, digits: int = 3) -> str:
    """RKM spelling of a capacitance in F: 100e-9 -> "100n", 4.7e-6 -> "4u7", 0.47e-12 -> "0p47".

    Microfarads run up to 99 999u (4700u, as electrolytics are marked) before switching to m.
    """
    d = _rounded(farads, digits)
    if d == 0:
        raise ValueError("cannot format a capacitance of 0 F")
    return _rkm(d, _C_GROUPS)


_SI_PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


def format_si(value: float, unit: str, digits: int = 3) -> str:
    """SI spelling with a space: (4700, "Ω") -> "4.7 kΩ", (1e-7, "F") -> "100 nF", (0.25, "W") -> "250 mW"."""
    sign = "-" if value < 0 else ""
    d = _rounded(abs(value), digits)
    if d == 0:
        return f"0 {unit}"
    exp = min(max(3 * (d.adjusted() // 3), -15), 12)
    return f"{sign}{_mantissa(d, exp)} {_SI_PREFIXES[exp]}{unit}"
