"""A checker of the design-netlist contract (README "The netlist of a design"), rule by rule.

`lint(deck, positions)` returns one message per broken rule (empty when the deck keeps
the contract).  It is written from the contract's text, not from optimizer/physics/deck.py, and
tests/test_deck.py shows it catching a deck broken in each way.  SPICE facts it relies on
(from the ngspice manual): the first line is the title; names are case-insensitive, so a
value's `M` suffix means milli and `meg` mega; a letter after a number is read as a scale
suffix, so RKM `4k7` reads as 4k; `;` starts an end-of-line comment.
"""

from __future__ import annotations

import re

NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?(meg|k|m|u|n|p)?$", re.IGNORECASE)
ALLOWED_DOT = (".model", ".end")
GROUND_ALIASES = {"gnd", "ground", "agnd", "vss"}
SUPPLY = re.compile(r"^(VCC) vcc 0 DC (\S+)$|^(VEE) vee 0 DC (\S+)$")
LINE_TAG = re.compile(r"^(?P<body>.*?)\s*;\s*line\s+(?P<line>\d+)\s*$")
ELEMENT_FIELDS = {"R": 4, "C": 4, "Q": 5}


def _value_problem(text: str) -> str | None:
    if NUMBER.match(text) is None:
        if re.match(r"^\d+[kKmMrRuUnNpP]\d+$", text):
            return f"value {text!r} is RKM; SPICE would misread it"
        return f"value {text!r} is not a SPICE number (plain, exponent or k, meg, m, u, n, p)"
    if text.endswith("M"):
        return f"value {text!r} uses M, which SPICE reads as milli; mega is meg"
    return None


def _position_of(name: str, positions) -> str | None:
    """The position an element name starts with: the name itself or NAME_k (k ≥ 2)."""
    for pos in sorted(positions, key=len, reverse=True):
        if name == pos:
            return pos
        m = re.fullmatch(re.escape(pos) + r"_(\d+)", name)
        if m and int(m.group(1)) >= 2:
            return pos
    return None


def lint(deck: str, positions) -> list[str]:
    """Every way `deck` breaks the contract; `positions` are the design's position names (R1, CIN, Q1 …)."""
    problems = []
    lines = deck.split("\n")
    if not lines or not lines[0].strip():
        problems.append("first line: the title is missing")
    elif re.match(r"^[RCQVIEFGHLXBKJMDS]\w*\s+\S+\s+\S+", lines[0]) or lines[0].startswith("."):
        problems.append(f"first line: {lines[0]!r} is an element or command, not a title (SPICE drops it)")
    body = [(i + 1, ln.strip()) for i, ln in enumerate(lines[1:], 1) if ln.strip() and not ln.strip().startswith("*")]
    if not body or body[-1][1].lower() != ".end":
        problems.append("the deck does not end with .end")
    names, nodes, supplies = set(), set(), []
    for n, text in body:
        low = text.lower()
        if text.startswith("+"):
            problems.append(f"line {n}: continuation lines are not part of the contract")
            continue
        if text.startswith("."):
            word = low.split()[0]
            if word not in ALLOWED_DOT:
                problems.append(f"line {n}: {word} is not allowed (only .model and .end)")
            continue
        kind = text[0].upper()
        if kind == "V":
            m = SUPPLY.match(text.split(";")[0].strip())
            if m is None:
                problems.append(f"line {n}: {text!r} is not a supply (VCC vcc 0 DC <V> or VEE vee 0 DC <-V>)")
                continue
            volts = m.group(2) or m.group(4)
            bad = _value_problem(volts)
            if bad:
                problems.append(f"line {n}: {bad}")
            elif (m.group(3) is not None) == (not volts.startswith("-")):
                problems.append(f"line {n}: the supply {text.split()[0]} has the wrong sign")
            supplies.append(text.split()[0])
            nodes.update(text.split()[1:3])
            continue
        if kind not in ELEMENT_FIELDS:
            problems.append(f"line {n}: element {text.split()[0]!r} is not a resistor, capacitor or transistor")
            continue
        tag = LINE_TAG.match(text)
        if tag is None:
            problems.append(f"line {n}: {text.split()[0]} does not end with '; line N'")
            fields = text.split(";")[0].split()
        else:
            fields = tag.group("body").split()
        name = fields[0]
        if name.upper() in names:
            problems.append(f"line {n}: {name} is named twice")
        names.add(name.upper())
        if _position_of(name, positions) is None:
            problems.append(f"line {n}: {name} does not start with a position name ({', '.join(sorted(positions))})")
        if len(fields) != ELEMENT_FIELDS[kind]:
            problems.append(f"line {n}: {name} has {len(fields)} fields; expected {ELEMENT_FIELDS[kind]}")
            continue
        ends = fields[1:3] if kind != "Q" else fields[1:4]
        nodes.update(ends)
        if kind != "Q":
            bad = _value_problem(fields[3])
            if bad:
                problems.append(f"line {n}: {name}: {bad}")
    for node in nodes:
        if node.lower() in GROUND_ALIASES:
            problems.append(f"node {node!r} is a ground alias; ground is 0")
    if "VCC" not in supplies:
        problems.append("no VCC supply")
    for needed in ("in", "out", "0"):
        if needed not in nodes:
            problems.append(f"node {needed!r} is missing (the source attaches at in, the load from out to 0)")
    return problems
