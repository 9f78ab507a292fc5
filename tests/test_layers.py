"""The package layering (tui → optimizer → inventory) and a Textual-free headless core."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def test_import_contracts_hold():
    # import-linter reads the contracts from pyproject.toml.
    lint = Path(sys.executable).with_name("lint-imports")
    if not lint.exists():
        pytest.fail("lint-imports missing: install the test extra (pip install -e '.[test]')")
    done = subprocess.run([str(lint)], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr


@pytest.mark.parametrize("module", ["inventory.drawer", "inventory.store", "optimizer.search.select", "optimizer.physics.analysis", "tui.cli"])
def test_headless_modules_do_not_import_textual(module):
    code = f"import sys, {module}; print('textual' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "False"
