"""Spelling figures, one rule for every screen and the printed sheet (README "How figures are spelled").

- A part value (what is printed on a part in a drawer position) is spelled in RKM code,
  IEC 60062: ``4k7``, ``220R``, ``100n``, ``4u7``.
- Every other figure (measured, predicted or asked for: voltages, currents, Rin, the load,
  frequencies) is spelled in SI with a space and its unit: ``16.9 kΩ``, ``22.9 Hz``, ``5.97 V``,
  ``1.2 mA``, three significant digits.
- Gain is a plain signed number (``-10.1``); shares (THD, yield, tolerance) in percent.
- A missing or unknown figure is a dash.

Headless (no Textual): the CLI's text sheet uses it too.
"""

from __future__ import annotations

from inventory.values import format_capacitance, format_resistance, format_si

DASH = "–"


def _num(value) -> float | None:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if v == v else None  # NaN shows as a dash


def si(value, unit: str) -> str:
    """Any measured or asked-for figure: ``16.9 kΩ``, ``22.9 Hz``."""
    v = _num(value)
    if v is None:
        return DASH
    if v in (float("inf"), float("-inf")):
        return f"{'-' if v < 0 else ''}∞ {unit}"
    return format_si(v, unit)


def volts(value) -> str:
    return si(value, "V")


def ohms(value) -> str:
    """A measured or asked-for resistance (Rin, Rout, the load): SI, ``16.9 kΩ``."""
    return si(value, "Ω")


def hertz(value) -> str:
    return si(value, "Hz")


def amps(value) -> str:
    return si(value, "A")


def part_value(entry: dict) -> str:
    """A part's value in RKM: ``4k7`` from {"ohms": 4700}, ``4u7`` from {"farads": 4.7e-6}."""
    if "ohms" in entry and _num(entry["ohms"]) is not None:
        return format_resistance(float(entry["ohms"]))
    if "farads" in entry and _num(entry["farads"]) is not None:
        return format_capacitance(float(entry["farads"]))
    return DASH


def gain(value) -> str:
    v = _num(value)
    return DASH if v is None else f"{v:+.2f}"


def percent(fraction, digits: int = 1) -> str:
    v = _num(fraction)
    return DASH if v is None else f"{v * 100:.{digits}f} %"


def plain(value, digits: int = 3) -> str:
    v = _num(value)
    return DASH if v is None else f"{v:.{digits}g}"


def span(lo, hi, spell) -> str:
    """A range, low end first whatever order the ends come in: ``5.81 V … 6.18 V``."""
    a, b = _num(lo), _num(hi)
    if a is None or b is None:
        return DASH
    a, b = min(a, b), max(a, b)
    return f"{spell(a)} … {spell(b)}"


def predicted_rows(predicted: dict) -> list[tuple[str, str]]:
    """(label, text) for the predicted figures of a design, in build-sheet order."""
    p = predicted or {}
    return [
        ("Gain", gain(p.get("gain"))),
        ("Input resistance", ohms(p.get("rin"))),
        ("Output resistance", ohms(p.get("rout"))),
        ("Low cut-off", hertz(p.get("f_low"))),
        ("Swing (p-p)", volts(p.get("swing_pp"))),
        ("Distortion (THD)", percent(p.get("thd"), 2)),
        ("Collector current", amps(p.get("ic"))),
    ]
