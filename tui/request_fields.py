"""The design request's fields: one list, with one set of defaults, for the app's form and the CLI.

Every default is read from the solver's own definitions (`optimizer.spec.Spec` field
defaults and constants, `optimizer.search.select`'s preference and time limit), spelled as a user
would type it.  Each field knows its CLI option, its parser and, for the form, its label and
a one-line hint.  Headless: no Textual here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, fields

from inventory import values
from optimizer.spec import (
    ANY_TOPOLOGY,
    DEFAULT_PATIENCE_S,
    DEFAULT_PREFER,
    DEFAULT_TIME_LIMIT_S,
    DEFAULT_TOP,
    PREFERENCES,
    RIN_FLOOR_MIN_OHMS,
    RIN_FLOOR_SOURCE_RATIO,
    Spec,
    default_rin_floor,
)
from optimizer import kinds
from optimizer.chain.names import CHAINS
from optimizer.physics.stage import TOPOLOGIES

SPEC_DEFAULTS = Spec()


def preset_gain(topology) -> float | None:
    """The gain a request asks of a kind whose gain is set by nature (a follower's), else None."""
    return kinds.get(topology).preset_gain if topology in TOPOLOGIES else None


PREFER_WORDS = {"balanced": "balanced", "parts": "fewest parts", "clean": "cleanest (least THD)",
                "robust": "most robust (widest margin)", "frugal": "least supply current"}


class FieldError(ValueError):
    """Bad text in one field; the message says what was expected."""


def parse_hz(text: str) -> float:
    """A frequency in Hz from ``30``, ``30Hz``, ``1.8k``, ``1.8 kHz``."""
    s = text.strip()
    if s.lower().endswith("hz"):
        s = s[:-2].strip()
    try:
        return values.parse_number(s)
    except values.ValueFormatError:
        pass
    try:
        return values.parse_resistance(s)  # the same SI/RKM spelling: 1k8, 1.8k
    except values.ValueFormatError:
        raise FieldError(f'"{text}" is not a frequency (expected e.g. 30, 30Hz, 1.8k)') from None


def parse_gain(text: str) -> float:
    """A gain magnitude: ``10``, ``-10``, ``10x``."""
    try:
        return values.parse_number(text.strip().lstrip("-").rstrip("xX×").strip())
    except values.ValueFormatError:
        raise FieldError(f'"{text}" is not a gain (expected e.g. 10)') from None


def parse_fraction(text: str) -> float:
    """A share as a fraction: ``5%`` or ``0.05``.  A bare number must be below 1."""
    s = text.strip()
    try:
        v = values.parse_number(s[:-1].strip()) / 100 if s.endswith("%") else values.parse_number(s)
    except values.ValueFormatError:
        v = math.nan
    if not 0 <= v < 1:
        raise FieldError(f'"{text}" is not a share (expected a fraction such as 0.05, or 5%)')
    return v


def parse_negative_voltage(text: str) -> float:
    """The negative rail of a split supply: ``-12``, ``−12 V``, ``-6V3``; ``0`` = a single supply."""
    s = text.strip().replace("\u2212", "-")
    body = s[1:].strip() if s.startswith("-") else s
    try:
        v = values.parse_voltage(body)
    except values.ValueFormatError:
        try:  # a voltage must be above 0; "0" / "0 V" here says "no negative rail"
            v = values.parse_number(body.rstrip("Vv").strip())
        except values.ValueFormatError:
            v = math.nan
    if not v == 0 and not (v > 0 and math.isfinite(v)):
        raise FieldError(f'"{text}" is not a negative rail (expected e.g. -12, or 0 for one supply)') from None
    if v != 0 and not s.startswith("-"):
        raise FieldError(f'"{text}": the negative rail is below ground; write it with its sign, e.g. -{text.strip()}')
    return -v if v else 0.0


def parse_min_vce(text: str) -> float:
    """The least VCE asked for, volts: a voltage (``1``, ``0.5V``, ``500mV``), or ``0``/``0 V``: no headroom
    asked (README: ``--min-vce 0``), which values.parse_voltage refuses as no voltage at all."""
    try:
        return values.parse_voltage(text)
    except values.ValueFormatError as exc:
        try:
            zero = values.parse_number(text.strip().rstrip("Vv").strip()) == 0
        except values.ValueFormatError:
            zero = False
        if zero:
            return 0.0
        raise FieldError(str(exc)) from None


def rails_shorthand(supply_text: str, negative_text: str | None) -> tuple[str, str | None]:
    """``--supply ±12`` (or ``+-12``) is ``--supply 12 --negative-supply -12``; an explicit negative
    rail wins.  Returns the (supply, negative rail) texts."""
    s = str(supply_text).strip()
    for mark in ("±", "+-", "+/-"):
        if s.startswith(mark):
            body = s[len(mark):].strip()
            given = negative_text is not None and str(negative_text).strip() not in ("", "0", "0 V", "0V")
            return body, (negative_text if given else f"-{body}")
    return s, negative_text


def parse_yes_no(text: str) -> bool:
    """``yes``/``no`` (also ``y``, ``n``, ``true``, ``false``, ``1``, ``0``)."""
    s = text.strip().lower()
    if s in ("yes", "y", "true", "1", "on"):
        return True
    if s in ("no", "n", "false", "0", "off", ""):
        return False
    raise FieldError(f'"{text}" is not yes or no')


def parse_seconds(text: str) -> float:
    s = text.strip().removesuffix("s").strip()
    try:
        v = values.parse_number(s)
    except values.ValueFormatError:
        v = math.nan
    if not 0 < v <= 3600:
        raise FieldError(f'"{text}" is not a time limit (expected seconds, 0 < t ≤ 3600, e.g. 10)')
    return v


def parse_patience(text: str) -> float:
    """Seconds the designs may go unchanged before the search stops; 0 = off."""
    s = text.strip().removesuffix("s").strip()
    try:
        v = values.parse_number(s)
    except values.ValueFormatError:
        v = math.nan
    if not 0 <= v <= 3600:
        raise FieldError(f'"{text}" is not a patience (expected seconds, 0 = off … 3600, e.g. 2)')
    return v


def parse_count(text: str) -> int:
    s = text.strip()
    if not s.isdigit() or not 1 <= int(s) <= 20:
        raise FieldError(f'"{text}" is not a number of designs (expected a whole number 1..20)')
    return int(s)


def parse_temp_range(text: str) -> tuple[float, float]:
    """``0..50`` (°C) → (0.0, 50.0)."""
    parts = text.replace("°C", "").replace("C", "").split("..")
    try:
        lo, hi = (float(p) for p in parts)
    except ValueError:
        raise FieldError(f'"{text}" is not a temperature range (expected LO..HI in °C, e.g. 0..50)') from None
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo < -273.15:
        raise FieldError(f'"{text}" is not a temperature range (expected LO..HI in °C, e.g. 0..50)')
    return lo, hi


def _value_error(parse: Callable[[str], float]) -> Callable[[str], float]:
    """A values parser whose ValueFormatError becomes a FieldError with the same message."""
    def run(text: str) -> float:
        try:
            return parse(text)
        except values.ValueFormatError as exc:
            raise FieldError(str(exc)) from None
    return run


@dataclass(frozen=True)
class Field:
    name: str                       # key; the form's widget ids are r-NAME (input) and m-NAME (note)
    label: str
    option: str                     # the CLI option (and the name Spec.problems() uses)
    target: str                     # Spec field, or a find_designs keyword for the search options
    parse: Callable[[str], object]
    default: str                    # the default as typed; "" = not set
    hint: str
    group: str
    blank: str = ""                 # what an empty field means, shown in the empty box


def _spec(name: str):
    return getattr(SPEC_DEFAULTS, name)


def _si(value, unit: str) -> str:
    return values.format_si(value, unit)


_RIN_RULE = f"empty: {RIN_FLOOR_SOURCE_RATIO:g} × the source, at least {_si(RIN_FLOOR_MIN_OHMS, 'Ω')}"
_resistance, _voltage = _value_error(values.parse_resistance), _value_error(values.parse_voltage)

FIELDS: tuple[Field, ...] = (
    Field("gain", "Gain", "--gain", "gain", parse_gain, f"{_spec('gain'):g}", "voltage gain, magnitude", "stage"),
    Field("gain_tol", "Gain tolerance", "--gain-tol", "gain_tol", parse_fraction, f"{_spec('gain_tol') * 100:g}%",
          "± around it", "stage"),
    Field("supply", "Supply", "--supply", "supply_v", _voltage, _si(_spec("supply_v"), "V"), "the positive rail",
          "stage"),
    Field("negative_supply", "Negative rail", "--negative-supply", "negative_supply_v", parse_negative_voltage,
          "0 V", "split-supply kinds: e.g. -12; 0 = none", "stage"),
    Field("dc_input", "DC input", "--dc-input", "dc_input", parse_yes_no, "no",
          "yes: source to the base, no CIN (split)", "stage"),
    Field("load", "Load", "--load", "load_ohms", _resistance, _si(_spec("load_ohms"), "Ω"),
          "what the output drives", "stage"),
    Field("source", "Source", "--source", "source_ohms", _resistance, _si(_spec("source_ohms"), "Ω"),
          "resistance of what drives the input", "stage"),
    Field("swing", "Swing", "--swing", "swing_pp", _voltage, _si(_spec("swing_pp"), "V"),
          "V peak-to-peak at the load, clip-free", "stage"),
    Field("low_cut", "Low cut-off", "--low-cut", "low_cut_hz", parse_hz, _si(_spec("low_cut_hz"), "Hz"),
          "lowest frequency, -3 dB", "stage"),
    Field("min_rin", "Minimum Rin", "--min-rin", "min_rin_ohms", _resistance, "", _RIN_RULE, "stage",
          "default floor"),
    Field("max_thd", "Max distortion", "--max-thd", "max_thd", parse_fraction, f"{_spec('max_thd') * 100:g}%",
          "THD at the swing", "limits"),
    Field("min_vce", "Min VCE", "--min-vce", "min_vce_v", parse_min_vce, _si(_spec("min_vce_v"), "V"),
          "headroom above saturation", "limits"),
    Field("max_current", "Max current", "--max-current", "max_supply_a", _value_error(values.parse_current), "",
          "supply current", "limits", "no limit"),
    Field("temp_range", "Temperature", "--temp-range", "temp_range_c", parse_temp_range,
          "{:g}..{:g}".format(*_spec("temp_range_c")), "°C, LO..HI; must hold at both ends", "limits"),
    Field("min_yield", "Min yield", "--min-yield", "min_yield", parse_fraction, "",
          "share of simulated builds that meet it all", "limits", "any"),
    Field("top", "Designs", "--top", "top", parse_count, str(DEFAULT_TOP), "how many to show", "search"),
    Field("time_limit", "Time limit", "--time-limit", "time_limit_s", parse_seconds,
          f"{DEFAULT_TIME_LIMIT_S:g} s", "then the best found so far", "search"),
    Field("patience", "Patience", "--patience", "patience_s", parse_patience, f"{DEFAULT_PATIENCE_S:g} s",
          "stop once the designs stop changing this long; 0 = off", "search"),
)
BY_NAME = {f.name: f for f in FIELDS}
SPEC_FIELDS = {f.name for f in fields(Spec)}
OPTIONAL = {f.name for f in FIELDS if f.default == ""}
GROUPS = (("stage", "The stage"), ("limits", "Limits"), ("search", "Search"))

# The choice fields (the form shows them as lists).
# The two-stage chains (optimizer/chain) are not in the form yet: the Stage list is in the request
# snapshots; a saved chain opens in the app all the same.
TOPOLOGY_CHOICES = ((("any kind that fits", ANY_TOPOLOGY),) + tuple((t, t) for t in TOPOLOGIES)
                    + tuple((f"{c} (two stages)", c) for c in CHAINS))
DEPTH_CHOICES = (("1 part per position", 1), ("up to 2 in series/parallel", 2), ("up to 3 in series/parallel", 3))
PREFER_CHOICES = tuple((f"{PREFER_WORDS.get(p, p)} first", p) for p in PREFERENCES)
CHOICE_DEFAULTS = {"topology": _spec("topology"), "depth": _spec("max_parts_per_position"), "prefer": DEFAULT_PREFER}


# The app's form starts on every kind (`any`); the request's own default (Spec, and the CLI for
# scripts) stays one kind, so a script's output does not change kind under it.
APP_CHOICES = {**CHOICE_DEFAULTS, "topology": ANY_TOPOLOGY}


def rin_floor_text(source_text: str) -> str:
    """The default Rin floor for the typed source, in words: "empty: 10 × the source, at least 1 kΩ: 10 kΩ"."""
    try:
        source = values.parse_resistance(source_text)
    except values.ValueFormatError:
        return _RIN_RULE
    return f"{_RIN_RULE}: {_si(default_rin_floor(source), 'Ω')}"


def build_request(texts: dict[str, str], choices: dict[str, object]) -> tuple[Spec | None, dict, dict[str, str]]:
    """(Spec or None, find_designs keywords, problems by field name; "" = the whole request).

    `texts`: field name → typed text; `choices`: topology, depth, prefer.
    """
    problems: dict[str, str] = {}
    spec_kw: dict[str, object] = {"topology": choices.get("topology", CHOICE_DEFAULTS["topology"]),
                                  "max_parts_per_position": int(choices.get("depth", CHOICE_DEFAULTS["depth"]))}
    search_kw: dict[str, object] = {"prefer": choices.get("prefer", CHOICE_DEFAULTS["prefer"])}
    preset = preset_gain(spec_kw["topology"])
    for f in FIELDS:
        text = texts.get(f.name, f.default)
        if preset is not None and f.name == "gain":
            value: object = preset
        elif text.strip() == "" and f.name in OPTIONAL:
            value = None
        else:
            try:
                value = f.parse(text)
            except ValueError as exc:
                problems[f.name] = str(exc)
                continue
        (spec_kw if f.target in SPEC_FIELDS else search_kw)[f.target] = value
    search_kw["depth"] = spec_kw["max_parts_per_position"]
    if problems:
        return None, search_kw, problems
    spec = Spec(**spec_kw)
    by_option = {f.option: f.name for f in FIELDS}
    found = spec.problems()
    for problem in found:
        option, _, text = problem.partition(": ")
        name = by_option.get(option, "")
        if preset is not None and name == "gain":
            name = ""
        problems[name] = f"{problems[name]}; {text}" if name in problems else (text if name else problem)
    return (None if problems else spec), search_kw, problems


def add_arguments(parser) -> None:
    """Add every request option to an argparse (sub)parser, with the form's defaults and hints.

    Values stay text; `from_arguments` parses them with the same parsers as the form.
    """
    parser.add_argument("--topology", default=CHOICE_DEFAULTS["topology"], choices=[t for t, _ in TOPOLOGY_CHOICES])
    for f in FIELDS:
        if f.name == "min_rin":
            text = f"input resistance at least (default: {_RIN_RULE.removeprefix('empty: ')})"
        else:
            text = f"{f.hint} (default {f.default or f.blank or 'none'})"
        parser.add_argument(f.option, dest=f.name, default=f.default, metavar=f.name.upper(),
                            help=f"{f.label}: {text}".replace("%", "%%"))
    parser.add_argument("--depth", default=str(CHOICE_DEFAULTS["depth"]), choices=["1", "2", "3"],
                        help=f"most parts per position (default {CHOICE_DEFAULTS['depth']})")
    parser.add_argument("--prefer", default=CHOICE_DEFAULTS["prefer"], choices=[p for _, p in PREFER_CHOICES],
                        help="which design comes first: " + ", ".join(f"{p} = {w}" for p, w in PREFER_WORDS.items())
                        + f" (default {CHOICE_DEFAULTS['prefer']})")


def from_arguments(args) -> tuple[Spec | None, dict, dict[str, str]]:
    """`build_request` over parsed arguments; problems are keyed by field name (option: `BY_NAME[k].option`)."""
    texts = {f.name: str(getattr(args, f.name)) for f in FIELDS}
    choices = {"topology": args.topology, "depth": int(args.depth), "prefer": args.prefer}
    return build_request(texts, choices)
