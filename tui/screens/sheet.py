"""The build sheet of one design: drawing, parts and where they are, meter checks, figures, plots.

Everything shown is what the solver computed (the design's JSON); the screen only
lays it out.  `b` takes the parts from the drawer after a confirmation (a second build of
the same design only as "another copy"), `w` writes the sheet to a file as `drawerfit sheet`
does, `n` simulates the design in ngspice beside drawerfit's figures.  Long work (the
html sheet, ngspice) runs in thread workers that hand back through `call_from_thread`.
"""

from __future__ import annotations

import functools
from pathlib import Path

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Label, Static
from textual.worker import Worker, WorkerState

from inventory.atomic import atomic_write
from optimizer.parts import network_tree
from ..builds import build_record, last_build, record_problem, sheet_document, tag_of
from ..schematic import draw_stage, position_text
from ..schematic_chain import draw_chain
from ..sheet_text import best_for_text, cautions, chain_meter_lines, stage_lines
from ..widgets import figures
from ..widgets.chart import Chart, draw_histogram, draw_response
from ..widgets.crosscheck_panel import BAD_DESIGN, CrossCheckPanel
from ..widgets.masthead import Masthead
from ..widgets.part_text import rating_text, tolerance_text, type_text, value_text

def line_text(part) -> str:
    """The drawer line as stocked: "4k7 5% 0.25 W", "BC547B hFE 200-450 45 V"."""
    if part is None:
        return "(no longer in the drawer file)"
    bits = (value_text(part) if part.kind != "transistor" else "", tolerance_text(part), rating_text(part),
            type_text(part) if part.kind != "transistor" else "")
    return " ".join(b for b in bits if b)


TRANSISTORS = ("Q1", "Q2")  # a chain's second transistor is Q2


def part_rows(design: dict, drawer) -> list[tuple[str, str, str, str, str]]:
    """(position, value, line, location, drawer part) per physical part, the transistors last."""
    locations = design.get("locations") or {}
    rows = []
    for pos, entry in design.get("parts", {}).items():
        if pos in TRANSISTORS:
            continue
        unit_key = "farads" if "farads" in entry else "ohms"
        node = entry.get("network")
        leaves = network_tree.leaves(network_tree.from_json(node, unit_key=unit_key)) if node else []
        for leaf in leaves:
            part = drawer.part_at(leaf.line) if drawer else None
            rows.append((pos, position_text({unit_key: leaf.value}), str(leaf.line),
                         locations.get(str(leaf.line), ""), line_text(part)))
    for q in TRANSISTORS:
        entry = design.get("parts", {}).get(q)
        if entry:
            line = entry.get("line")
            part = drawer.part_at(line) if drawer and line is not None else None
            rows.append((q, str(entry.get("part", "")), str(line), locations.get(str(line), ""), line_text(part)))
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
    """The DC voltages to check, no signal applied, with their range over the hFE spread (low end first)."""
    p = design.get("predicted", {})
    spread = design.get("at_hfe") or {}
    lines = ["Power up with no signal; black probe on 0 V."]
    if design.get("stages"):
        return "\n".join(lines + chain_meter_lines(design))
    for name, key in (("Base", "vb"), ("Emitter", "ve"), ("Collector", "vc")):
        lo = spread.get("min", {}).get(key)
        hi = spread.get("max", {}).get(key)
        rng = f"   ({figures.span(lo, hi, figures.volts)} over the hFE range)" if lo is not None else ""
        lines.append(f"  {name:<10} {figures.volts(p.get(key))}{rng}")
    return "\n".join(lines)


def histogram_caption(design: dict, spec: dict) -> str:
    """What the histogram shows, in words: how many builds, what varies, where the asked gain lies."""
    mc = design.get("mc") or {}
    shown, n = len(mc.get("gain") or []), mc.get("n")
    temp = spec.get("temp_range_c") or []
    where = f" and a temperature in {temp[0]:g}..{temp[1]:g} °C" if len(temp) == 2 else ""
    of = f" ({shown} of the {n} behind the yield figure)" if n and n != shown else ""
    lines = [f"Each simulated build draws every part within its tolerance, hFE over its range{where}; "
             f"{shown} builds are shown{of}."]
    if spec.get("gain") and spec.get("gain_tol") is not None:
        lines.append("The vertical lines mark the gain asked for, ± its tolerance.")
    return " ".join(lines)


def gain_window(design: dict, spec: dict) -> tuple[float, float] | None:
    """The gain asked for as (low, high), with the sign the design's gain has."""
    try:
        g, tol = float(spec["gain"]), float(spec["gain_tol"])
    except (KeyError, TypeError, ValueError):
        return None
    sign = -1.0 if float((design.get("predicted") or {}).get("gain") or 1.0) < 0 else 1.0
    a, b = sign * g * (1 - tol), sign * g * (1 + tol)
    return (min(a, b), max(a, b))


def transistor_title(design: dict) -> str:
    """"Q1 BC547B (hFE 200…450)", and a chain's Q2 with its own line's spread."""
    bits = []
    for q, key in (("Q1", "hfe"), ("Q2", "hfe_b")):
        part = design.get("parts", {}).get(q)
        if part is None:
            continue
        hfe = design.get(key) or {}
        spread = f" (hFE {hfe['min']:g}…{hfe['max']:g})" if "min" in hfe and "max" in hfe else ""
        bits.append(f"{q} {part.get('part', '')}{spread}")
    return ", ".join(bits)


def figures_text(design: dict) -> str:
    if design.get("stages"):  # a chain: the whole chain's figures, then each stage's as the chain sees it
        return ("  The whole chain (IC is Q1's):\n" + _figure_lines(design) + "\n  Each stage (typical hFE; "
                "stage 1's gain from the source's EMF to x, stage 2's from x to the load):\n"
                + "\n".join(stage_lines(design)))
    return _figure_lines(design)


def _figure_lines(design: dict) -> str:
    rows = figures.predicted_rows(design.get("predicted", {}))
    score = design.get("score") or {}
    if score.get("robustness") is not None:
        rows.append(("Worst-corner margin", figures.percent(score.get("robustness"))))
    if score.get("supply_a") is not None:
        rows.append(("Supply current (max)", figures.amps(score.get("supply_a"))))
    rows += [("Swing margin", figures.volts(score.get("swing_margin_v"))),
             ("Yield (Monte Carlo)", figures.percent(design.get("yield"))),
             ("Parts", str(score.get("parts", figures.DASH)))]
    return "\n".join(f"  {label:<20} {text}" for label, text in rows)


__all__ = ["SheetScreen", "build_record", "open_past_sheet"]  # build_record: tui/builds.py, kept importable here


class SheetScreen(Screen):
    """How to build design #rank from the drawer."""

    BINDINGS = [
        Binding("b", "build", "Take the parts", id="sheet.build", tooltip="Build it: take these parts off the drawer counts"),
        Binding("w", "export", "Write out", id="sheet.export",
                tooltip="Write this sheet to a file: html (to print), svg, md, csv (pick list) or cir (SPICE bench)"),
        Binding("n", "crosscheck", "ngspice check", id="sheet.ngspice",
                tooltip="Simulate the design in ngspice at hFE min, typical and max, beside drawerfit's figures"),
        Binding("escape", "back", "Back", id="sheet.back", tooltip="Back to the designs"),
    ]

    def __init__(self, rank: int, design: dict, result: dict) -> None:
        super().__init__()
        self.rank, self.design, self.result = rank, design, result

    @classmethod
    def from_record(cls, record: dict) -> SheetScreen:
        """The sheet of a past build from its `build_record` (as kept in the journal)."""
        result = {"spec": record.get("spec") or {}}
        if record.get("fingerprint") is not None:  # a saved file's build: the same design tag as then
            result["fingerprint"] = record["fingerprint"]
        return cls(int(record.get("rank", 1)), record["design"], result)

    def compose(self) -> ComposeResult:
        design, spec = self.design, self.result.get("spec", {})
        drawer = self.app.drawer
        yield Masthead()
        with VerticalScroll(id="sheet"):
            best = best_for_text(design)
            yield Label(f"Build sheet: design #{self.rank}, {design.get('topology', '')}, "
                        f"{transistor_title(design)}" + (f"\nBest for: {best}" if best else ""),
                        classes="section-title")
            # A chain draws both its stages; a split-supply stage also its negative rail.
            draw = draw_chain if design.get("stages") else \
                functools.partial(draw_stage, negative_supply_v=spec.get("negative_supply_v"))
            yield Static(draw(design, supply_v=spec.get("supply_v"), source_ohms=spec.get("source_ohms"),
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
                yield Label("Response", classes="section-title")
                yield Chart(lambda plt, rgb: draw_response(plt, response["freq_hz"], response.get("gain_db", []), rgb),
                            id="response", classes="plot")
            if (design.get("mc") or {}).get("gain"):
                yield Label("Gain of simulated builds (how many builds land at each gain)", classes="section-title")
                window = gain_window(design, spec)
                samples = design["mc"]["gain"]
                yield Chart(lambda plt, rgb: draw_histogram(plt, samples, window=window, colour=rgb),
                            id="histogram", classes="plot")
                yield Static(histogram_caption(design, spec), id="histogram-caption", classes="caption")
            if design.get("warnings"):
                yield Label("Warnings", classes="section-title problem-title")
                yield Static("\n".join(f"• {n}" for n in design["warnings"]), id="warnings")
            yield Label("Safety", classes="section-title problem-title")
            yield Static("\n".join(f"• {n}" for n in cautions(design)), id="cautions")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        table = self.query_one("#sheet-parts", DataTable)
        table.add_columns("Pos", "Value", "Line", "Place", "In the drawer as")
        table.add_rows(part_rows(self.design, self.app.drawer))
        self.query_one("#sheet").focus()

    def action_back(self) -> None:
        self.app.pop_screen()

    def action_build(self) -> None:
        from .dialogs import ConfirmDialog

        uses = [(int(u["line"]), int(u["qty"])) for u in self.design.get("uses", [])]
        pieces = sum(q for _, q in uses)
        gain = figures.gain(self.design.get("predicted", {}).get("gain"))
        tag = tag_of(self.rank, self.design, self.result)  # the CLI's tag: each refuses the other's second build
        try:
            built = last_build(self.app.store.history(), tag)
        except OSError as exc:
            self.notify(f"{self.app.store.journal.path}: cannot read the journal ({exc.strerror or exc})",
                        title="Not built", severity="error", timeout=10)
            return
        copy = "another copy of " if built else ""
        what = f"{copy}design #{self.rank} ({self.design.get('topology', '')}, gain {gain})"
        record = build_record(self.rank, self.design, self.result)

        def done(yes: bool | None) -> None:
            if not yes:
                return
            failed = self.app.write(lambda: self.app.store.take(uses, reason=f"built {what} {tag}", design=record),
                                    f"Taken: built {what}")
            if failed is None:
                from .drawer import DrawerScreen

                while not isinstance(self.app.screen, DrawerScreen) and len(self.app.screen_stack) > 1:
                    self.app.pop_screen()

        if built is not None:
            self.app.push_screen(ConfirmDialog(
                f"Design #{self.rank} was built already (change #{built.id}, {built.time[:10]}).",
                f"Its parts came off the counts then. Build another copy and take {pieces} parts from "
                f"{len(uses)} drawer lines again? If that build never happened, undo change #{built.id} "
                "in the history instead.", "Build another copy"), done)
            return
        self.app.push_screen(ConfirmDialog(
            "Build this design and take its parts from the drawer?",
            f"{pieces} parts from {len(uses)} drawer lines will be taken off the counts.", "Build"), done)

    # ---- the sheet as a file -------------------------------------------------------------

    def action_export(self) -> None:
        from .export_dialog import ExportDialog

        def chosen(answer: tuple[str, Path] | None) -> None:
            if answer is not None:
                self.notify(f"Writing {answer[1]} …", timeout=3)
                self.write_sheet(*answer)

        self.app.push_screen(ExportDialog(f"design-{self.rank}"), chosen)

    @work(thread=True, exclusive=True, group="sheet-export", exit_on_error=False)
    def write_sheet(self, fmt: str, path: Path) -> None:
        """Render (the html sheet draws its plots: a second or two) and write atomically, off the UI thread."""
        from ..cmd_sheet import render
        from ..export.content import SheetInputError

        source = self.app.inventory_path.name
        error = None
        try:
            doc, pick = sheet_document(self.rank, self.design, self.result)
            atomic_write(path, render(doc, pick, fmt, source).encode("utf-8"))
        except SheetInputError as exc:
            error = str(exc)
        except OSError as exc:
            error = f"{path}: cannot write it ({exc.strerror or exc})"
        except BAD_DESIGN as exc:
            error = f"design #{self.rank} cannot be drawn ({exc!r})"
        if error:
            self.app.call_from_thread(self.app.notify, error, title="Not written", severity="error", timeout=10)
        else:
            self.app.call_from_thread(self.app.notify, f"Wrote {path} ({fmt})", title="Sheet written")

    # ---- ngspice beside drawerfit ------------------------------------------------------------

    async def action_crosscheck(self) -> None:
        panels = self.query(CrossCheckPanel)
        if panels:
            panel = panels.first()
        else:
            panel = CrossCheckPanel(self.design, self.result.get("spec") or {}, id="xcheck-section")
            await self.query_one("#sheet", VerticalScroll).mount(panel, after="#predicted")
        if not panel.start():
            self.notify("ngspice is still running", severity="warning")
        self.call_after_refresh(lambda: self.query_one("#sheet", VerticalScroll).scroll_to_widget(
            panel, top=True, animate=False))

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.state == WorkerState.ERROR and event.worker.group == "sheet-export":
            self.notify(f"The sheet was not written: {event.worker.error!r}", title="Not written", severity="error")


def open_past_sheet(app, entry_id: int | None) -> None:
    """Show the build sheet kept with journal entry `entry_id`, or say why there is none (the history's `s`)."""
    if entry_id is None:
        app.notify("No change chosen", severity="warning")
        return
    try:
        history = app.store.history()
    except OSError as exc:
        app.notify(f"The journal cannot be read: {exc.strerror or exc}", severity="error")
        return
    entry = next((e for e in history if e.id == entry_id), None)
    problem = record_problem(entry, entry_id)
    if problem:
        app.notify(problem, title="No sheet", severity="warning", timeout=8)
        return
    app.push_screen(SheetScreen.from_record(entry.design))
