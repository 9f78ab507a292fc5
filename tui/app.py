"""The terminal app: one factory shared by the command line and the tests.

The app holds the drawer file's `Store` and the last `Drawer` read from it; every
write goes through `App.write()`, which shows the store's refusal instead of
raising, then re-reads the file so every screen shows what is on disk.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from pathlib import Path

from textual.app import App
from textual.binding import Binding

from inventory.drawer import Drawer
from inventory.locate import InventoryNotFound, find_inventory
from inventory.store import Store, StoreError

from .saved import SavedFileError, load_saved, saved_inventory
from .themes import DARK, LIGHT, THEMES
from .widgets.palette import ActionsProvider


class DrawerfitApp(App[int]):
    """Keyboard-driven drawer keeping and stage design."""

    TITLE = "drawerfit"
    CSS_PATH = "app.tcss"
    COMMANDS = {ActionsProvider}  # drawerfit's actions only, none of the framework's stock entries
    BINDINGS = [
        Binding("ctrl+q", "quit", "Quit", id="app.quit", priority=True, tooltip="Leave drawerfit"),
        Binding("f2", "toggle_theme", "Light/dark", id="app.theme", show=False,  # in the palette and the key list
                tooltip="Switch between the bench (light) and bakelite (dark) colours"),
        Binding("f1", "toggle_keys", "Key list", id="app.keys", tooltip="Show or hide every key of this screen"),
        Binding("ctrl+o", "open_saved", "Open saved designs", id="app.open", show=False,
                tooltip="Show the designs of a file saved with `drawerfit design --save`"),
    ]

    def __init__(self, inventory_path: Path, *, notice: str | None = None, opened: dict | None = None) -> None:
        super().__init__()
        for theme in THEMES:
            self.register_theme(theme)
        self.opened = opened  # a saved design document to show first (`drawerfit open FILE`)
        self.inventory_path = Path(inventory_path)
        self.store = Store(self.inventory_path)
        self.notice = notice
        self.drawer: Drawer | None = None
        self.load_error: str | None = None
        self.last_request: dict[str, object] = {}  # the design request's fields, kept between visits
        self.theme = DARK
        self.read()

    def on_mount(self) -> None:
        from .screens.drawer import DrawerScreen

        self.sub_title = str(self.inventory_path)
        self.screen_change_signal.subscribe(self, self.mark_headers)
        self.push_screen(DrawerScreen())
        if self.opened is not None:
            from .screens.results import ResultsScreen

            self.push_screen(ResultsScreen(self.opened))
        if self.notice:
            self.notify(self.notice, title="Drawer file", timeout=8, markup=False)  # a path is text

    def mark_headers(self, screen) -> None:
        """drawerfit's mark in the header of every screen, whichever header widget the screen uses."""
        from textual.widgets import Header

        from .widgets.masthead import MARK

        def mark() -> None:
            for header in screen.query(Header):
                header.icon = MARK

        screen.call_after_refresh(mark)

    # ---- the drawer file -----------------------------------------------------------------

    def reload(self) -> None:
        """Re-read the drawer file and redraw every screen that shows it."""
        self.read()
        for screen in self.screen_stack:
            refresh = getattr(screen, "drawer_changed", None)
            if refresh is not None and screen.is_mounted:
                refresh()

    def read(self) -> None:
        """Read the drawer file; a file that cannot be read is reported, not raised."""
        try:
            self.drawer = self.store.load()
            self.load_error = None
        except StoreError as exc:
            self.drawer = None
            self.load_error = str(exc)

    def write(self, change: Callable[[], object], done: str) -> str | None:
        """Run one store write; on refusal return (and show) the reason, else None."""
        try:
            change()
        except (StoreError, ValueError, OSError) as exc:
            message = str(exc) or type(exc).__name__
            # The store's messages quote the user's cells; they are text, never markup.
            self.notify(message, title="Not saved", severity="error", timeout=10, markup=False)
            self.reload()
            return message
        self.reload()
        self.notify(done, title="Saved", markup=False)
        return None

    # ---- actions -------------------------------------------------------------------------

    def action_toggle_theme(self) -> None:
        self.theme = LIGHT if self.theme == DARK else DARK

    def action_open_saved(self) -> None:
        from .screens.open_saved import OpenSavedDialog
        from .screens.results import ResultsScreen

        def show(doc: dict | None) -> None:
            if doc is not None:
                self.push_screen(ResultsScreen(doc))

        self.push_screen(OpenSavedDialog(), show)

    def action_toggle_keys(self) -> None:
        from textual.widgets import HelpPanel

        if self.screen.query(HelpPanel):
            self.action_hide_help_panel()
        else:
            self.action_show_help_panel()


def make_app(inventory_path: str | Path | None = None, open_file: str | Path | None = None) -> DrawerfitApp:
    """The app on `inventory_path` (or the drawer file found the usual way).

    `open_file`: a `design --save` file to open on its designs (SavedFileError when it is not
    one); its drawer file is used when no `inventory_path` is given and that file still exists.
    """
    opened = load_saved(open_file) if open_file is not None else None
    if inventory_path is None and opened is not None:
        inventory_path = saved_inventory(opened)
    path, message = find_inventory(str(inventory_path) if inventory_path is not None else None)
    return DrawerfitApp(path, notice=message, opened=opened)


def run_app(inventory_path: str | None, open_file: str | None = None) -> int:
    """Run the app in this terminal; the exit code for the shell (2: a file named cannot be used)."""
    try:
        app = make_app(inventory_path, open_file)
    except (InventoryNotFound, SavedFileError, OSError) as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    result = app.run()
    return int(result or 0)
