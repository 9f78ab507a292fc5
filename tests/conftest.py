"""Shared test helpers.

Suites that need an outside program (ngspice, tmux) skip when it is missing on a
developer's machine, but fail under CI (CI=true), where .ci/run installs them:
a green CI must mean the comparisons really ran.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys

import pytest
from ortools.sat.python import cp_model

# Make CamelCase CP-SAT calls warn (and so fail under filterwarnings=error).
cp_model.enable_warnings = True


def need_program(name: str) -> str:
    """Path of `name`, or skip (locally) / fail (in CI) when it is not installed."""
    path = shutil.which(name)
    if path:
        return path
    message = f"{name} is not installed (apt-get install -y {name})"
    if os.environ.get("CI"):
        pytest.fail(message)
    pytest.skip(message)
    raise AssertionError("unreachable")


@pytest.fixture
def ngspice() -> str:
    return need_program("ngspice")


@pytest.fixture
def tmux() -> str:
    return need_program("tmux")


@pytest.fixture
def drawer_at(tmp_path, monkeypatch):
    """`drawer_at(data) -> Path`: `data` written as drawer.csv in a fresh working folder, with no
    DRAWERFIT_INVENTORY set, so a command finds that file and no other."""

    def make(data: bytes):
        monkeypatch.chdir(tmp_path)
        monkeypatch.delenv("DRAWERFIT_INVENTORY", raising=False)
        path = tmp_path / "drawer.csv"
        path.write_bytes(data)
        return path

    return make


@pytest.fixture(scope="session")
def chain_saved(tmp_path_factory):
    """(JSON document, saved file) of `drawerfit design` run once a session on the chain drawer's CE+EF
    job (tests/chain_job.py), through the real command line in its own process; shared by
    tests/test_cli_chain.py and tests/test_app_chain.py, so the chain search runs once for both."""
    from tests.chain_job import CLI_JOB, DRAWER, LIMIT_S

    path = tmp_path_factory.mktemp("chain") / "chain.json"
    done = subprocess.run([sys.executable, "-m", "tui", "--inventory", str(DRAWER), *CLI_JOB, "--time-limit",
                           f"{LIMIT_S:g}", "--json", "--save", str(path)], capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr + done.stdout[-2000:]
    return json.loads(done.stdout), path
