"""Reading a `design --save` file back for the app (`drawerfit open FILE`): its shape checked first.

Headless.  The check covers what the screens rely on; a file that fails it is refused
with one line naming the file and what is wrong, before the app starts.
"""

from __future__ import annotations

import json
from pathlib import Path

from .saved_shape import shape_problem


class SavedFileError(Exception):
    """A saved design file that cannot be opened; the message names the file."""


def load_saved(path: str | Path) -> dict:
    """The design result document saved in `path`, or SavedFileError."""
    path = Path(path)
    try:
        doc = json.loads(path.read_bytes().decode("utf-8-sig"))
    except OSError as exc:
        raise SavedFileError(f"{path}: cannot read it ({exc.strerror or exc})") from None
    except UnicodeDecodeError:
        raise SavedFileError(f"{path}: not a saved design file (not UTF-8 text)") from None
    except json.JSONDecodeError as exc:
        raise SavedFileError(f"{path}:{exc.lineno}:{exc.colno}: not a saved design file ({exc.msg})") from None
    except RecursionError:  # brackets nested past what the JSON reader follows
        raise SavedFileError(f"{path}: not a saved design file (nested too deeply)") from None
    if not isinstance(doc, dict) or not isinstance(doc.get("designs"), list):
        raise SavedFileError(f"{path}: not a saved design file (no \"designs\" list; "
                             "write one with `drawerfit design … --save FILE`)")
    for i, design in enumerate(doc["designs"], 1):
        if not isinstance(design, dict) or not isinstance(design.get("parts"), dict):
            raise SavedFileError(f"{path}: design {i} has no \"parts\" map")
        if not isinstance(design.get("predicted", {}), dict):
            raise SavedFileError(f"{path}: design {i}: \"predicted\" is not a map")
    for key in ("why", "hints"):
        if not isinstance(doc.get(key, []), list):
            raise SavedFileError(f"{path}: \"{key}\" is not a list")
    if not isinstance(doc.get("spec", {}), dict):
        raise SavedFileError(f"{path}: \"spec\" is not a map")
    problem = shape_problem(doc)
    if problem:
        raise SavedFileError(f"{path}: {problem}")
    return doc


def saved_inventory(doc: dict) -> str | None:
    """The drawer file the design was made from, when it still exists."""
    name = doc.get("inventory")
    return name if isinstance(name, str) and name and Path(name).is_file() else None
