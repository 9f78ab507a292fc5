"""The solver's answer: the best designs side by side, or why there is none and what to buy."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, Label, Static

from ..widgets import figures


def card_text(rank: int, design: dict) -> str:
    """The figures one card shows, one per line (what the solver computed, spelled out)."""
    p = design.get("predicted", {})
    score = design.get("score") or {}
    q1 = design.get("parts", {}).get("Q1", {})
    spread = design.get("at_hfe") or {}
    lo, hi = spread.get("min", {}).get("gain"), spread.get("max", {}).get("gain")
    lines = [
        f"[b]#{rank}[/b] {design.get('topology', '')}",
        f"Q1        {q1.get('part', figures.DASH)}",
        f"Gain      {figures.gain(p.get('gain'))}",
    ]
    if lo is not None and hi is not None:
        lines.append(f" over hFE {figures.gain(lo)}…{figures.gain(hi)}")
    lines += [
        f"Swing     {figures.volts(p.get('swing_pp'))} p-p",
        f" margin   {figures.volts(score.get('swing_margin_v'))}",
        f"Low cut   {figures.hertz(p.get('f_low'))}",
        f"Rin       {figures.ohms(p.get('rin'))}",
        f"Parts     {score.get('parts', figures.DASH)}",
        f"Yield     {figures.percent(design.get('yield'))}",
    ]
    notes = len(design.get("warnings", [])) + len(design.get("cautions", []))
    if notes:
        lines.append(f"Notes     {notes}")
    return "\n".join(lines)


def hint_text(hint: dict) -> str:
    """One shopping hint as a line: "• buy 5k1 for RC: gain within 1 %", or just its effect."""
    buy = str(hint.get("buy") or "").strip()
    effect = str(hint.get("effect") or "").strip()
    if not buy:
        return f"• {effect}"
    where = f" for {hint['position']}" if hint.get("position") else ""
    return f"• buy {buy}{where}" + (f": {effect}" if effect else "")


class DesignCard(Static, can_focus=True):
    """One design; Enter opens its build sheet."""

    def __init__(self, rank: int, design: dict) -> None:
        super().__init__(card_text(rank, design), classes="card", id=f"design-{rank}")
        self.rank, self.design = rank, design


class ResultsScreen(Screen):
    """Designs found for a request, best first."""

    BINDINGS = [
        Binding("enter", "sheet", "Build sheet", id="results.sheet", tooltip="Open the chosen design's sheet"),
        Binding("left", "app.focus_previous", "Prev", id="results.prev"),
        Binding("right", "app.focus_next", "Next", id="results.next"),
        Binding("escape", "back", "Back", id="results.back", tooltip="Back to the request"),
    ]

    def __init__(self, result: dict) -> None:
        super().__init__()
        self.result = result
        self.designs = result.get("designs", [])

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll(id="results"):
            if self.designs:
                yield Label(f"{len(self.designs)} design{'s' * (len(self.designs) != 1)} from your drawer, "
                            "best first. ←/→ choose, Enter opens the build sheet.", classes="section-title")
                with Horizontal(id="cards"):
                    for rank, design in enumerate(self.designs, 1):
                        yield DesignCard(rank, design)
                if self.result.get("why"):  # solver notes, e.g. transistor lines it could not use
                    yield Static("\n".join(f"• {w}" for w in self.result["why"]), id="notes")
            else:
                yield Label("No design meets this request with the parts in the drawer.",
                            classes="section-title problem-title")
                why = self.result.get("why") or ["the solver gave no reason"]
                yield Static("\n".join(f"• {w}" for w in why), id="why")
            hints = self.result.get("hints") or []
            if hints:
                yield Label("What to buy to get there:" if not self.designs else "Parts that would help:",
                            classes="section-title")
                yield Static("\n".join(hint_text(h) for h in hints), id="hints")
        yield Footer(compact=True, show_command_palette=False)

    def check_action(self, action: str, parameters: tuple) -> bool | None:
        return bool(self.designs) if action == "sheet" else True

    def on_mount(self) -> None:
        cards = self.query(DesignCard)
        if cards:
            cards.first().focus()

    def chosen(self) -> DesignCard | None:
        focused = self.focused
        return focused if isinstance(focused, DesignCard) else None

    def action_sheet(self) -> None:
        card = self.chosen()
        if card is None:
            self.notify("No design to open", severity="warning")
            return
        from .sheet import SheetScreen

        self.app.push_screen(SheetScreen(card.rank, card.design, self.result))

    def action_back(self) -> None:
        self.app.pop_screen()
