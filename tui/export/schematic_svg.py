"""The schematic of a design, drawn with schemdraw as SVG: every part labelled with its name and RKM value.

Networks are drawn as their parts: a series network as parts in a row along the
position's branch, a parallel one as side-by-side branches.  The layout is sized
from the networks (a branch gets as much room as its longest chain), so nothing
overlaps however a position is made up.  Drawing only: values come from the sheet.
"""

from __future__ import annotations

import schemdraw
import schemdraw.elements as elm

from optimizer import kinds

from .content import Sheet
from .visible import visible

LEAF = 2.2  # drawing units along a vertical branch per part
LEAF_H = 3.4  # along a horizontal branch (its labels sit in line: "RB_2 100k")
GAP_V = 2.4  # between side-by-side branches of a vertical network (room for a two-line label)
GAP_H = 2.0  # between stacked branches of a horizontal network
LEAD = 0.5  # wire from a network's end to where its branches split
FONT = 11


def length(node: dict) -> int:
    if "series" in node:
        return sum(length(n) for n in node["series"])
    if "parallel" in node:
        return max(length(n) for n in node["parallel"])
    return 1


def width(node: dict) -> int:
    if "series" in node:
        return max(width(n) for n in node["series"])
    if "parallel" in node:
        return sum(width(n) for n in node["parallel"])
    return 1


def extent(node: dict | None, leaf: float = LEAF) -> float:
    """Room (units) a network needs along its branch."""
    if node is None:
        return 0.0
    return length(node) * leaf + (2 * LEAD if "parallel" in node else 0.0)


class Drawer:
    """Draws networks between two points on one schemdraw Drawing."""

    def __init__(self, d: schemdraw.Drawing, sheet: Sheet):
        self.d = d
        self.sheet = sheet

    def wire(self, a, b):
        if a != b:
            self.d.add(elm.Line().endpoints(a, b))

    def net(self, pos: str, a, b, side: int = 1, plus_at_a: bool = True):
        """The network of `pos` from point a to point b (axis-aligned); side +1 puts parallel branches
        right of a vertical network and above a horizontal one, −1 the other way."""
        node = self.sheet.networks.get(pos)
        if node is None:
            self.wire(a, b)
            return
        polar = bool(self.sheet.design["parts"][pos].get("polarised"))
        self._draw(node, a, b, side, polar, plus_at_a)

    def _draw(self, node, a, b, side, polar, plus_at_a):
        vertical = a[0] == b[0]
        if "part" in node:
            part = node["part"]
            if part.name.startswith("C"):
                e = elm.Capacitor(polar=polar)
                e.endpoints(a, b) if plus_at_a or not polar else e.endpoints(b, a)
            else:
                e = elm.Resistor().endpoints(a, b)
            self.d.add(e)
            mid = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
            if vertical:
                self.d.add(elm.Label().at((mid[0] + 0.45, mid[1])).label(
                    f"{part.name}\n{part.value}", halign="left", fontsize=FONT))
            else:
                self.d.add(elm.Label().at((mid[0], mid[1] + 0.75 * side if side < 0 else mid[1] + 0.55)).label(
                    f"{part.name} {part.value}", fontsize=FONT))
            return
        ax = (0.0, -1.0 if b[1] < a[1] else 1.0) if vertical else (1.0 if b[0] > a[0] else -1.0, 0.0)
        if "series" in node:
            total = sum(length(n) for n in node["series"])
            start = a
            for n in node["series"]:
                frac = length(n) / total
                end = (start[0] + (b[0] - a[0]) * frac, start[1] + (b[1] - a[1]) * frac)
                self._draw(n, start, end, side, polar, plus_at_a)
                start = end
            return
        j1 = (a[0] + ax[0] * LEAD, a[1] + ax[1] * LEAD)
        j2 = (b[0] - ax[0] * LEAD, b[1] - ax[1] * LEAD)
        self.wire(a, j1)
        self.wire(j2, b)
        offset = 0.0
        for n in node["parallel"]:
            gap = GAP_V if vertical else GAP_H
            off = (side * offset * gap, 0.0) if vertical else (0.0, side * offset * gap)
            p1, p2 = (j1[0] + off[0], j1[1] + off[1]), (j2[0] + off[0], j2[1] + off[1])
            self.wire(j1, p1)
            self.wire(j2, p2)
            self._draw(n, p1, p2, side, polar, plus_at_a)
            if offset:
                self.d.add(elm.Dot(radius=0.08).at(j1))
                self.d.add(elm.Dot(radius=0.08).at(j2))
            offset += width(n)


def _plain(text: object) -> str:
    """A label from the drawer file (a transistor's part cell) as schemdraw draws it literally: schemdraw
    parses label text as SVG markup with $…$ math, so a bare & is refused and $ starts math.  & is escaped
    (schemdraw escapes < and > itself), $ becomes the fullwidth ＄, text-direction controls are shown
    (export/visible.py) and other control characters left out."""
    shown = "".join(c for c in visible(str(text)) if c.isprintable())
    return shown.replace("&", "&amp;").replace("$", "\uff04")


def side_room(node: dict | None, gap: float) -> float:
    return 0.0 if node is None else (width(node) - 1) * gap


def schematic(sheet: Sheet, joined: str | None = None) -> schemdraw.Drawing:
    """The schemdraw Drawing of the design (common emitter, emitter follower or collector feedback).

    joined: "out" (a chain's first stage: its output is a node wired on, not a terminal) or "in" (the
    second stage: its input is that wire's end)."""
    schemdraw.use("svg")
    d = schemdraw.Drawing(show=False, fontsize=FONT, lw=1.4)
    dr = Drawer(d, sheet)
    n = sheet.networks
    topo = sheet.design["topology"]
    kind = kinds.get(topo)
    follower = kind.output == "e"  # drawn from what the kind declares, not its name
    feedback = kind.bias == "feedback"
    grounded = kind.bias == "ground"  # RB returns the base to ground
    split = kind.rails == 2  # the emitter chain ends on the negative rail (the bottom line)
    plus = sheet.positive  # capacitor position → circuit node of its + lead

    # Columns: base (xb), transistor (base lead at xq), collector/emitter (xc).
    xb = 0.0
    if feedback:
        xq = xb + max(1.6, extent(n.get("RB"), LEAF_H) + 0.2)
    else:
        xq = xb + 2.8 + max(side_room(n.get(p), GAP_V) for p in ("R1", "R2", "RB"))
    xc = xq + 0.75
    # Heights from the bottom rail (0) up: emitter chain, then the transistor, then the top.
    emit_names = ("RE",) if follower else ("RE1", "RE2")
    chain = [p for p in emit_names if p in n]
    re2_len = max(extent(n.get("RE2")), extent(n.get("CE"))) if "RE2" in n else 0.0
    emit_len = extent(n.get("RE")) if follower else extent(n.get("RE1")) + re2_len
    ye = max(emit_len, 1.0 if chain else 0.0) + (1.0 if follower else 0.0)
    yb = max(ye + 0.7, extent(n.get("R2" if not grounded else "RB")) + (0.6 if not grounded else 1.2)) \
        if not feedback else ye + 0.7
    ycoll = yb + 0.7
    yk = ycoll + 0.6  # where COUT leaves the collector node
    yr = yk + (0.6 if not follower else 0.0)  # bottom of RC (or of RB's column)
    if feedback:
        rb_room = side_room(n.get("RB"), GAP_H) + 1.4
        top = yr + rb_room + max(extent(n.get("RC")), 1.0)
    else:
        top = max(yb + extent(n.get("R1")), yr + extent(n.get("RC")) if "RC" in n else yb + 1.5, ycoll + 1.0)
    top += 0.6
    # A PNP stage is drawn with the rails swapped: 0 V on top, +V below, the PNP's emitter down.
    pnp = str(sheet.design["parts"]["Q1"].get("polarity", "")).upper() == "PNP"
    q_label = f"{sheet.q_name}\n" + _plain(sheet.design["parts"]["Q1"].get("part", ""))
    q = d.add((elm.BjtPnp().flip() if pnp else elm.BjtNpn()).anchor("base").at((xq, yb)).label(
        q_label, loc="right", fontsize=FONT))
    xe = q.absanchors["emitter"][0]
    xc = q.absanchors["collector"][0]
    # The top rail and its supply mark, the bottom rail and ground.
    left = xb - (max(extent(n.get("CIN"), LEAF_H), 2.0) + 0.6)
    d.add(elm.Line().endpoints((xb if not (feedback or grounded) else xc, top), (xc, top)))
    supply = f"+{sheet.stage.supply_v:g} V (VCC)"
    d.add(elm.Ground().at((xc, top)).flip().label("0 V", loc="right", fontsize=FONT) if pnp
          else elm.Vdd().at((xc, top)).label(supply, fontsize=FONT))
    if split:  # the negative rail under the emitter chain; ground marks on RB, CE (and the load)
        d.add(elm.Line().endpoints((xe - 1.2, 0.0), (xe, 0.0)))
        d.add(elm.Vss().at((xe - 1.2, 0.0)).label(f"{sheet.stage.negative_supply_v:g} V (VEE)", fontsize=FONT))
        ground = None
    else:
        ground = (xb, max(xe, xc) + 2.0 + side_room(n.get("RE2"), GAP_V) + side_room(n.get("CE"), GAP_V) + GAP_V)
        d.add(elm.Line().endpoints((ground[0], 0.0), (ground[1], 0.0)))
        d.add(elm.Vss().at((xb, 0.0)).label(supply, loc="bottom", fontsize=FONT) if pnp
              else elm.Ground().at((xb, 0.0)))

    # Input: in ── CIN ── base node.
    cin_plus_at_in = plus.get("CIN") == "in"
    x_in = left
    dr.net("CIN", (x_in, yb), (xb, yb), side=1, plus_at_a=cin_plus_at_in) if "CIN" in n else dr.wire((x_in, yb), (xb, yb))
    if joined != "in":
        d.add(elm.Dot(open=True).at((x_in, yb)).label(sheet.in_label, loc="left", fontsize=FONT))
    d.add(elm.Dot().at((xb, yb)))
    d.add(elm.Line().endpoints((xb, yb), (xq, yb)))
    if grounded:
        y_gnd = yb - extent(n.get("RB")) - 0.3
        dr.net("RB", (xb, yb), (xb, y_gnd))
        d.add(elm.Ground().at((xb, y_gnd)))
    elif not feedback:
        dr.net("R1", (xb, top), (xb, yb))
        dr.net("R2", (xb, yb), (xb, 0.0))
    # Collector side.
    if follower:
        dr.wire(q.absanchors["collector"], (xc, top))
    else:
        dr.wire(q.absanchors["collector"], (xc, yr))
        if feedback:
            y_rb = yr + 0.6
            dr.wire((xc, yr), (xc, y_rb))
            dr.net("RB", (xc, y_rb), (xb, y_rb), side=1)
            dr.wire((xb, y_rb), (xb, yb))
            d.add(elm.Dot().at((xc, y_rb)))
            dr.net("RC", (xc, top), (xc, y_rb))
        else:
            dr.net("RC", (xc, top), (xc, yr))
    # Emitter side.
    y_emit = q.absanchors["emitter"][1]
    dr.wire(q.absanchors["emitter"], (xe, ye))
    out_node_y = yk if not follower else ye - 0.5
    out_from = (xc, out_node_y) if not follower else (xe, out_node_y)
    if follower:
        dr.wire((xe, y_emit), (xe, out_node_y))
        dr.net("RE", (xe, out_node_y - 0.5), (xe, 0.0))
        dr.wire((xe, out_node_y), (xe, out_node_y - 0.5))
    else:
        y_mid = re2_len if "RE2" in n else 0.0
        if "RE1" in n:
            dr.net("RE1", (xe, ye), (xe, y_mid))
        else:
            dr.wire((xe, ye), (xe, y_mid))
        if "RE2" in n:
            dr.net("RE2", (xe, y_mid), (xe, 0.0))
            if "CE" in n:
                xce = xe + GAP_V + side_room(n.get("RE2"), GAP_V)
                dr.wire((xe, y_mid), (xce, y_mid))
                d.add(elm.Dot().at((xe, y_mid)))
                dr.net("CE", (xce, y_mid), (xce, 0.0), plus_at_a=plus.get("CE") not in ("0", "vcc"))
                if split:
                    d.add(elm.Ground().at((xce, 0.0)))
        else:
            dr.wire((xe, y_mid), (xe, 0.0))
    # Output: collector (emitter) node ── COUT ── out.
    x_out0 = out_from[0] + 0.9 + (side_room(n.get("RC"), GAP_V) if not follower else side_room(n.get("RE"), GAP_V))
    x_out = x_out0 + max(extent(n.get("COUT"), LEAF_H), 2.0)
    d.add(elm.Dot().at(out_from))
    dr.wire(out_from, (x_out0, out_from[1]))
    cout_plus_at_node = plus.get("COUT") != "out"
    if "COUT" in n:
        dr.net("COUT", (x_out0, out_from[1]), (x_out, out_from[1]), side=1 if follower else -1,
               plus_at_a=cout_plus_at_node)
    else:
        dr.wire((x_out0, out_from[1]), (x_out, out_from[1]))
    if joined == "out":
        d.add(elm.Dot().at((x_out, out_from[1])).label(sheet.out_label, loc="top", fontsize=FONT))
    else:
        d.add(elm.Dot(open=True).at((x_out, out_from[1])).label(sheet.out_label, loc="right", fontsize=FONT))
    # Where a chain joins its stages: the signal terminals and the ends of the 0 V line.
    d.drawerfit_ports = {"in": (x_in, yb), "out": (x_out, out_from[1]), "ground": ground}
    return d


def chain_schematic(sheet: Sheet) -> schemdraw.Drawing:
    """A chain joined in one drawing: stage 1 on the left, its output x wired to stage 2's input x
    (CIN_B), both on the same bottom rail (y = 0 in each stage's drawing: 0 V, or +V for an all-PNP
    chain, whose stages are both drawn with the rails swapped)."""
    first, second = (schematic(view, joined) for view, joined in zip(sheet.views, ("out", "in"), strict=True))
    out1, in2 = first.drawerfit_ports["out"], second.drawerfit_ports["in"]
    x0 = out1[0] + 1.5 - in2[0]  # stage 2's origin: its input 1.5 units right of stage 1's output
    schemdraw.use("svg")
    d = schemdraw.Drawing(show=False, fontsize=FONT, lw=1.4)
    d.add(elm.ElementDrawing(first).at((0.0, 0.0)))
    d.add(elm.ElementDrawing(second).at((x0, 0.0)))
    bend = out1[0] + 0.75
    pts = [out1, (bend, out1[1]), (bend, in2[1]), (x0 + in2[0], in2[1])]
    for a, b in zip(pts, pts[1:]):
        if a != b:
            d.add(elm.Line().endpoints(a, b))
    g1, g2 = first.drawerfit_ports["ground"], second.drawerfit_ports["ground"]
    if g1 and g2 and g1[1] < x0 + g2[0]:  # one bottom rail under both stages (both stages share a polarity)
        d.add(elm.Line().endpoints((g1[1], 0.0), (x0 + g2[0], 0.0)))
    return d


def schematic_svg(sheet: Sheet) -> str:
    """The schematic as a standalone SVG document (text kept as text, so it prints and searches)."""
    drawing = chain_schematic(sheet) if sheet.chain is not None else schematic(sheet)
    return drawing.get_imagedata("svg").decode("utf-8")


def stage_svgs(sheet: Sheet) -> list[str]:
    """A chain's stages, one SVG document each (the html sheet stacks them at a readable size)."""
    return [schematic(view).get_imagedata("svg").decode("utf-8") for view in sheet.views]
