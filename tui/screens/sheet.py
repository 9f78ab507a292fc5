"""The build sheet of one design: drawing, parts and where they are, meter checks, figures, plots.

Everything shown is what the solver computed (the design's JSON); the screen only
lays it out.  `b` takes the parts from the drawer after a confirmation.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Label, Static
from textual_plotext import PlotextPlot

from optimizer import network_tree

from ..schematic import draw_stage, position_text
from ..widgets import figures
from ..widgets.part_text import rating_text, tolerance_text, type_text, value_text

# Shown only when a design carries no cautions of its own (the solver normally words them).
SAFETY = (
    "Check the supply voltage and polarity before connecting it; keep every part within its ratings.",
    "Fit polarised capacitors with + toward the higher DC voltage; reversed, they can vent or fail short.",
    "Local electrical codes and licensed practice take precedence over these notes.",
)


def line_text(part) -> str:
    """The drawer line as stocked: "4k7 5% 0.25 W", "BC547B hFE 200-450 45 V"."""
    if part is None:
        return "(no longer in the drawer file)"
    bits = (value_text(part) if part.kind != "transistor" else "", tolerance_text(part), rating_text(part),
            type_text(part) if part.kind != "transistor" else "")
    return " ".join(b for b in bits if b)


def part_rows(design: dict, drawer) -> list[tuple[str, str, str, str, str]]:
    """(position, value, line, location, drawer part) per physical part, Q1 last."""
    locations = design.get("locations") or {}
    rows = []
    for pos, entry in design.get("parts", {}).items():
        if pos == "Q1":
            continue
        unit_key = "farads" if "farads" in entry else "ohms"
        node = entry.get("network")
        leaves = network_tree.leaves(network_tree.from_json(node, unit_key=unit_key)) if node else []
        for leaf in leaves:
            part = drawer.part_at(leaf.line) if drawer else None
            rows.append((pos, position_text({unit_key: leaf.value}), str(leaf.line),
                         locations.get(str(leaf.line), ""), line_text(part)))
    q1 = design.get("parts", {}).get("Q1")
    if q1:
        line = q1.get("line")
        part = drawer.part_at(line) if drawer and line is not None else None
        rows.append(("Q1", str(q1.get("part", "")), str(line), locations.get(str(line), ""), line_text(part)))
    return rows


def polarised_positions(design: dict, drawer) -> frozenset[str]:
    out = {pos for pos, entry in design.get("parts", {}).items() if entry.get("polarised")}
    for pos, entry in design.get("parts", {}).items():
        if "farads" in entry and entry.get("network") and drawer is not None:
            tree = network_tree.from_json(entry["network"], unit_key="farads")
            if any((p := drawer.part_at(leaf.line)) is not None and p.polarised
                   for leaf in network_tree.leaves(tree)):
                out.add(pos)
    return frozenset(out)


def meter_text(design: dict) -> str:
    """The DC voltages to check, no signal applied, with their spread over the hFE range."""
    p = design.get("predicted", {})
    spread = design.get("at_hfe") or {}
    lines = ["Power up with no signal; black probe on 0 V."]
    for name, key in (("Base", "vb"), ("Emitter", "ve"), ("Collector", "vc")):
        lo = spread.get("min", {}).get(key)
        hi = spread.get("max", {}).get(key)
        span = f"   ({figures.volts(lo)} … {figures.volts(hi)} over the hFE range)" if lo is not None else ""
        lines.append(f"  {name:<10} {figures.volts(p.get(key))}{span}")
    return "\n".join(lines)


def figures_text(design: dict) -> str:
    rows = figures.predicted_rows(design.get("predicted", {}))
    score = design.get("score") or {}
    rows += [("Swing margin", figures.volts(score.get("swing_margin_v"))),
             ("Yield (Monte Carlo)", figures.percent(design.get("yield"))),
             ("Parts", str(score.get("parts", figures.DASH)))]
    return "\n".join(f"  {label:<20} {text}" for label, text in rows)


class SheetScreen(Screen):
    """How to build design #rank from the drawer."""

    BINDINGS = [
        Binding("b", "build", "Build", id="sheet.build", tooltip="Take these parts from the drawer"),
        Binding("escape", "back", "Back", id="sheet.back", tooltip="Back to the designs"),
    ]

    def __init__(self, rank: int, design: dict, result: dict) -> None:
        super().__init__()
        self.rank, self.design, self.result = rank, design, result

    def compose(self) -> ComposeResult:
        design, spec = self.design, self.result.get("spec", {})
        drawer = self.app.drawer
        q1 = design.get("parts", {}).get("Q1", {})
        yield Header()
        with VerticalScroll(id="sheet"):
            hfe = design.get("hfe") or {}
            spread = f" (hFE {hfe['min']:g}…{hfe['max']:g})" if "min" in hfe and "max" in hfe else ""
            yield Label(f"Build sheet: design #{self.rank}, {design.get('topology', '')}, "
                        f"Q1 {q1.get('part', '')}{spread}", classes="section-title")
            yield Static(draw_stage(design, supply_v=spec.get("supply_v"), source_ohms=spec.get("source_ohms"),
                                    load_ohms=spec.get("load_ohms"),
                                    polarised=polarised_positions(design, drawer)), id="schematic")
            yield Label("Parts (drawer line and place)", classes="section-title")
            yield DataTable(id="sheet-parts", cursor_type="none", zebra_stripes=True)
            yield Label("Meter checks", classes="section-title")
            yield Static(meter_text(design), id="meter")
            yield Label("Predicted", classes="section-title")
            yield Static(figures_text(design), id="predicted")
            response = design.get("response") or {}
            if response.get("freq_hz"):
                yield PlotextPlot(id="response", classes="plot")
            if (design.get("mc") or {}).get("gain"):
                yield PlotextPlot(id="histogram", classes="plot")
            notes = list(design.get("warnings", [])) + list(design.get("cautions", []))
            yield Label("Warnings and cautions", classes="section-title problem-title")
            yield Static("\n".join(f"• {n}" for n in (notes or SAFETY)), id="cautions")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#sheet-parts", DataTable)
        table.add_columns("Pos", "Value", "Line", "Place", "In the drawer as")
        table.add_rows(part_rows(self.design, self.app.drawer))
        response = self.design.get("response") or {}
        if response.get("freq_hz"):
            plt = self.query_one("#response", PlotextPlot).plt
            plt.plot(response["freq_hz"], response["gain_db"], marker="braille")
            plt.xscale("log")
            plt.title("Gain (dB) against frequency (Hz)")
        samples = (self.design.get("mc") or {}).get("gain")
        if samples:
            plt = self.query_one("#histogram", PlotextPlot).plt
            plt.hist(samples, bins=24)
            n = self.design["mc"].get("n", len(samples))
            plt.title(f"Gain of {len(samples)} of {n} simulated builds (Monte Carlo)")
        self.query_one("#sheet").focus()

    def action_back(self) -> None:
        self.app.pop_screen()

    def action_build(self) -> None:
        from .dialogs import ConfirmDialog

        uses = [(int(u["line"]), int(u["qty"])) for u in self.design.get("uses", [])]
        pieces = sum(q for _, q in uses)
        gain = figures.gain(self.design.get("predicted", {}).get("gain"))
        reason = f"built design #{self.rank} ({self.design.get('topology', '')}, gain {gain})"
        detail = f"{pieces} parts from {len(uses)} drawer lines will be taken off the counts."

        def done(yes: bool | None) -> None:
            if not yes:
                return
            failed = self.app.write(lambda: self.app.store.take(uses, reason=reason), f"Taken: {reason}")
            if failed is None:
                from .drawer import DrawerScreen

                while not isinstance(self.app.screen, DrawerScreen) and len(self.app.screen_stack) > 1:
                    self.app.pop_screen()

        self.app.push_screen(ConfirmDialog("Build this design and take its parts from the drawer?",
                                           detail, "Build"), done)
