"""The installed `drawerfit` command in a real terminal (tmux), keys sent as a user types them.

Runs on a private tmux server (-L) so it never touches anyone's sessions.  Skips
locally when tmux is missing; fails in CI, which installs it (see conftest.need_program).
"""

from __future__ import annotations

import os
import shlex
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

from inventory.drawer import Drawer

from .app_fixtures import demo_drawer  # noqa: F401  (fixture)

pytestmark = pytest.mark.tui


class Terminal:
    def __init__(self, tmux: str, socket: str) -> None:
        self.tmux, self.socket = tmux, socket

    def run(self, *args: str) -> str:
        out = subprocess.run([self.tmux, "-L", self.socket, *args], capture_output=True, text=True, timeout=20)
        return out.stdout

    def screen(self) -> str:
        return self.run("capture-pane", "-p", "-t", "app")

    def keys(self, *keys: str) -> None:
        self.run("send-keys", "-t", "app", *keys)
        time.sleep(0.5)  # a person's pace: a key that moves focus lands before the next one

    def wait_for(self, text: str, timeout_s: float = 30.0) -> str:
        deadline = time.monotonic() + timeout_s
        while time.monotonic() < deadline:
            shown = self.screen()
            if text in shown:
                return shown
            time.sleep(0.2)
        raise AssertionError(f"{text!r} never appeared; the screen shows:\n{self.screen()}")


def drawerfit_command() -> list[str]:
    found = shutil.which("drawerfit")
    return [found] if found else [sys.executable, "-m", "tui"]


def test_app_starts_navigates_and_quits_cleanly(tmux, demo_drawer: Path, tmp_path: Path):
    socket = f"drawerfit-test-{os.getpid()}"
    term = Terminal(tmux, socket)
    status = tmp_path / "exit-status"
    command = " ".join(shlex.quote(c) for c in [*drawerfit_command(), "--inventory", str(demo_drawer)])
    shell = f"{command}; echo $? > {shlex.quote(str(status))}"
    before = demo_drawer.read_bytes()
    term.run("new-session", "-d", "-s", "app", "-x", "100", "-y", "32", "-e", "TERM=xterm-256color", shell)
    try:
        shown = term.wait_for("Location")
        term.wait_for("d Design")  # the footer of the table: focus has settled
        time.sleep(1.0)
        # The first lines of the demo drawer are on screen, counted from the real file.
        total = len(Drawer.load(demo_drawer).parts)
        assert f"{total}/{total} lines" in shown
        term.keys("/")
        term.keys("-l", "BC547B")
        shown = term.wait_for("1/")
        assert "BC547B" in shown and "hFE 200-450" in shown  # the demo's line for BC547B
        term.keys("Escape")  # alone: ESC followed at once by a key reads as alt+key
        term.keys("d")
        shown = term.wait_for("f5 Find stages")
        assert "Stage" in shown and "Minimum Rin" in shown
        term.keys("F5")
        term.wait_for("preferred first", timeout_s=120)
        term.wait_for("Best for")  # the table may land a frame after the header, the plot after it
        shown = term.wait_for("physical parts")
        assert "Best for" in shown and "physical parts" in shown
        term.keys("Enter")
        shown = term.wait_for("b Take the parts")
        assert "Build sheet: design #1" in shown and "+12 V" in shown and "load 22 kΩ" in shown
        (tmp_path / "sheet-screen.txt").write_text(shown)  # kept for a look when the test fails
        for _ in range(3):  # sheet → designs → request → drawer
            term.keys("Escape")
        term.wait_for("d Design")
        term.keys("C-q")
        deadline = time.monotonic() + 20
        while not status.exists() and time.monotonic() < deadline:
            time.sleep(0.2)
        assert status.exists(), f"drawerfit did not exit on ctrl+q; screen:\n{term.screen()}"
        assert status.read_text().strip() == "0"
    finally:
        term.run("kill-server")
    assert demo_drawer.read_bytes() == before  # looking around writes nothing
