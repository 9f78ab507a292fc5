"""What every subcommand shares: bad-input errors naming the option, and reading the drawer file.

A drawer file that cannot be read (no permission, a folder, gone) or is not UTF-8 CSV text
(binary, UTF-16) is bad input: one line naming the file, exit 2, nothing written.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

from inventory.drawer import Drawer
from inventory.locate import InventoryNotFound, find_inventory
from inventory.values import ValueFormatError


class InputError(Exception):
    """Bad command-line input or an unusable file; the message names the option or the file."""


def say(message: str) -> None:
    print(f"drawerfit: {message}", file=sys.stderr)


def drawer_path(cli_path: str | None) -> Path:
    """The drawer file to use (InputError when a named one does not exist)."""
    try:
        path, message = find_inventory(cli_path)
    except InventoryNotFound as exc:
        raise InputError(str(exc)) from None
    if message:
        say(message)
    return path


def load_drawer(path: Path) -> Drawer:
    """The parsed drawer file; InputError when it cannot be read or is not a UTF-8 CSV file."""
    try:
        drawer = Drawer.load(path)
    except OSError as exc:
        raise InputError(f"{path}: cannot read the drawer file ({exc.strerror or exc})") from None
    if drawer.trouble:
        raise InputError(f"{path}: {drawer.trouble}")
    return drawer


def value(text: str | None, parse, flag: str, *, positive: bool = False, finite: bool = True) -> float | None:
    """`parse(text)` (None stays None), or InputError naming `--flag`."""
    if text is None:
        return None
    try:
        v = parse(str(text))
    except (ValueFormatError, ValueError) as exc:
        raise InputError(f"--{flag}: {exc}") from None
    if (finite and not math.isfinite(v)) or (positive and not v > 0):
        raise InputError(f"--{flag}: {text!r}; expected a finite value above 0")
    return v


def whole(text: str, flag: str, lo: int, hi: int) -> int:
    """A whole number in lo..hi from `--flag`'s text, or InputError naming it."""
    try:
        v = int(str(text).strip())
    except ValueError:
        raise InputError(f"--{flag}: {text!r} is not a whole number (expected {lo}..{hi})") from None
    if not lo <= v <= hi:
        raise InputError(f"--{flag}: {v} is outside {lo}..{hi}")
    return v
