"""The IEC 60063 preferred-number series E3 … E192: tables, ranges and the nearest standard value.

The tables are the standard's published values, not the rounded geometric series: E24 keeps its
irregular 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2, and E192 has 9.20 where 10**(187/192) is 9.19.
"""

from __future__ import annotations

import numpy as np

__all__ = ["SERIES", "TOLERANCE", "series_values", "neighbours", "nearest"]

# Two significant digits (×10) for E3–E24, three (×100) for E48–E192.
_E24 = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91)
_E192 = (
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124, 126,
    127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156, 158, 160,
    162, 164, 165, 167, 169, 172, 174, 176, 178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203,
    205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246, 249, 252, 255, 258,
    261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312, 316, 320, 324, 328,
    332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
    422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487, 493, 499, 505, 511, 517, 523, 530,
    536, 542, 549, 556, 562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642, 649, 657, 665, 673,
    681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856,
    866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
)
# Each coarser series is every 2nd value of the next finer one (IEC 60063 builds them so).
_INTEGERS: dict[str, tuple[np.ndarray, int]] = {
    "E3": (np.array(_E24[::8]), 1), "E6": (np.array(_E24[::4]), 1), "E12": (np.array(_E24[::2]), 1),
    "E24": (np.array(_E24), 1), "E48": (np.array(_E192[::4]), 2), "E96": (np.array(_E192[::2]), 2),
    "E192": (np.array(_E192), 2),
}


def _decade(name: str, exponent: np.ndarray) -> np.ndarray:
    """The series' values times 10**exponent, as the correctly rounded floats of "4.7e3" etc.

    exponent: integer array of shape (N,); returns shape (N, len(series)).
    One exact integer times or divided by an exact power of ten rounds once, so 4.7e-9 comes out
    bit-equal to float("4.7e-9") and to what `values.parse_capacitance("4n7")` returns.
    """
    ints, shift = _INTEGERS[name]
    e = np.asarray(exponent, dtype=np.int64)[:, None] - shift
    with np.errstate(over="ignore"):    # decades beyond 1e308 become inf and are never picked
        up = ints * 10.0 ** np.maximum(e, 0)
        down = ints / 10.0 ** np.maximum(-e, 0)
    return np.where(e >= 0, up, down)


def _table(name: str) -> np.ndarray:
    values = _decade(name, np.zeros(1, dtype=np.int64))[0]
    values.setflags(write=False)
    return values


SERIES: dict[str, np.ndarray] = {name: _table(name) for name in _INTEGERS}
"""Series name → its mantissas in [1, 10), ascending (read-only arrays)."""

TOLERANCE: dict[str, float] = {
    "E3": 0.40, "E6": 0.20, "E12": 0.10, "E24": 0.05, "E48": 0.02, "E96": 0.01, "E192": 0.005,
}
"""The tolerance each series was laid out for (fraction), as IEC 60063 pairs them (E3 is only
">20 %" there; 0.40 is the usual reading)."""


def _check_name(name: str) -> None:
    if name not in _INTEGERS:
        raise ValueError(f"unknown E-series {name!r}; known: {', '.join(_INTEGERS)}")


def _positive(value, what: str) -> np.ndarray:
    v = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(v) & (v > 0)):
        raise ValueError(f"{what} must be finite and > 0, got {value!r}")
    return v


def series_values(name: str, lo: float, hi: float) -> np.ndarray:
    """Every value of series `name` in [lo, hi] (inclusive, 1 ppt slack), ascending, any unit.

    series_values("E12", 10, 100) -> [10, 12, 15, …, 82, 100].
    """
    _check_name(name)
    lo_, hi_ = float(_positive(lo, "lo")), float(_positive(hi, "hi"))
    if lo_ > hi_:
        raise ValueError(f"lo ({lo}) is above hi ({hi})")
    first, last = int(np.floor(np.log10(lo_))) - 1, int(np.floor(np.log10(hi_))) + 1
    values = _decade(name, np.arange(first, last + 1)).ravel()
    keep = (values >= lo_ * (1 - 1e-12)) & (values <= hi_ * (1 + 1e-12))
    return values[keep]


def neighbours(value, name: str) -> tuple:
    """(below, above): the largest series value <= value and the smallest >= value.

    Both equal `value` when it is a series value (to 1 ppt).  Vectorised: arrays in, arrays out.
    """
    _check_name(name)
    v = _positive(value, "value")
    flat = v.ravel()
    exp = np.floor(np.log10(flat)).astype(np.int64)
    # Three decades around the value, so a log10 that lands a hair off still has both neighbours.
    grid = np.concatenate([_decade(name, exp + k) for k in (-1, 0, 1)], axis=1)
    col = flat[:, None]
    below = np.where(grid <= col * (1 + 1e-12), grid, -np.inf).max(axis=1)
    above = np.where(grid >= col * (1 - 1e-12), grid, np.inf).min(axis=1)
    below, above = below.reshape(v.shape), above.reshape(v.shape)
    if v.ndim == 0:
        return float(below), float(above)
    return below, above


def nearest(value, name: str):
    """The series value nearest `value` by ratio (the series are geometric), ties to the lower one.

    nearest(5000, "E12") -> 4700.0 (5000/4700 = 1.064 < 5600/5000 = 1.12).  Arrays in, arrays out.
    """
    below, above = neighbours(value, name)
    v = np.asarray(value, dtype=float)
    with np.errstate(over="ignore", divide="ignore"):   # only at the ends of the float range
        pick = np.where(v / below <= np.asarray(above) / v, below, above)
    return float(pick) if np.ndim(pick) == 0 else pick
