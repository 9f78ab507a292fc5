"""Which drawer file to use: --inventory, $DRAWERFIT_INVENTORY, ./drawer.csv, or the user data folder.

The last is started from the bundled demo drawer on first use, and the caller is told where,
so nobody wonders which file their counts went into.  A path the user named that does not
exist is an error, never a silent new file.
"""

from __future__ import annotations

import os
from importlib import resources
from pathlib import Path

import platformdirs

from .atomic import atomic_write

ENV = "DRAWERFIT_INVENTORY"
FILENAME = "drawer.csv"


class InventoryNotFound(Exception):
    """The named drawer file does not exist (or the demo could not be copied)."""


def demo_bytes() -> bytes:
    """The bundled demo drawer file."""
    return resources.files("inventory").joinpath("demo", FILENAME).read_bytes()


def find_inventory(cli_path: str | None, source: str = "--inventory") -> tuple[Path, str | None]:
    """(path of the drawer file, message for the user or None).

    Order: `cli_path`, $DRAWERFIT_INVENTORY, ./drawer.csv, user_data_path("drawerfit")/drawer.csv
    (created from the demo when missing).  `source` says where `cli_path` came from, for the message
    when it does not exist (a saved design's drawer is not an --inventory the user typed).
    """
    if cli_path is not None and not str(cli_path).strip():  # `--inventory "$F"` with F unset: not the default drawer
        raise InventoryNotFound(f"{source}: the file name is empty")
    for named, source in ((cli_path, source), (os.environ.get(ENV), f"${ENV}")):
        if named:
            path = Path(named).expanduser()
            if not path.is_file():
                what = "is a folder, not a file" if path.is_dir() else "does not exist"
                raise InventoryNotFound(f"{path} ({source}) {what}")
            return path, None
    here = Path.cwd() / FILENAME
    if here.is_file():
        return Path(FILENAME), None
    home = platformdirs.user_data_path("drawerfit") / FILENAME
    if home.is_file():
        return home, None
    try:
        home.parent.mkdir(parents=True, exist_ok=True)
        atomic_write(home, demo_bytes())
    except (OSError, FileNotFoundError) as exc:
        raise InventoryNotFound(f"no drawer file given and the demo drawer could not be copied to "
                                f"{home}: {exc}") from None
    return home, (f"no drawer file given: started {home} from the demo drawer "
                  f"(use --inventory FILE or ${ENV} to choose another)")
