"""What a build sheet holds, gathered once from a saved design file for every output format.

Reads the design result document (DEVELOPERS.md, "The design result"); the only
figures computed here come from optimizer functions (meter ranges, capacitor
orientation, the deck).  Keys the document may gain later are ignored.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from pathlib import Path

from inventory.values import format_capacitance, format_resistance, format_si
from optimizer.physics.analysis import analyze
from optimizer.physics.deck import netlist_of, stage_of_design
from optimizer.physics.meter import meter_checks
from optimizer.physics.stage import Stage

from ..saved_shape import shape_problem

ORDER = ("R1", "R2", "RB", "RC", "RE", "RE1", "RE2", "CIN", "COUT", "CE", "Q1")
# A chain's second stage: its positions with the suffix _B (CIN_B the interstage capacitor), Q2.
ORDER = ORDER + tuple(p + "_B" for p in ORDER[:-1]) + ("Q2",)
SAFETY = (
    "Build with the supply off; set the bench supply's current limit low for the first power-up.",
    "Read the meter checks before connecting a source or a load.",
    "This is a low-voltage bench circuit. For anything mains-connected or above safety extra-low voltage, follow "
    "your local electrical codes and leave the work to licensed practice.",
)


class SheetInputError(Exception):
    """A saved file or --pick that cannot make a sheet; the message names the file or option."""


@dataclass
class Part:
    """One physical part of the schematic: its element name (as in the deck), value text and drawer line."""

    name: str
    value: str
    line: int


@dataclass
class Sheet:
    source: str  # the saved file's name
    pick: int
    design: dict
    spec: dict
    stage: Stage
    netlist: str
    networks: dict  # position → network node with Part leaves (series/parallel dicts)
    positive: dict  # capacitor position → circuit node of its + lead
    picks: list  # pick-list rows
    meters: list  # optimizer.physics.meter.meter_checks rows (a chain's: optimizer.chain.meter, per transistor)
    chain: object = None  # a two-stage chain's optimizer.chain.circuit.Chain (then `stage` is its first stage)
    views: tuple = ()  # a chain's stages as drawable one-stage sheets (chain_content.StageView)
    q_name: str = "Q1"  # the drawing's transistor label
    in_label: str = "in"  # the drawing's input and output terminals
    out_label: str = "out"

    @property
    def what(self) -> str:
        """"common-emitter stage", "common-emitter+emitter-follower chain"."""
        return f"{self.design['topology']} " + ("chain" if self.chain is not None else "stage")

    @property
    def title(self) -> str:
        return f"{self.what}, design {self.pick} of {self.source}"

    def positions(self) -> list[str]:
        return [p for p in ORDER if p in self.design["parts"]] + sorted(
            p for p in self.design["parts"] if p not in ORDER)


def load(path: str, pick_text: str | int = 1) -> tuple[dict, int]:
    """The saved document and the 1-based pick, or SheetInputError."""
    try:
        # utf-8-sig: a file saved again by an editor that adds a byte-order mark reads as `build` reads it
        doc = json.loads(Path(path).read_bytes().decode("utf-8-sig"))
        designs = doc["designs"]
        if not isinstance(designs, list):
            raise TypeError("designs is not a list")
    except OSError as exc:
        raise SheetInputError(f"{path}: cannot read it ({exc.strerror or exc})") from None
    except RecursionError:  # brackets nested past what the JSON reader follows
        raise SheetInputError(f"{path}: not a saved design file (nested too deeply)") from None
    except (ValueError, KeyError, TypeError) as exc:
        raise SheetInputError(f"{path}: not a saved design file (from `drawerfit design --save`): {exc}") from None
    try:
        pick = int(str(pick_text))
    except ValueError:
        raise SheetInputError(f"--pick: {pick_text!r} is not a whole number") from None
    if not designs:
        raise SheetInputError(f"{path}: holds no design (the search found none)")
    if not 1 <= pick <= len(designs):
        raise SheetInputError(f"--pick: {pick}; {path} holds {len(designs)} design(s)")
    problem = shape_problem(doc, pick)
    if problem:
        raise SheetInputError(f"{path}: {problem}")
    return doc, pick


def value_text(pos: str, part: dict) -> str:
    """RKM spelling of a position's value (the transistor's part name)."""
    if pos.startswith("Q"):
        return str(part.get("part", "?"))
    if "ohms" in part:
        return format_resistance(part["ohms"])
    return format_capacitance(part["farads"])


def _parts_tree(node: dict, pos: str, unit: str, count: list) -> dict:
    """The network with each leaf replaced by a Part named as in the deck (R1, R1_2 …)."""
    for key in ("series", "parallel"):
        if key in node:
            return {key: [_parts_tree(n, pos, unit, count) for n in node[key]]}
    count[0] += 1
    name = pos if count[0] == 1 else f"{pos}_{count[0]}"
    fmt = format_resistance if unit == "ohms" else format_capacitance
    return {"part": Part(name, fmt(node[unit]), int(node["line"]))}


def _natural(text: str):
    return [(0, int(t), "") if t.isdigit() else (1, 0, t.lower()) for t in re.findall(r"\d+|\D+", text or "")]


def pick_list(design: dict, networks: dict) -> list[dict]:
    """One row per drawer line taken, sorted by drawer location (natural order), then line."""
    rows: dict[int, dict] = {}
    locations = design.get("locations") or {}

    def add(line, part, value, pos):
        row = rows.setdefault(line, {"location": locations.get(str(line), ""), "line": line, "part": part,
                                     "value": value, "qty": 0, "positions": []})
        if pos not in row["positions"]:
            row["positions"].append(pos)

    def walk(node, pos, kind):
        if "part" in node:
            add(node["part"].line, kind, node["part"].value, pos)
        for key in ("series", "parallel"):
            for n in node.get(key, []):
                walk(n, pos, kind)

    for pos, node in networks.items():
        part = design["parts"][pos]
        kind = "resistor" if "ohms" in part else (
            f"capacitor, polarised, {part.get('voltage_v', 0):g} V" if part.get("polarised") else
            f"capacitor, {part.get('voltage_v', 0):g} V" if part.get("voltage_v") else "capacitor")
        walk(node, pos, kind)
    for pos, part in design["parts"].items():
        if pos.startswith("Q"):
            hfe = design.get("hfe_b" if pos == "Q2" else "hfe") or {}  # a chain's Q2 has its own line's spread
            what = f"transistor {part.get('part', '?')}"
            value = f"hFE {hfe['min']:g}–{hfe['max']:g}" if hfe.get("min") and hfe.get("max") else ""
            add(int(part["line"]), what, value, pos)
    qty = {int(u["line"]): int(u["qty"]) for u in design.get("uses", [])}
    for line, row in rows.items():
        row["qty"] = qty.get(line, 0)
        row["positions"] = ", ".join(row["positions"])
    return sorted(rows.values(), key=lambda r: (_natural(r["location"]) if r["location"] else [(2, 0, "")], r["line"]))


def build_sheet(doc: dict, pick: int, source: str) -> Sheet:
    design = doc["designs"][pick - 1]
    spec = doc.get("spec") or {}
    if design.get("stages"):  # a two-stage chain
        from .chain_content import build_chain_sheet

        return build_chain_sheet(design, spec, pick, source)
    try:
        stage = stage_of_design(design, spec)
        networks = {}
        for pos in design["parts"]:
            part = design["parts"][pos]
            if "network" in part:
                networks[pos] = _parts_tree(part["network"], pos, "ohms" if "ohms" in part else "farads", [0])
        report = analyze(stage)
        hfe = design.get("hfe") or {}
        corners = tuple(float(hfe[k]) for k in ("min", "typical", "max") if hfe.get(k)) or (stage.transistor.bf,)
        lo, hi = spec.get("temp_range_c") or (27.0, 27.0)
        temps = tuple(sorted({float(lo), 27.0, float(hi)}))
        meters = meter_checks(stage, corners, temps)
        netlist = netlist_of(design, spec)
    except (KeyError, TypeError, ValueError, RuntimeError, AttributeError, IndexError) as exc:
        raise SheetInputError(f"{source}: design {pick} cannot be read back ({_why(exc)})") from None
    positive = {p: c["positive_node"] for p, c in report.capacitors.items()}
    return Sheet(source, pick, design, spec, stage, netlist, networks, positive, pick_list(design, networks), meters)


def _why(exc: Exception) -> str:
    return f"missing {exc}" if isinstance(exc, KeyError) else str(exc)


def spec_line(spec: dict) -> str:
    """The request in one line, SI figures with units."""
    if not spec:
        return ""
    bits = []
    if spec.get("gain") is not None:
        bits.append(f"gain {spec['gain']:g} ±{100 * float(spec.get('gain_tol', 0)):g} %")
    vee = spec.get("negative_supply_v") or 0
    vcc = spec.get("supply_v", 0)
    bits.append(f"{vcc:g} V supply" if not vee else f"+{vcc:g} V / {vee:g} V supplies")
    for key, label, unit in (("load_ohms", "load", "Ω"), ("source_ohms", "source", "Ω")):
        if spec.get(key) is not None:
            bits.append(f"{label} {format_si(spec[key], unit)}")
    if spec.get("swing_pp") is not None:
        bits.append(f"{spec['swing_pp']:g} V p-p swing")
    if spec.get("low_cut_hz") is not None:
        bits.append(f"f_low ≤ {format_si(spec['low_cut_hz'], 'Hz')}")
    rin = spec.get("rin_floor_ohms", spec.get("min_rin_ohms"))
    if rin:
        bits.append(f"Rin ≥ {format_si(rin, 'Ω')}")
    if spec.get("temp_range_c"):
        lo, hi = spec["temp_range_c"]
        bits.append(f"{lo:g}…{hi:g} °C")
    return ", ".join(bits)


def figures(sheet: Sheet) -> list[tuple[str, str, str, str]]:
    """(figure, at hFE min, typical, at hFE max) rows of the predicted figures, spelled with units."""
    p = sheet.design.get("predicted") or {}
    at = sheet.design.get("at_hfe") or {}
    cols = [at.get("min") or {}, p, at.get("max") or {}]

    def fmt(key, d):
        v = d.get(key)
        if v is None:
            return "–"
        if key == "gain":
            return f"{v:+.3g}"
        if key == "thd":
            return f"{100 * v:.2g} %"
        unit = {"vb": "V", "ve": "V", "vc": "V", "ic": "A", "rin": "Ω", "rout": "Ω", "f_low": "Hz",
                "swing_pp": "V p-p"}[key]
        if unit == "V p-p":
            return f"{v:.3g} V p-p"
        return format_si(v, unit)

    names = (("gain", "gain (source EMF to load)"), ("rin", "input resistance"), ("rout", "output resistance"),
             ("f_low", "low cut-off f_low"), ("swing_pp", "clip-free swing"), ("thd", "THD at the asked swing"),
             ("ic", "collector current"))
    return [(label, *(fmt(key, c) for c in cols)) for key, label in names]


def yield_text(design: dict) -> str:
    y = design.get("yield")
    return "n/a" if y is None else f"{100 * y:.1f} %"
