"""The specification a design must meet, and the checks that reject nonsense."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from optimizer import kinds
from optimizer.chain.names import CHAINS
from optimizer.physics.stage import TOPOLOGIES

# Defaults a practitioner assumes without saying them (one place: the CLI and the app read these).
DEFAULT_MAX_THD = 0.01  # 1 % THD at the asked swing: a clean small-signal stage (common practice, no source)
DEFAULT_MIN_VCE_V = 1.0  # quiescent VCE headroom above saturation (common practice, no source)
RIN_FLOOR_SOURCE_RATIO = 10.0  # Rin ≥ 10 × the source resistance: < 1 dB loading (common practice, no source)
RIN_FLOOR_MIN_OHMS = 1e3  # and never below 1 kΩ (common practice, no source)
NOMINAL_C = 27.0
OPEN_LOAD_OHMS = 1e12  # "no load": the exact solver's stand-in (circuit.OPEN_LOAD_OHMS)
# How the search answers (read by the CLI and the app, so both offer the same).
PREFERENCES = ("balanced", "parts", "clean", "robust", "frugal")
DEFAULT_PREFER = "balanced"
DEFAULT_TIME_LIMIT_S = 10.0
# The anytime search stops once the preferred design (designs[0]) has not changed for this long (0: run
# to the proof or the time limit).  Chosen by measurement: tests/bench/settle.py, DEVELOPERS.md.
DEFAULT_PATIENCE_S = 0.75
DEFAULT_TOP = 5  # room for each trade-off label's design
DEFAULT_DEPTH = 2  # parts per position: single parts, series and parallel pairs


def default_rin_floor(source_ohms: float) -> float:
    """Ω: the input resistance asked for when the user names none: 10 × the source, at least 1 kΩ."""
    return max(RIN_FLOOR_SOURCE_RATIO * float(source_ohms), RIN_FLOOR_MIN_OHMS)


# `--topology any`: search every kind the request can use (optimizer/search/across.py).
ANY_TOPOLOGY = "any"


def _article(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"


@dataclass(frozen=True)
class Spec:
    """What the user asks for.  SI units: V, Ω, Hz, A, °C; swing in V peak-to-peak at the load.

    gain is a magnitude (a common-emitter design reports a negative gain);
    gain_tol a fraction of it (0.05 = ±5 %).
    """

    topology: str = "common-emitter"
    gain: float = 10.0
    gain_tol: float = 0.05
    supply_v: float = 12.0
    load_ohms: float = 22e3
    source_ohms: float = 1e3
    swing_pp: float = 1.0
    low_cut_hz: float = 100.0
    min_rin_ohms: float | None = None  # None: the default floor, see `rin_floor`
    max_supply_a: float | None = None
    temp_range_c: tuple[float, float] = (0.0, 50.0)
    max_parts_per_position: int = DEFAULT_DEPTH
    max_thd: float = DEFAULT_MAX_THD
    min_vce_v: float = DEFAULT_MIN_VCE_V
    negative_supply_v: float = 0.0  # the negative rail (V, ≤ 0); 0 = a single positive supply
    dc_input: bool = False  # the source is ground-referenced and joined to the base directly (no CIN)

    @property
    def span_v(self) -> float:
        """V from the bottom rail to the top: the supply, plus |VEE| on a split supply."""
        return self.supply_v - self.negative_supply_v

    @property
    def rin_floor(self) -> float:
        """The input resistance every design must reach (Ω): the user's, else the default floor."""
        return default_rin_floor(self.source_ohms) if self.min_rin_ohms is None else float(self.min_rin_ohms)

    @property
    def rin_floor_is_default(self) -> bool:
        return self.min_rin_ohms is None

    @property
    def temps_c(self) -> tuple[float, ...]:
        """The temperature corners (°C) every figure must hold at: both ends of the range, and 27 °C.

        27 °C (SPICE's nominal, about a bench's room) is always one: the stage is built and
        checked with a meter there, and the pruning bounds are derived there.
        """
        lo, hi = self.temp_range_c
        return tuple(sorted({float(lo), NOMINAL_C, float(hi)}))

    def problems(self) -> list[str]:
        """Every reason the spec cannot be meant, as messages naming the option.

        Besides signs and orders, figures no single small-signal stage can be asked for are refused
        here rather than searched for: NaN or infinite values, a temperature outside -55…150 °C
        (the usual rated range of small-signal parts, common practice, no source), a gain below
        0.01 (an attenuator) or above 10 000, a tolerance tighter than the solver's 0.1 % steps,
        a load or source outside 1 Ω…100 MΩ (beyond the 1 Ω…10 MΩ networks can make).  An open load
        (`--load open`: a scope probe or an ADC input; inf or the 1 TΩ stand-in) is a load the solver knows.
        """
        out = []
        open_load = self.load_ohms in (math.inf, OPEN_LOAD_OHMS)
        finite = {"--gain": self.gain, "--gain-tol": self.gain_tol, "--supply": self.supply_v,
                  "--load": 1.0 if open_load else self.load_ohms, "--source": self.source_ohms, "--swing": self.swing_pp,
                  "--low-cut": self.low_cut_hz, "--min-rin": self.min_rin_ohms, "--max-current": self.max_supply_a,
                  "--max-thd": self.max_thd, "--min-vce": self.min_vce_v,
                  "--temp-range": self.temp_range_c[0] if len(self.temp_range_c) == 2 else math.nan}
        if len(self.temp_range_c) == 2:
            finite["--temp-range "] = self.temp_range_c[1]
        for flag, x in finite.items():
            if x is not None and not (isinstance(x, (int, float)) and math.isfinite(x)):
                out.append(f"{flag.strip()}: {x!r} is not a finite number")
        if out:
            return out
        kind = kinds.get(self.topology) if self.topology in TOPOLOGIES else None
        if kind is None and self.topology != ANY_TOPOLOGY and self.topology not in CHAINS:
            out.append(f"--topology: {self.topology!r} is not one of "
                       f"{', '.join((*TOPOLOGIES, ANY_TOPOLOGY, *CHAINS))}")
        if not self.supply_v > 0:
            out.append(f"--supply: {self.supply_v:g} V; the supply must be positive")
        elif self.supply_v > 60:
            out.append(f"--supply: {self.supply_v:g} V is beyond what small-signal stages are designed for here (≤ 60 V)")
        if not self.gain > 0:
            out.append(f"--gain: {self.gain:g}; the gain is a magnitude and must be above 0")
        elif not 0.01 <= self.gain <= 1e4:
            out.append(f"--gain: {self.gain:g}; one stage gives a gain between 0.01 and 10000")
        if kind is not None and kind.max_gain is not None and self.gain > kind.max_gain:
            out.append(f"--gain: {self.gain:g}; {_article(self.topology)} {self.topology} stage's gain is below "
                       f"{kind.max_gain:g}")
        if not 0 < self.gain_tol < 1:
            out.append(f"--gain-tol: {self.gain_tol:g}; expected a fraction between 0 and 1 (0.05 = ±5 %)")
        elif self.gain_tol < 1e-3:
            out.append(f"--gain-tol: {self.gain_tol:g}; the gain is matched in 0.1 % steps, so at least 0.001")
        if not self.load_ohms > 0:
            out.append(f"--load: {self.load_ohms:g} Ω; the load must be positive")
        elif not 1.0 <= self.load_ohms <= 1e8 and not open_load:
            out.append(f"--load: {self.load_ohms:g} Ω; expected 1 Ω…100 MΩ")
        if not self.source_ohms >= 0:
            out.append(f"--source: {self.source_ohms:g} Ω; the source resistance cannot be negative")
        elif self.source_ohms > 1e8:
            out.append(f"--source: {self.source_ohms:g} Ω; expected at most 100 MΩ")
        if not self.swing_pp >= 0:
            out.append(f"--swing: {self.swing_pp:g} V; the swing cannot be negative")
        elif self.supply_v > 0 and self.swing_pp >= self.span_v:
            out.append(
                f"--swing: {self.swing_pp:g} V p-p cannot fit on a {self.span_v:g} V supply "
                "(a stage swings less than the span of its rails)"
            )
        out += self._rail_problems(kind)
        if not self.low_cut_hz > 0:
            out.append(f"--low-cut: {self.low_cut_hz:g} Hz; expected a frequency above 0")
        elif self.low_cut_hz > 1e6:
            out.append(f"--low-cut: {self.low_cut_hz:g} Hz; expected at most 1 MHz")
        if self.min_rin_ohms is not None and not self.min_rin_ohms >= 0:
            out.append(f"--min-rin: {self.min_rin_ohms:g} Ω cannot be negative")
        elif self.min_rin_ohms is not None and self.min_rin_ohms > 1e8:
            out.append(f"--min-rin: {self.min_rin_ohms:g} Ω; no divider from 1 Ω…10 MΩ parts gets near it")
        if self.max_supply_a is not None and not self.max_supply_a > 0:
            out.append(f"--max-current: {self.max_supply_a:g} A must be positive")
        lo, hi = self.temp_range_c
        if not lo <= hi:
            out.append(f"--temp-range: {lo:g}..{hi:g} °C is empty")
        elif lo < -55 or hi > 150:
            out.append(f"--temp-range: {lo:g}..{hi:g} °C; small-signal parts are rated for -55…150 °C")
        if not 0 < self.max_thd <= 1:
            out.append(f"--max-thd: {self.max_thd:g}; expected a fraction above 0 and at most 1 (0.01 or 1%)")
        if not 0 <= self.min_vce_v < max(self.span_v, 0.0):
            out.append(f"--min-vce: {self.min_vce_v:g} V; expected at least 0 and below the supply")
        if not 1 <= self.max_parts_per_position <= 3:
            out.append(f"--depth: {self.max_parts_per_position}; expected 1, 2 or 3 parts per position")
        return out

    def _rail_problems(self, kind) -> list[str]:
        """The negative rail and DC input against the kind: a split kind needs a negative rail, a
        single-rail kind refuses one; DC input is for split kinds (a ground-referenced source)."""
        out, vee = [], self.negative_supply_v
        if not (isinstance(vee, (int, float)) and math.isfinite(vee)):
            return [f"--negative-supply: {vee!r} is not a finite number"]
        if vee > 0:
            out.append(f"--negative-supply: {vee:g} V; the negative rail is below ground (e.g. -12)")
        elif vee < -60 or (vee < 0 and self.span_v > 60):  # one rail over 60 V is --supply's problem alone
            out.append(f"--negative-supply: {vee:g} V; the rails may span at most 60 V")
        if kind is None:
            return out
        split = kind.rails == 2
        if split and not vee < 0:
            out.append(f"--negative-supply: {_article(kind.name)} {kind.name} stage runs on split supplies; "
                       "give the negative rail (e.g. --negative-supply -12)")
        elif not split and vee < 0:
            out.append(f"--negative-supply: {_article(kind.name)} {kind.name} stage runs on one positive supply; "
                       f"leave the negative rail out (split-supply kinds: {', '.join(_split_kinds())})")
        if self.dc_input and not split:
            out.append(f"--dc-input: {_article(kind.name)} {kind.name} stage's base sits above ground, so a "
                       "ground-referenced source needs CIN; DC input is for split-supply kinds")
        return out


def _split_kinds() -> list[str]:
    return [n for n in kinds.names() if kinds.get(n).rails == 2]


@dataclass(frozen=True)
class Bounds(Spec):
    """A spec plus value floors the solver derives from the stock (never asked of the user), for pruning.

    The low cut-off ties each capacitor to the resistance it sees: with the other capacitors
    shorted, one capacitor C and the resistance R around it make a first-order high-pass with
    its corner at 1/(2π·R·C), and f_low falls as any capacitance grows, so f_low ≥ that corner.
    With C_max the largest capacitance on hand, every capacitor position needs R ≥ 1/(2π·f·C_max):
    CIN sees RS + Rin, COUT sees Rout + RL with Rout ≤ RC (common emitter), CE sees at most RE2.
    """

    min_rc_ohms: float = 0.0
    min_re2_ohms: float = 0.0

    @classmethod
    def of(cls, spec: Spec, c_max_f: float) -> Bounds:
        r = math.inf if not c_max_f > 0 else 1.0 / (2 * math.pi * spec.low_cut_hz * c_max_f)
        base = asdict(spec)
        # CIN's floor on Rin; a DC-coupled source has no CIN.
        base["min_rin_ohms"] = spec.rin_floor if spec.dc_input else max(spec.rin_floor, r - spec.source_ohms)
        return cls(**base, min_rc_ohms=max(0.0, r - spec.load_ohms), min_re2_ohms=r)
