"""The app under seeded random keys: no exception escapes, no hang, no change to the drawer file
that is not journaled (and every journaled one undoes back to the very bytes).

The quick slice runs with the terminal-app tests; the long run is marked `fuzz`.
`python -m tests.helpers.app_monkey [SESSIONS] [KEYS]` prints the same figures.
"""

from __future__ import annotations

import pytest

from tests.helpers.app_monkey import OPENERS, figures, run_sessions

pytestmark = pytest.mark.tui

# The screens and dialogs the openers lead to; the long run must have pressed keys on each.
EVERY_SCREEN = {"DrawerScreen", "PartForm", "CountDialog", "ConfirmDialog", "LocationsScreen", "HistoryScreen",
                "RequestScreen", "ResultsScreen", "SheetScreen", "CommandPalette"}


async def test_quick_monkey_slice(tmp_path):
    # Three sessions on the drawer-side screens (no design request, no palette): demo drawer at
    # 80x24, broken drawer at 80x24, demo drawer resizing down to 40 columns.
    tally = await run_sessions(3, 30, seed=1, folder=tmp_path, exclude=("d", "ctrl+p"))
    assert tally.sessions == 3 and tally.keys >= 3 * 30
    assert tally.ok, "\n".join(figures(tally, 0))


@pytest.mark.fuzz
async def test_long_monkey_run(tmp_path):
    n = 2 * len(OPENERS)  # every opening move on both drawers
    tally = await run_sessions(n, 120, seed=7, folder=tmp_path)
    report = "\n".join(figures(tally, 0))
    print(report)
    assert tally.sessions == n and tally.keys >= n * 120
    assert tally.ok, report
    assert EVERY_SCREEN <= set(tally.screens), report
