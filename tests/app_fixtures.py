"""Fixtures for the terminal-app tests: a copy of the bundled demo drawer, a steady cursor."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from textual.widgets import Input

from tests.demo_job import DEMO


@pytest.fixture
def demo_drawer(tmp_path: Path) -> Path:
    """A private copy of the real demo drawer (the tests write to it)."""
    path = tmp_path / "drawer.csv"
    shutil.copyfile(DEMO, path)
    return path


@pytest.fixture
def steady_cursor(monkeypatch: pytest.MonkeyPatch) -> None:
    """Stop the text cursor blinking, so a screenshot does not depend on when it is taken."""
    monkeypatch.setattr(Input, "_toggle_cursor", lambda self: None)


async def type_into(pilot, selector: str, text: str) -> None:
    """Focus the Input `selector`, clear it and type `text` key by key, as a user would."""
    widget = pilot.app.screen.query_one(selector, Input)
    widget.focus()
    await pilot.pause()
    await pilot.press("end", *(["backspace"] * len(widget.value)), *text)
    await pilot.pause()
