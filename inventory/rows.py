"""One drawer line checked and read into a `Part`, with every problem it has.

The columns are a fixed contract (see DEVELOPERS.md).  Defaults follow common
stock: 5 % for resistors, 20 % for capacitors, 0.25 W resistor rating (common
practice, no source).  Cells that do not apply to a line's kind are ignored on reading
(APPLIES lists what each kind reads; `drawerfit add` refuses the others).
"""

from __future__ import annotations

import re
from collections.abc import Callable

from . import values
from .parts import DIELECTRICS, KINDS, Part
from .problems import Problem, shown

COLUMNS = (
    "kind", "value", "qty", "tolerance", "power", "voltage", "dielectric", "part", "polarity",
    "hfe_min", "hfe_max", "vceo", "ic_max", "pd_max", "location", "notes",
)
REQUIRED = ("kind", "value", "qty")
# The cells each kind reads (besides kind, qty, location and notes); the others are ignored on that kind.
APPLIES = {
    "resistor": ("value", "tolerance", "power"),
    "capacitor": ("value", "tolerance", "voltage", "dielectric"),
    "transistor": ("part", "polarity", "hfe_min", "hfe_max", "vceo", "ic_max", "pd_max"),
}
DEFAULT_TOLERANCE = {"resistor": 0.05, "capacitor": 0.20}
DEFAULT_POWER_W = 0.25
# Plausibility limits of a transistor line: a value past them is a typo (a unit or an exponent
# too many), and the line is an error, left out of designs.  Common practice, no source; set
# generously: small-signal parts have hFE in the tens to hundreds, Darlingtons in the thousands
# to tens of thousands (BC517 is given as ≥ 30 000 from memory), and no single transistor
# comes near 10 kV, 1 kA or 10 kW.
HFE_LIMITS = (1.0, 100_000.0)
RATING_LIMITS = {"vceo": (10e3, "10 kV"), "ic_max": (1e3, "1 kA"), "pd_max": (10e3, "10 kW")}
_QTY = re.compile(r"[0-9]{1,9}")
MAX_QTY = 999_999_999  # the largest count a line's qty cell holds (nine digits, _QTY)
_DECIMAL_COMMA = re.compile(r"(?<=[0-9]),(?=[0-9])")


class RowReader:
    """Reads the cells of one record; collects problems instead of raising."""

    def __init__(self, path: str, line: int, cells: list[str], columns: dict[str, int],
                 decimal_comma: bool) -> None:
        self.path, self.line, self.cells, self.columns = path, line, cells, columns
        self.decimal_comma = decimal_comma
        self.problems: list[Problem] = []
        n = len(cells)
        self._texts = {name: cells[i].strip() for name, i in columns.items() if i < n}

    def text(self, name: str) -> str:
        return self._texts.get(name, "")

    def column(self, name: str) -> int:
        i = self.columns.get(name)
        return i + 1 if i is not None else len(self.columns) + 1

    def report(self, name: str, message: str, severity: str = "error") -> None:
        self.problems.append(
            Problem(self.path, self.line, self.column(name), self.text(name), message, severity)
        )

    def value(self, name: str, parse: Callable[[str], float], default: float | None = None,
              *, positive: bool = True) -> float | None:
        """A parsed cell, `default` when empty, None (and a problem) when wrong."""
        raw = self.text(name)
        if not raw:
            return default
        if self.decimal_comma:
            raw = _DECIMAL_COMMA.sub(".", raw)
        try:
            number = parse(raw)
        except ValueError as exc:  # ValueFormatError and anything else a parser refuses with
            self.report(name, f"{name} {exc}")
            return None
        if positive and not number > 0:
            self.report(name, f"{name} {shown(self.text(name))} must be more than 0")
            return None
        return number


def read_row(reader: RowReader) -> Part | None:
    """The Part on this line, or None when the line has an error (then reader.problems says why)."""
    kind = reader.text("kind").lower()
    if kind not in KINDS:
        what = f"kind {shown(reader.text('kind'))} is unknown" if kind else "kind is empty"
        reader.report("kind", f"{what} (expected resistor, capacitor or transistor)")
    qty_text = reader.text("qty")
    qty = int(qty_text) if _QTY.fullmatch(qty_text) else None
    if qty is None:
        what = f"qty {shown(qty_text)} is not a count" if qty_text else "qty is empty"
        reader.report("qty", f"{what} (expected a whole number, 0 or more)")
    if kind not in KINDS:
        return None
    common = dict(
        line=reader.line, kind=kind, qty=qty or 0, location=reader.text("location"),
        notes=reader.text("notes"), part=reader.text("part") or None,
    )
    fields = _transistor_fields(reader) if kind == "transistor" else _passive_fields(reader, kind)
    if any(p.is_error for p in reader.problems) or fields is None:
        return None
    return Part(**common, **fields)


def _passive_fields(r: RowReader, kind: str) -> dict | None:
    if kind == "resistor":
        parse, example, unit = values.parse_resistance, "4k7", "resistance"
    else:
        parse, example, unit = values.parse_capacitance, "100n", "capacitance"
    value = r.value("value", parse, positive=False)
    if not r.text("value"):
        r.report("value", f"value is empty (a {kind} needs its {unit}, e.g. {example})")
    elif value is not None and value < 0:
        r.report("value", f"value {shown(r.text('value'))} cannot be negative")
    tolerance = r.value("tolerance", values.parse_tolerance, DEFAULT_TOLERANCE[kind])
    if kind == "resistor":
        power = r.value("power", values.parse_power, DEFAULT_POWER_W)
        return dict(value=value, tolerance=tolerance, power_w=power)
    voltage = r.value("voltage", values.parse_voltage)
    dielectric = r.text("dielectric").lower() or None
    if dielectric is not None and dielectric not in DIELECTRICS:
        r.report("dielectric", f"dielectric {shown(r.text('dielectric'))} is unknown "
                 f"(expected one of {', '.join(DIELECTRICS)})")
    elif dielectric in ("electrolytic", "tantalum") and not r.text("voltage"):
        r.report("voltage", f"{dielectric} capacitor without a voltage rating: designs will not use "
                 "it where a rating is needed", "warning")
    return dict(value=value, tolerance=tolerance, voltage_v=voltage, dielectric=dielectric)


def _transistor_fields(r: RowReader) -> dict | None:
    polarity = r.text("polarity").upper() or None
    if polarity not in ("NPN", "PNP"):
        what = f"polarity {shown(r.text('polarity'))} is unknown" if polarity else "polarity is empty"
        r.report("polarity", f"{what} (a transistor needs NPN or PNP)")
    if r.text("value"):
        r.report("value", "value is ignored for transistors (the type goes in part)", "warning")
    hfe_min = _within_hfe(r, "hfe_min", r.value("hfe_min", values.parse_number))
    hfe_max = _within_hfe(r, "hfe_max", r.value("hfe_max", values.parse_number))
    if hfe_min is not None and hfe_max is not None and hfe_min > hfe_max:
        r.report("hfe_max", f"hfe_min {hfe_min:g} is more than hfe_max {hfe_max:g}")
    elif not r.text("hfe_min") or not r.text("hfe_max"):
        r.report("hfe_min", "no hfe_min/hfe_max: designs need the hFE spread to use this transistor",
                 "warning")
    return dict(
        value=None, polarity=polarity, hfe_min=hfe_min, hfe_max=hfe_max,
        vceo_v=_within_rating(r, "vceo", r.value("vceo", values.parse_voltage)),
        ic_max_a=_within_rating(r, "ic_max", r.value("ic_max", values.parse_current)),
        pd_max_w=_within_rating(r, "pd_max", r.value("pd_max", values.parse_power)),
    )


def _within_hfe(r: RowReader, name: str, hfe: float | None) -> float | None:
    lo, hi = HFE_LIMITS
    if hfe is not None and not lo <= hfe <= hi:
        r.report(name, f"{name} {shown(r.text(name))} is not a transistor's current gain (expected {lo:g} to "
                 f"{hi:,.0f}; small-signal parts are in the hundreds, Darlingtons in the thousands or more)")
        return None
    return hfe


def _within_rating(r: RowReader, name: str, rating: float | None) -> float | None:
    limit, spelled = RATING_LIMITS[name]
    if rating is not None and rating > limit:
        r.report(name, f"{name} {shown(r.text(name))} is beyond any single transistor's (at most {spelled}); "
                 "check the unit")
        return None
    return rating


def identity_key(identity: tuple) -> tuple:
    """Part.identity with floats rounded to 12 digits, so 4k7 and 4700 match whatever the rounding."""
    return tuple(_rounded(x) if type(x) is float else x for x in identity)


_ROUNDED: dict[float, float] = {}


def _rounded(x: float) -> float:
    """float(f"{x:.12g}"), remembered: a drawer holds the same few values on many lines."""
    r = _ROUNDED.get(x)
    if r is None:
        r = float(f"{x:.12g}")
        if len(_ROUNDED) < 65_536:
            _ROUNDED[x] = r
    return r
