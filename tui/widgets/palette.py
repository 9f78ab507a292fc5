"""The command palette's list: drawerfit's own actions, nothing of the framework's stock list.

Built from the key bindings of the screen it was opened on (and the app's), so a key in
the footer and an entry in the palette can never drift apart.  Each entry reads as the
action in trade words; its key is in the help line under it.
"""

from __future__ import annotations

from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider


def entries(screen, app) -> list[tuple[str, str, object]]:
    """(title, help, callback) for each enabled binding with an id and a description."""
    out = []
    seen = set()
    for key, active in screen.active_bindings.items():
        binding = active.binding
        if not binding.id or not binding.description or binding.id in seen or not active.enabled:
            continue
        seen.add(binding.id)
        help_text = f"key {app.get_key_display(binding)}" + (f" · {binding.tooltip}" if binding.tooltip else "")
        out.append((binding.description, help_text, partial(app.run_action, binding.action, active.node)))
    return out


class ActionsProvider(Provider):
    """Offers each bound action (those with an id) of the calling screen and the app."""

    async def startup(self) -> None:
        self.entries = entries(self.screen, self.app)

    async def discover(self) -> Hits:
        for title, help_text, run in self.entries:
            yield DiscoveryHit(title, run, help=help_text)

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for title, help_text, run in self.entries:
            score = max(matcher.match(title), matcher.match(help_text) * 0.5)
            if score > 0:
                yield Hit(score, matcher.highlight(title), run, text=title, help=help_text)
