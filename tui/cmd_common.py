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
from inventory.values import ValueFormatError, parse_number


class InputError(Exception):
    """Bad command-line input or an unusable file; the message names the option or the file."""


def say(message: str) -> None:
    print(f"drawerfit: {message}", file=sys.stderr)


def drawer_path(cli_path: str | None, source: str = "--inventory") -> Path:
    """The drawer file to use (InputError when a named one does not exist); `source`: where `cli_path`
    came from, for that message."""
    try:
        path, message = find_inventory(cli_path, source)
    except InventoryNotFound as exc:
        raise InputError(str(exc)) from None
    if message:
        say(message)
    return path


def load_drawer(path: Path) -> Drawer:
    """The parsed drawer file; InputError when it cannot be read, is not a UTF-8 CSV file or its header is
    no drawer header."""
    try:
        drawer = Drawer.load(path)
    except OSError as exc:
        raise InputError(f"{path}: cannot read the drawer file ({exc.strerror or exc})") from None
    if drawer.trouble:
        raise InputError(f"{path}: {drawer.trouble}")
    fault = drawer.header_fault()
    if fault:  # another CSV file, or a drawer whose header was broken: every line would be left out
        line = drawer.records[drawer.header].line
        raise InputError(f"{path}:{line}: not a drawer file: the header {fault} (`drawerfit check` lists "
                         "every problem)")
    return drawer


def output_path(text: str | None, flag: str) -> Path | None:
    """The file `--flag` names to write, checked before any work is spent on it (InputError: an empty name,
    a folder, or a folder that does not exist).  What only the write can tell (permissions, a full disk)
    is said when it fails."""
    if text is None:
        return None
    if not str(text).strip():
        raise InputError(f"{flag}: the file name is empty")
    path = Path(text)
    if path.is_dir():
        raise InputError(f"{flag} {text}: is a folder, not a file")
    if not path.absolute().parent.is_dir():
        raise InputError(f"{flag} {text}: the folder {path.absolute().parent} does not exist")
    return path


def value(text: str | None, parse, flag: str, *, positive: bool = False, finite: bool = True) -> float | None:
    """`parse(text)` (None stays None), or InputError naming `--flag`."""
    if text is None:
        return None
    try:
        v = parse(str(text))
    except (ValueFormatError, ValueError) as exc:
        raise InputError(f"--{flag}: {refusal(str(text), parse, exc)}") from None
    if (finite and not math.isfinite(v)) or (positive and not v > 0):
        raise InputError(f"--{flag}: {text!r}; expected a finite value above 0")
    return v


def refusal(text: str, parse, exc: Exception) -> str:
    """Why `parse` refused `text`: its own message, or a plainer one for a number below 0 or a 0 the parser
    does not take ("-1" and "0" are numbers, so "is not a number" / "is not a voltage" would mislead)."""
    s = text.strip()
    if s[:1] in ("-", "\u2212"):
        try:
            parse(s[1:])
        except (ValueFormatError, ValueError):
            return str(exc)
        return f'"{s}" is below 0, which has no meaning here'
    try:
        is_zero = parse_number(s) == 0
    except (ValueFormatError, ValueError):
        is_zero = False
    return f'"{s}": expected a value above 0' if is_zero else str(exc)


def whole(text: str, flag: str, lo: int, hi: int) -> int:
    """A whole number in lo..hi from `--flag`'s text, or InputError naming it."""
    try:
        v = int(str(text).strip())
    except ValueError:
        raise InputError(f"--{flag}: {text!r} is not a whole number (expected {lo}..{hi})") from None
    if not lo <= v <= hi:
        raise InputError(f"--{flag}: {v} is outside {lo}..{hi}")
    return v
