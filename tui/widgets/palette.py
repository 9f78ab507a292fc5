"""The command palette's list of actions: every key binding of the screen it was opened on.

Built from the bindings themselves, so a key in the footer and an entry in the
palette can never drift apart.
"""

from __future__ import annotations

from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider


class ActionsProvider(Provider):
    """Offers each bound action (those with an id) of the calling screen and the app."""

    async def startup(self) -> None:
        self.entries = []
        seen = set()
        for key, active in self.screen.active_bindings.items():
            binding = active.binding
            if not binding.id or not binding.description or binding.id in seen or not active.enabled:
                continue
            seen.add(binding.id)
            title = f"{binding.description} ({self.app.get_key_display(binding)})"
            help_text = binding.tooltip or f"key {key}"
            run = partial(self.app.run_action, binding.action, active.node)
            self.entries.append((title, help_text, run))

    async def discover(self) -> Hits:
        for title, help_text, run in self.entries:
            yield DiscoveryHit(title, run, help=help_text)

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for title, help_text, run in self.entries:
            score = matcher.match(title)
            if score > 0:
                yield Hit(score, matcher.highlight(title), run, text=title, help=help_text)
