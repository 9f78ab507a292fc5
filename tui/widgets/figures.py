"""Spelling the solver's figures for the screens: SI/RKM with units, missing values as a dash."""

from __future__ import annotations

from inventory.values import format_resistance, format_si

DASH = "–"


def _num(value) -> float | None:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return v if v == v else None  # NaN shows as a dash


def volts(value) -> str:
    v = _num(value)
    return DASH if v is None else f"{v:.2f} V"


def ohms(value) -> str:
    v = _num(value)
    return DASH if v is None else format_resistance(v)


def hertz(value) -> str:
    v = _num(value)
    return DASH if v is None else format_si(v, "Hz")


def amps(value) -> str:
    v = _num(value)
    return DASH if v is None else format_si(v, "A")


def gain(value) -> str:
    v = _num(value)
    return DASH if v is None else f"{v:+.2f}"


def percent(fraction) -> str:
    v = _num(fraction)
    return DASH if v is None else f"{v * 100:.1f} %"


def plain(value, digits: int = 3) -> str:
    v = _num(value)
    return DASH if v is None else f"{v:.{digits}g}"


def predicted_rows(predicted: dict) -> list[tuple[str, str]]:
    """(label, text) for the predicted figures of a design, in build-sheet order."""
    p = predicted or {}
    return [
        ("Gain", gain(p.get("gain"))),
        ("Input resistance", ohms(p.get("rin"))),
        ("Output resistance", ohms(p.get("rout"))),
        ("Low cut-off", hertz(p.get("f_low"))),
        ("Swing (p-p)", volts(p.get("swing_pp"))),
        ("Distortion", percent(p.get("thd"))),
        ("Collector current", amps(p.get("ic"))),
    ]
