"""The shape of a `design --save` document, checked before anything reads it.

A hand-edited file once ended `sheet` in Python's own words ("list indices must be integers
or slices, not str").  `shape_problem` walks the parts of the document the sheet, `build` and
the app read (DEVELOPERS.md, "The design result") and names the first entry of the wrong
type by its JSON path: `designs[0].parts.RC: expected an object`.  Keys it does not know are
left alone (a later drawerfit may add some).  Values are checked for type, and for the few ranges
the physics cannot take at all (a part value or hFE of 0 or below, a part value past 1e15, a load of
0 Ω); the physics
says in its own words what else it cannot build.  Null stands for absent only where the
format allows it (a yield, a voltage rating, an open load).  Headless.
"""

from __future__ import annotations

import math
import re


class ShapeError(ValueError):
    """The first entry of a saved document of the wrong type; the message is `path: expected …`."""


def _number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _whole(v) -> bool:
    return isinstance(v, int) and not isinstance(v, bool)


def _step(path: str, key) -> str:
    if isinstance(key, int):
        return f"{path}[{key}]"
    name = str(key)
    plain = re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", name)
    if not path and plain:
        return name  # a key of the document itself
    return f"{path}.{name}" if plain else f"{path}[{name[:40]!r}]"


def _need(ok: bool, path: str, what: str) -> None:
    if not ok:
        raise ShapeError(f"{path}: expected {what}")


def _object(v, path: str) -> dict:
    _need(isinstance(v, dict), path, "an object")
    return v


def _list(v, path: str) -> list:
    _need(isinstance(v, list), path, "a list")
    return v


def _optional(d: dict, key: str, path: str, check, *, nullable: bool = False) -> None:
    """Check d[key] with `check(value, path)` when it is there (a null passes only when `nullable`)."""
    if key in d and not (nullable and d[key] is None):
        check(d[key], _step(path, key))


def _positive(v) -> bool:
    return _number(v) and math.isfinite(v) and v > 0


# A part value no drawer part comes near (1e15 Ω or F); beyond it the nodal solve overflows.
PART_VALUE_MAX = 1e15


def _part_value(v) -> bool:
    return _positive(v) and v <= PART_VALUE_MAX


def _numbers(v, path: str) -> None:
    """An object whose values are numbers or null (predicted figures, score)."""
    for k, x in _object(v, path).items():
        _need(x is None or _number(x), _step(path, k), "a number or null")


def _hfe(v, path: str) -> None:
    for k, x in _object(v, path).items():
        _need(x is None or _positive(x), _step(path, k), "a number above 0 or null")


def _strings(v, path: str) -> None:
    for i, x in enumerate(_list(v, path)):
        _need(isinstance(x, str), _step(path, i), "text")


def _number_list(v, path: str) -> None:
    for i, x in enumerate(_list(v, path)):
        _need(x is None or _number(x), _step(path, i), "a number or null")


def _network(node, path: str, unit: str, depth: int = 0) -> None:
    _object(node, path)
    _need(depth < 50, path, "a network less deeply nested")
    for key in ("series", "parallel"):
        if key in node:
            members = _list(node[key], _step(path, key))
            _need(bool(members), _step(path, key), "at least one part")
            for i, n in enumerate(members):
                _network(n, _step(_step(path, key), i), unit, depth + 1)
            return
    _need(_whole(node.get("line")), _step(path, "line"), "a drawer line number")
    _need(_part_value(node.get(unit)), _step(path, unit), f"a number above 0 and up to {PART_VALUE_MAX:g} ({unit})")


def _part(v, path: str, position: str) -> None:
    part = _object(v, path)
    if position.startswith("Q"):
        _need(_whole(part.get("line")), _step(path, "line"), "a drawer line number")
        for key in ("part", "polarity"):
            _optional(part, key, path, lambda x, p: _need(isinstance(x, str), p, "text"), nullable=True)
        return
    units = [u for u in ("ohms", "farads") if u in part]
    _need(len(units) == 1, path, 'an object with "ohms" (a resistor) or "farads" (a capacitor)')
    unit = units[0]
    value = part[unit]
    _need(_part_value(value), _step(path, unit), f"a number above 0 and up to {PART_VALUE_MAX:g}")
    _optional(part, "network", path, lambda x, p: _network(x, p, unit))
    _optional(part, "polarised", path, lambda x, p: _need(isinstance(x, bool), p, "true or false"))
    _optional(part, "voltage_v", path, lambda x, p: _need(_number(x), p, "a number or null"), nullable=True)
    if part.get("polarised"):  # the pick list names a polarised capacitor's rating
        _need(_number(part.get("voltage_v")), _step(path, "voltage_v"), "a number (a polarised capacitor's rating)")


def _design(v, path: str, complete: bool) -> None:
    design = _object(v, path)
    if complete or "topology" in design:
        _need(isinstance(design.get("topology"), str), _step(path, "topology"), "the kind of stage as text")
    parts = _object(design.get("parts"), _step(path, "parts")) if complete or "parts" in design else {}
    for position, part in parts.items():
        _part(part, _step(_step(path, "parts"), position), str(position))
    # Readers take a null container as an empty one (`design.get("hfe") or {}`).
    for key in ("predicted", "score"):
        _optional(design, key, path, _numbers, nullable=True)
    for key in ("hfe", "hfe_b"):
        _optional(design, key, path, _hfe, nullable=True)
    _optional(design, "at_hfe", path, lambda x, p: [_numbers(y, _step(p, k)) for k, y in _object(x, p).items()],
              nullable=True)
    _optional(design, "uses", path, _uses)
    _optional(design, "yield", path, lambda x, p: _need(_number(x), p, "a number or null"), nullable=True)
    for key in ("warnings", "cautions", "best_for"):
        _optional(design, key, path, _strings, nullable=True)
    _optional(design, "locations", path, lambda x, p: [
        _need(isinstance(y, str), _step(p, k), "text") for k, y in _object(x, p).items()], nullable=True)
    _optional(design, "response", path, _response, nullable=True)
    _optional(design, "mc", path, _monte_carlo, nullable=True)
    _optional(design, "corners", path, lambda x, p: [_corner(y, _step(p, k)) for k, y in _object(x, p).items()],
              nullable=True)
    _optional(design, "netlist", path, lambda x, p: _need(isinstance(x, str), p, "text"), nullable=True)
    _optional(design, "stages", path, lambda x, p: [_stage(s, _step(p, i), parts) for i, s in enumerate(_list(x, p))],
              nullable=True)
    if design.get("stages"):  # a chain's sheet runs its own deck
        _need(isinstance(design.get("netlist"), str), _step(path, "netlist"), "the chain's netlist as text")


def _uses(v, path: str) -> None:
    for i, u in enumerate(_list(v, path)):
        use = _object(u, _step(path, i))
        for key in ("line", "qty"):
            _need(_whole(use.get(key)), _step(_step(path, i), key), "a whole number")


def _response(v, path: str) -> None:
    for key in ("freq_hz", "gain_db"):
        _optional(_object(v, path), key, path, _number_list)


def _monte_carlo(v, path: str) -> None:
    mc = _object(v, path)
    _optional(mc, "gain", path, _number_list)
    for key in ("n", "seed"):
        _optional(mc, key, path, lambda x, p: _need(_whole(x), p, "a whole number"))


def _corner(v, path: str) -> None:
    for k, x in _object(v, path).items():
        _need(x is None or _number(x) or isinstance(x, str), _step(path, k), "a number, text or null")


def _stage(v, path: str, parts: dict) -> None:
    stage = _object(v, path)
    _need(isinstance(stage.get("kind"), str), _step(path, "kind"), "the kind of stage as text")
    positions = _list(stage.get("positions"), _step(path, "positions"))
    for i, pos in enumerate(positions):
        _need(isinstance(pos, str) and pos in parts, _step(_step(path, "positions"), i), 'a position named in "parts"')
    _optional(stage, "predicted", path, _numbers)


# The request's figures: (key, may be null, lowest value the physics takes or None, spelled).
_SPEC_NUMBERS = (
    ("gain", True, None, ""), ("gain_tol", False, 0.0, "0"), ("supply_v", False, None, ""),
    ("load_ohms", True, 1e-3, "1 mΩ"), ("source_ohms", False, 0.0, "0 Ω"), ("swing_pp", False, 0.0, "0 V"),
    ("low_cut_hz", False, 0.0, "0 Hz"), ("min_rin_ohms", True, 0.0, "0 Ω"), ("max_supply_a", True, 0.0, "0 A"),
    ("max_thd", False, 0.0, "0"), ("min_vce_v", False, None, ""), ("negative_supply_v", False, None, ""),
    ("rin_floor_ohms", True, 0.0, "0 Ω"),
)


def _spec(v, path: str, needs_supply: bool) -> None:
    spec = _object(v, path)
    if needs_supply:  # every design is rebuilt on the saved supply
        _need(_positive(spec.get("supply_v")), _step(path, "supply_v"), "a number above 0 (the supply voltage)")
    for key, nullable, low, spelled in _SPEC_NUMBERS:
        what = "a number" + (f" of {spelled} or more" if low is not None else "") + (" or null" if nullable else "")
        _optional(spec, key, path, lambda x, p, low=low, what=what: _need(
            _number(x) and math.isfinite(x) and (low is None or x >= low), p, what), nullable=nullable)
    _optional(spec, "temp_range_c", path, lambda x, p: _need(
        isinstance(x, list) and len(x) == 2 and all(_number(t) and -273.15 < t < 1000 for t in x), p,
        "[low, high] in °C"), nullable=True)
    for key in ("dc_input", "rin_floor_is_default"):
        _optional(spec, key, path, lambda x, p: _need(isinstance(x, bool), p, "true or false"))


def shape_problem(doc, pick: int | None = None, *, complete: bool = True) -> str | None:
    """None when `doc` has the shape a saved design file has, else `path: expected …` for its first bad entry.

    `pick` (1-based) checks only that design (and the document around it); None checks every design.
    `complete=False` (what `build` needs: the uses) checks the entries that are there and asks for no
    other (the parts, the request).
    """
    try:
        _object(doc, "the file")
        designs = _list(doc.get("designs"), "designs")
        chosen = range(len(designs)) if pick is None else [pick - 1] if 1 <= pick <= len(designs) else []
        for i in chosen:
            _design(designs[i], _step("designs", i), complete)
        needs_spec = bool(chosen) and complete
        _optional(doc, "spec", "", lambda x, p: _spec(x, p, needs_spec))
        if needs_spec and doc.get("spec") is None:
            raise ShapeError('spec: expected an object (the request, with "supply_v")')
        _optional(doc, "why", "", _strings)
        _optional(doc, "hints", "", lambda x, p: [_object(h, _step(p, i)) for i, h in enumerate(_list(x, p))])
        _optional(doc, "inventory", "", lambda x, p: _need(isinstance(x, str), p, "a file name"), nullable=True)
    except ShapeError as exc:
        return str(exc)
    except RecursionError:
        return "nested too deeply"
    return None
