"""The search's answer: the trade between the designs made visible, or why there is none and what to buy.

Above, a grid of parts against distortion (or yield) with each design as its number and
the chosen one marked; below, one row per design with what it is best at in trade words.
Up/down chooses, Enter opens the build sheet.  Documents without the trade keys (older
saved files) show what they have.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Label, Static

from ..sheet_text import ORDER, best_for_text, position_value
from ..widgets import figures
from ..widgets.masthead import Masthead
from ..widgets.tradeplot import TradePlot

COLUMNS = ("#", "Best for", "Parts", "THD", "Margin", "Current", "Yield")


def row_of(rank: int, design: dict) -> tuple[str, ...]:
    """The table row of one design (the four counts of the trade, and the yield), spelled by the one rule."""
    score = design.get("score") or {}
    p = design.get("predicted") or {}
    margin = (figures.percent(score["robustness"]) if score.get("robustness") is not None
              else figures.volts(score.get("swing_margin_v")) if score.get("swing_margin_v") is not None
              else figures.DASH)
    return (str(rank), best_for_text(design) or figures.DASH, str(score.get("parts", figures.DASH)),
            figures.percent(score.get("thd", p.get("thd")), 2), margin, figures.amps(score.get("supply_a")),
            figures.percent(design.get("yield")))


def values_line(design: dict) -> str:
    """The chosen design's gain over hFE and its parts in RKM: "gain -10.05 … -9.95 · R1 220k · … · Q1 BC547B"."""
    parts = design.get("parts") or {}
    at = design.get("at_hfe") or {}
    p = design.get("predicted") or {}
    gain = (figures.span(at["min"].get("gain"), at["max"].get("gain"), lambda v: f"{v:+.2f}")
            if "min" in at and "max" in at else figures.gain(p.get("gain")))
    return " · ".join([f"gain {gain} over hFE",
                       *(f"{pos} {position_value(pos, parts[pos])}" for pos in ORDER if pos in parts)])


def status_text(result: dict) -> str:
    """How complete the answer is, from the document's status keys (absent in older files: empty)."""
    if result.get("stopped"):
        return "Stopped early: these are the best found before the stop."
    if result.get("designs"):
        if result.get("optimal") is True:
            return "The search was complete: nothing else in the drawer beats these on every count."
        if result.get("optimal") is False:
            left = result.get("unexplored")
            return "Not proven best within the time limit" + (f"; left unexplored: {left}." if left else ".")
        return ""
    if result.get("status") == "unproven":
        return "Nothing found within the time limit; not proven impossible (a longer limit may find one)."
    return ""


def hint_text(hint: dict) -> str:
    """One shopping hint as a line: "• buy 5k1 for RC: gain within 1 %", or just its effect."""
    buy = str(hint.get("buy") or "").strip()
    effect = str(hint.get("effect") or "").strip()
    if not buy:
        return f"• {effect}"
    where = f" for {hint['position']}" if hint.get("position") else ""
    return f"• buy {buy}{where}" + (f": {effect}" if effect else "")


class ResultsScreen(Screen):
    """Designs found for a request, the preferred one first."""

    BINDINGS = [
        Binding("enter", "sheet", "Build sheet", id="results.sheet", priority=True,
                tooltip="Open the chosen design's build sheet"),
        Binding("escape", "back", "Back", id="results.back", tooltip="Back to the request"),
    ]

    def __init__(self, result: dict) -> None:
        super().__init__()
        self.result = result
        self.designs = [d for d in result.get("designs", []) if isinstance(d, dict)]

    def compose(self) -> ComposeResult:
        yield Masthead()
        with VerticalScroll(id="results"):
            status = status_text(self.result)
            if self.designs:
                n = len(self.designs)
                what = "two-stage chain" if all(d.get("stages") for d in self.designs) else "stage"
                yield Label(f"{n} {what}{'s' * (n != 1)} from your drawer, preferred first; "
                            "↑/↓ choose, Enter: build sheet", classes="section-title")
                if status:
                    yield Static(status, id="status", classes="caption")
                yield TradePlot(self.designs, id="trade")
                yield DataTable(id="designs", cursor_type="row", zebra_stripes=True)
                yield Static(values_line(self.designs[0]), id="chosen-values")
                if self.result.get("why"):  # solver notes, e.g. transistor lines it could not use
                    yield Static("\n".join(f"• {w}" for w in self.result["why"]), id="notes")
            else:
                yield Label("No design meets this request with the parts in the drawer."
                            if self.result.get("status") != "unproven" else "No design found yet.",
                            classes="section-title problem-title")
                if status:
                    yield Static(status, id="status", classes="caption")
                why = self.result.get("why") or ["the search gave no reason"]
                yield Static("\n".join(f"• {w}" for w in why), id="why")
            hints = self.result.get("hints") or []
            if hints:
                yield Label("What to buy to get there:" if not self.designs else "Parts that would help:",
                            classes="section-title")
                yield Static("\n".join(hint_text(h) for h in hints), id="hints")
        yield Footer(compact=True, show_command_palette=False)

    def on_mount(self) -> None:
        if not self.designs:
            return
        table = self.query_one("#designs", DataTable)
        table.add_columns(*COLUMNS)
        for rank, design in enumerate(self.designs, 1):
            table.add_row(*row_of(rank, design), key=str(rank))
        # Focus without scrolling to it: on a short terminal the screen opens at its top, so the
        # heading and the status (how complete the answer is) are read before the table.
        table.focus(scroll_visible=False)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        rank = event.cursor_row + 1
        self.query_one("#trade", TradePlot).chosen = rank
        self.query_one("#chosen-values", Static).update(values_line(self.designs[rank - 1]))

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        self.action_sheet()  # a click on a row (Enter is the screen's own key)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        return bool(self.designs) if action == "sheet" else True

    @property
    def chosen(self) -> int:
        """The 1-based rank of the design under the cursor."""
        return self.query_one("#designs", DataTable).cursor_row + 1 if self.designs else 0

    def action_sheet(self) -> None:
        if not self.designs:
            self.notify("No design to open", severity="warning")
            return
        from .sheet import SheetScreen

        rank = self.chosen
        self.app.push_screen(SheetScreen(rank, self.designs[rank - 1], self.result))

    def action_back(self) -> None:
        self.app.pop_screen()
