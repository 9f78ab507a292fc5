"""The build sheet's circuit drawing: box-drawing characters on a character grid.

Pure text, no Textual and no physics: it draws the positions a design fills and
labels each with its part value in RKM (a series/parallel network spelled out, e.g.
``RC 4k7+220R``; the source and load, not parts, in SI: ``load 22 kΩ``).  Networks too long for the drawing are listed under it.
"""

from __future__ import annotations

from optimizer import kinds

from .sheet_text import network_text
from .widgets import figures

# Columns of the drawing (characters from the left).
X_DIV = 14       # bias divider R1/R2 (or RB)
X_BAR = 29       # transistor base bar
X_C = X_BAR + 2  # collector / emitter leads, RC and RE
X_CE = 46        # emitter bypass capacitor
X_COUT = 44      # output coupling capacitor
X_LOAD = 60      # load resistor
BASE_Y = 9       # base row; the transistor glyph sits on rows 8..10
GROUND_Y = 21
LABEL_ROOM = 13  # characters a value label may take beside its part


def position_text(entry: dict) -> str:
    """The value text (RKM) of one position of a design's ``parts`` map: ``4k7``, ``4k7+220R``."""
    return network_text(entry["network"]) if "network" in entry else figures.part_value(entry)


class Canvas:
    def __init__(self, width: int, height: int) -> None:
        self.rows = [[" "] * width for _ in range(height)]

    def put(self, x: int, y: int, text: str) -> None:
        row = self.rows[y]
        for i, ch in enumerate(text):
            if 0 <= x + i < len(row):
                row[x + i] = ch

    def hline(self, x0: int, x1: int, y: int) -> None:
        for x in range(x0, x1 + 1):
            self.put(x, y, "─")

    def vline(self, x: int, y0: int, y1: int) -> None:
        for y in range(y0, y1 + 1):
            self.put(x, y, "│")

    def resistor(self, x: int, y: int, label: str) -> None:
        """A resistor body on rows y..y+2 of column x, label to its right."""
        self.put(x - 1, y, "┌┴┐")
        self.put(x - 1, y + 1, "│ │")
        self.put(x - 1, y + 2, "└┬┘")
        self.put(x + 3, y + 1, label)

    def vcap(self, x: int, y: int, label: str, plus: bool, low: bool = False) -> None:
        """A capacitor on rows y..y+3 of column x, plates across; '+' marks the positive plate
        (the upper one, or the lower one when `low`)."""
        self.put(x, y, "│")
        self.put(x - 1, y + 1, "─┴─")
        self.put(x - 1, y + 2, "─┬─")
        self.put(x, y + 3, "│")
        if plus:
            self.put(x - 2, y + (2 if low else 1), "+")
        self.put(x + 3, y + 1, label)

    def text(self) -> str:
        return "\n".join("".join(r).rstrip() for r in self.rows)


def _label(name: str, value: str | None) -> tuple[str, bool]:
    """The in-drawing label and whether the full value had to go to the legend."""
    if value is None:
        return name, False
    text = f"{name} {value}"
    if len(text) <= LABEL_ROOM:
        return text, False
    return f"{name} *", True


def draw_stage(design: dict, *, supply_v: float | None = None, source_ohms: float | None = None,
               load_ohms: float | None = None, polarised: frozenset[str] = frozenset(),
               negative_supply_v: float | None = None, names: dict | None = None, q_name: str = "Q1",
               in_label: str = "in", out_label: str = "out", open_output: bool = False,
               in_volts: float = 0.0) -> str:
    """The stage of one design (the JSON shape) as lines of box-drawing text.

    `polarised` names the capacitor positions filled with electrolytic/tantalum
    parts; their '+' plate is drawn toward the transistor, where the DC voltage is.
    A PNP stage (Q1's "polarity") is the same drawing with the rails swapped: 0 V on
    top (R1, RC, the load), +V below (R2, the emitter chain, CE with its + toward +V).
    A chain's stage (tui/schematic_chain.py) labels its positions by `names` (position → the name on
    the sheet, R1 → R1_B), its transistor `q_name` and its terminals `in_label`, `out_label`;
    `open_output` draws the output as a bare node (no COUT, no load): the first stage of a chain;
    `in_volts` is the DC at the input node (0 V for a source; a chain's x), which sets CIN's '+' side.
    """
    topology = design.get("topology", "common-emitter")
    parts = design.get("parts", {})
    values = {pos: position_text(entry) for pos, entry in parts.items() if pos != "Q1"}
    legend: list[str] = []
    kind = kinds.get(topology)
    split = kind.rails == 2  # the emitter returns to a negative rail drawn under ground
    c = Canvas(78, GROUND_Y + (3 if split else 1))

    names = names or {}

    def label(pos: str) -> str:
        shown = names.get(pos, pos)
        text, long = _label(shown, values.get(pos))
        if long:
            legend.append(f"  * {shown} = {values[pos]}")
        return text

    rail = f"+{supply_v:g} V " if supply_v is not None else "+V "
    pnp = str(parts.get("Q1", {}).get("polarity", "")).upper() == "PNP"
    top, bottom = ("0 V ", rail) if pnp else (rail, "0 V ")
    c.put(0, 0, top)
    c.hline(len(top), X_LOAD if pnp else X_C, 0)  # a PNP stage's load returns to the 0 V on top
    c.put(0, GROUND_Y, bottom)
    c.hline(len(bottom), (X_CE if "CE" in values else X_C) if pnp else X_LOAD, GROUND_Y)

    follower = kind.output == "e"  # drawn from what the kind declares, not its name
    feedback = kind.bias == "feedback"
    # Collector: RC from the rail, or the rail straight down for a follower.
    c.put(X_C, 0, "┬" if pnp else "┐")
    if follower:
        c.vline(X_C, 1, BASE_Y - 2)
    else:
        c.resistor(X_C, 1, label("RC"))
        c.vline(X_C, 4, BASE_Y - 2)
    # Transistor glyph (NPN arrow out of the emitter; PNP drawn the same with the arrow in).
    q1 = parts.get("Q1", {})
    c.put(X_BAR, BASE_Y - 1, "│╱")
    c.put(X_BAR, BASE_Y, "┤")
    c.put(X_BAR, BASE_Y + 1, "│↖" if pnp else "│↘")
    name = f"{q_name} " + str(q1.get("part", "")) if q1.get("part") else q_name
    c.put(X_C + 2, BASE_Y - 1, "C")
    c.put(X_BAR + 3, BASE_Y, name + (f" (line {q1['line']})" if "line" in q1 else ""))
    c.put(X_C + 2, BASE_Y + 1, "E")

    # Bias: R1/R2 divider, RB from the collector for collector feedback, or RB to ground.
    if kind.bias == "ground":
        c.put(X_DIV, BASE_Y, "┬")
        c.vline(X_DIV, BASE_Y + 1, 11)
        c.resistor(X_DIV, 12, label("RB"))
        c.vline(X_DIV, 15, GROUND_Y - 1)
        c.put(X_DIV, GROUND_Y, "┴")
    elif feedback:
        c.put(X_DIV, 5, "┌")
        c.hline(X_DIV + 1, X_C - 1, 5)
        c.put(X_C, 5, "┼")
        c.resistor(X_DIV, 6, label("RB"))
        c.put(X_DIV, BASE_Y, "┴")
    else:
        c.put(X_DIV, 0, "┬")
        c.resistor(X_DIV, 1, label("R1"))
        c.vline(X_DIV, 4, BASE_Y - 1)
        c.put(X_DIV, BASE_Y, "┼")
        c.vline(X_DIV, BASE_Y + 1, 11)
        c.resistor(X_DIV, 12, label("R2"))
        c.vline(X_DIV, 15, GROUND_Y - 1)
        c.put(X_DIV, GROUND_Y, "┴")
    c.hline(X_DIV + 1, X_BAR - 1, BASE_Y)

    # Input: source, CIN, to the base node.
    c.put(0, BASE_Y, f"{in_label[:2]:<3}○─")
    c.hline(5, X_DIV - 1, BASE_Y)
    if "CIN" in parts or not split:
        # '+' by the plate on the higher side: the base, unless it rests below the input node (a chain's
        # second stage takes x, the first stage's output, which may sit above its base).
        vb = (design.get("predicted") or {}).get("vb")
        base_high = not isinstance(vb, (int, float)) or vb >= in_volts
        cin = ("┤├+" if base_high else "+┤├") if "CIN" in polarised else "┤├"
        c.put(8, BASE_Y, cin)
        c.put(5, BASE_Y - 1, label("CIN"))
    else:
        c.put(5, BASE_Y - 1, "DC-coupled")
    if source_ohms is not None:
        c.put(0, BASE_Y + 1, f"source {figures.ohms(source_ohms)}")

    # Emitter chain.
    y = BASE_Y + 2
    c.put(X_C, y, "│")
    if follower:
        out_y = y
        c.put(X_C, y, "├")
        c.resistor(X_C, y + 1, label("RE"))
        c.vline(X_C, y + 4, GROUND_Y - 1)
    else:
        out_y = 5
        if not feedback:
            c.put(X_C, out_y, "├")
        if "RE1" in values:
            c.resistor(X_C, y + 1, label("RE1"))
        else:
            c.vline(X_C, y + 1, y + 3)
        node = y + 5
        c.vline(X_C, y + 4, node)
        if "RE2" in values:
            c.resistor(X_C, node + 1, label("RE2"))
            c.vline(X_C, node + 4, GROUND_Y - 1)
        else:
            c.vline(X_C, node + 1, GROUND_Y - 1)
        if "CE" in values:
            c.put(X_C, node, "├")
            c.hline(X_C + 1, X_CE - 1, node)
            c.put(X_CE, node, "┐")
            # The lower plate is the positive one in a PNP stage (CE's + toward +V, drawn below) and
            # below ground on split supplies (VN < VE < 0, CE's + toward ground).
            ve = (design.get("predicted") or {}).get("ve")
            low = pnp or (isinstance(ve, (int, float)) and ve < 0)
            c.vcap(X_CE, node + 1, label("CE"), "CE" in polarised, low=low)
            c.vline(X_CE, node + 5, GROUND_Y - 1)
            c.put(X_CE, GROUND_Y, "┴")
    if split:  # through the ground line (no junction) down to the negative rail
        c.put(X_C, GROUND_Y, "│")
        c.vline(X_C, GROUND_Y + 1, GROUND_Y + 1)
        rail_low = f"{negative_supply_v:g} V " if negative_supply_v is not None else "-V "
        c.put(0, GROUND_Y + 2, rail_low)
        c.hline(len(rail_low), X_C - 1, GROUND_Y + 2)
        c.put(X_C, GROUND_Y + 2, "┘")
    else:
        c.put(X_C, GROUND_Y, "┴")

    # Output: COUT to the load.
    c.hline(X_C + 1, X_LOAD - 1, out_y)
    if open_output:  # a chain's first stage: its output node goes on to the next stage
        c.put(X_LOAD, out_y, f"──○ {out_label}")
        drawing = c.text()
        return drawing + ("\n" + "\n".join(legend) if legend else "")
    # An output resting below ground (split supplies) has COUT's + lead toward the load.
    v_out = (design.get("predicted") or {}).get(kind.output_key)
    below = isinstance(v_out, (int, float)) and v_out < 0
    c.put(X_COUT, out_y, ("┤├+" if below else "+┤├") if "COUT" in polarised else "┤├")
    c.put(X_COUT - 2, out_y - 1, label("COUT"))
    load = f"load {figures.ohms(load_ohms)}" if load_ohms is not None else "load"
    if pnp:  # the load goes up to the 0 V rail on top
        c.put(X_LOAD, out_y, f"┴─○ {out_label}")
        c.resistor(X_LOAD, out_y - 3, load)
        c.vline(X_LOAD, 1, out_y - 4)
        c.put(X_LOAD, 0, "┐")
    else:
        c.put(X_LOAD, out_y, f"┬─○ {out_label}")
        c.resistor(X_LOAD, out_y + 1, load)
        c.vline(X_LOAD, out_y + 4, GROUND_Y - 1)
        c.put(X_LOAD, GROUND_Y, "┘")
    drawing = c.text()
    return drawing + ("\n" + "\n".join(legend) if legend else "")
