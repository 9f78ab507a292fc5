"""Monkey trials of the terminal app: seeded random keys over every screen and dialog.

Each session opens the app with Pilot on a private copy of a drawer (the demo drawer, or the
demo with broken lines appended), at 80×24 or 100×32, or resizing down to 40 columns on the
way, presses an opening sequence that reaches one screen and then random keys, and checks:

- no exception escapes the app, and the app ends only when asked to (it is still running, or it
  quit through its own quit action);
- the drawer file is byte-identical when nothing was journaled; when changes were confirmed,
  undoing every one of them through the store gives the file back byte for byte (so every
  change was journaled and nothing of the user's data was lost);
- no session hangs (each has a time limit).

The design solver is replaced by a stand-in that answers at once with canned results (a real
solve of the demo job, and a real infeasible one, each computed once per process), so the
results and build-sheet screens are reached without long solves.

`python -m tests.helpers.app_monkey [SESSIONS] [KEYS]` prints the figures.
"""

from __future__ import annotations

import asyncio
import contextlib
import copy
import io
import dataclasses
import itertools
import os
import random
import shutil
import sys
import tempfile
import time
import traceback
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

from tests.demo_job import DEMO, JOB

SIZES = ((80, 24), (100, 32))
RESIZES = ((40, 24), (40, 12), (60, 20), (80, 24), (100, 32), (132, 43))
BROKEN_LINES = (
    "resistor,4k7k,3,5%,1/4W,,,,,,,,,,B3,typo in the value\n"
    "capacitor,100n,x,,,,,,,,,,,,C1,\n"
    'transistor,,2,,,,"BC5""47,NPN,abc,800,45V,,,C2,broken quote\n'
    "widget,12,1,,,,,,,,,,,,Z9,unknown kind\n"
    "resistor,10k,4,5%,1/4W,,,,,,,,,,B3,extra,cells,here\n"
    "resistor,3k9,2,5%,1/4W,,,,,,,,,,[/b],[bold] square brackets are text\n"
)
SESSION_TIME_LIMIT_S = 120.0

# Keys by kind; a session draws a kind by weight, then a key of it.
NAVIGATION = ("up", "down", "left", "right", "pageup", "pagedown", "home", "end", "tab", "shift+tab")
ANSWERS = ("enter", "escape", "y", "n", "space")
ACTIONS = ("a", "e", "c", "x", "s", "S", "l", "d", "h", "u", "b", "slash", "f2", "f5", "ctrl+s", "ctrl+r",
           "ctrl+p", "ctrl+c")
TYPING = (*"0123456789kKmMuUnpRrVW.%+-", *"abcdefghijklmnopqrstuvwxyz", "backspace", "delete",
          "left_square_bracket", "right_square_bracket")
KINDS = ((NAVIGATION, 0.3), (ANSWERS, 0.2), (ACTIONS, 0.22), (TYPING, 0.28))
# (ctrl+p is one action key of 18; the palette then takes the typed keys until esc or enter.)
# Opening moves, so every screen is reached early in some session.
OPENERS = (
    (), ("a",), ("e",), ("c",), ("x",), ("l",), ("h",), ("h", "u"), ("d",), ("d", "f5"),
    ("d", "f5", "enter"), ("d", "f5", "enter", "b"), ("ctrl+p",), ("slash",), ("4", "k"),
    ("c", "3", "enter"), ("x", "y"), ("e", "2", "ctrl+s"),  # confirmed changes, checked against the journal
)


@dataclass
class Tally:
    """What a run of sessions found."""

    sessions: int = 0
    keys: int = 0
    exceptions: int = 0
    hangs: int = 0
    data_faults: int = 0          # file changed without a journal entry, or not restored by undo
    changes_confirmed: int = 0    # sessions whose confirmed changes were journaled (and undone after)
    screens: Counter = field(default_factory=Counter)
    failures: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not (self.exceptions or self.hangs or self.data_faults)

    def add(self, other: Tally) -> None:
        for f in ("sessions", "keys", "exceptions", "hangs", "data_faults", "changes_confirmed"):
            setattr(self, f, getattr(self, f) + getattr(other, f))
        self.screens.update(other.screens)
        self.failures.extend(other.failures)


# ---- the solver stand-in -----------------------------------------------------------------

_CANNED: list[dict] = []


def canned_results(find_designs) -> list[dict]:
    """A real solve of the demo job and a real infeasible one (Rin beyond any divider), once."""
    if not _CANNED:
        from inventory.drawer import Drawer

        drawer = Drawer.load(DEMO)
        _CANNED.append(find_designs(drawer, JOB, top=3, depth=3))
        _CANNED.append(find_designs(drawer, dataclasses.replace(JOB, min_rin_ohms=50e6), top=3, depth=3))
    return _CANNED


@contextlib.contextmanager
def quick_solver():
    """Replace the solver with one that answers at once, alternating the two canned results."""
    from optimizer.search import select

    turn = itertools.count()
    real = select.find_designs

    def stand_in(drawer, spec, *, progress=None, cancel=None, **_):
        results = canned_results(real)  # solved on first use only (a few seconds, in the worker thread)
        if progress is not None:
            progress(0.5, "monkey trial: a canned result")
        if cancel is not None and cancel.is_set():
            raise RuntimeError("stopped")
        return copy.deepcopy(results[next(turn) % len(results)])

    select.find_designs = stand_in
    try:
        yield
    finally:
        select.find_designs = real


# ---- one session -------------------------------------------------------------------------

def random_key(rng: random.Random) -> str:
    keys = rng.choices([k for k, _ in KINDS], weights=[w for _, w in KINDS])[0]
    return rng.choice(keys)


def make_drawer(folder: Path, broken: bool) -> Path:
    path = folder / "drawer.csv"
    shutil.copyfile(DEMO, path)
    if broken:
        with path.open("a", encoding="utf-8", newline="") as f:
            f.write(BROKEN_LINES)
    return path


async def session(folder: Path, seed: int, n_keys: int, *, broken: bool, size: tuple[int, int],
                  resize: bool, opener: tuple[str, ...] = (), exclude: frozenset[str] = frozenset()) -> Tally:
    """One seeded session on a fresh drawer in `folder`; the tally of what it found."""
    from tui.app import make_app

    rng = random.Random(seed)
    path = make_drawer(folder, broken)
    start = path.read_bytes()
    tally = Tally(sessions=1)
    keys = [*opener] + [k for k in (random_key(rng) for _ in range(n_keys)) if k not in exclude]
    pressed: list[str] = []
    screen = "DrawerScreen"
    where = f"seed {seed} ({'broken' if broken else 'demo'} drawer, {size[0]}x{size[1]}" \
            f"{', resizing' if resize else ''})"
    app = make_app(path)
    try:
        # The app prints a crash's traceback to stderr as it ends; the tally reports it in one line.
        with contextlib.redirect_stderr(io.StringIO()):
            async with app.run_test(size=size) as pilot:
                for key in keys:
                    if resize and rng.random() < 0.06:
                        w, h = rng.choice(RESIZES)
                        pressed.append(f"<{w}x{h}>")
                        await pilot.resize_terminal(w, h)
                    await pilot.press(key)
                    pressed.append(key)
                    tally.keys += 1
                    if app._exception is not None or not app.is_running:
                        break
                    screen = type(app.screen).__name__
                    tally.screens[screen] += 1
                await pilot.pause()
    except Exception as exc:  # noqa: BLE001 - this is what the trial counts
        tally.exceptions += 1
        tb = traceback.extract_tb(exc.__traceback__)
        frame = next((f for f in reversed(tb) if "/tui/" in f.filename or "/inventory/" in f.filename
                      or "/optimizer/" in f.filename), tb[-1] if tb else None)
        at = f"{Path(frame.filename).name}:{frame.lineno}" if frame else "?"
        tally.failures.append(f"{where}: {type(exc).__name__}: {exc} at {at} on {screen}; "
                              f"last keys {' '.join(pressed[-25:])}")
    if app._exception is not None and not tally.exceptions:
        tally.exceptions += 1
        tally.failures.append(f"{where}: {type(app._exception).__name__}: {app._exception}")
    check_file(path, start, where, tally)
    return tally


def check_file(path: Path, start: bytes, where: str, tally: Tally) -> None:
    """Unchanged unless journaled; and every journaled change undoes back to the very bytes."""
    from inventory.store import NothingToUndo, Store, StoreError

    store = Store(path)
    entries = store.history()
    if not entries:
        if path.read_bytes() != start:
            tally.data_faults += 1
            tally.failures.append(f"{where}: the drawer file changed but nothing was journaled")
        return
    tally.changes_confirmed += 1
    for _ in range(2 * len(entries) + 2):
        try:
            store.load()
            store.undo(None, reason="monkey trial: put back")
        except NothingToUndo:
            break
        except StoreError as exc:
            tally.data_faults += 1
            tally.failures.append(f"{where}: cannot undo a confirmed change: {exc}")
            return
    if path.read_bytes() != start:
        tally.data_faults += 1
        tally.failures.append(f"{where}: undoing every journaled change did not give the file back")


async def run_sessions(n_sessions: int, n_keys: int, *, seed: int = 0, folder: Path | None = None,
                       exclude: tuple[str, ...] = ()) -> Tally:
    """`n_sessions` sessions cycling through both drawers, both sizes and the resizing run.

    `exclude`: keys never pressed (e.g. ("d", "ctrl+p") keeps to the drawer-side screens).
    """
    total = Tally()
    with contextlib.ExitStack() as stack:
        base = Path(folder) if folder is not None else Path(stack.enter_context(tempfile.TemporaryDirectory()))
        stack.enter_context(quick_solver())
        here = Path.cwd()
        try:
            for i in range(n_sessions):
                s = seed * 100_003 + i
                where = base / f"s{i}"
                where.mkdir(parents=True, exist_ok=True)
                os.chdir(where)  # anything a screen saves (screenshots, exports) lands here
                broken = i % 2 == 1
                size = SIZES[(i // 2) % 2]
                resize = i % 3 == 2
                try:
                    tally = await asyncio.wait_for(
                        session(where, s, n_keys, broken=broken, size=size, resize=resize,
                                opener=tuple(k for k in OPENERS[i % len(OPENERS)] if k not in exclude),
                                exclude=frozenset(exclude)),
                        SESSION_TIME_LIMIT_S)
                except TimeoutError:
                    tally = Tally(sessions=1, hangs=1, failures=[f"seed {s}: no end in {SESSION_TIME_LIMIT_S:.0f} s"])
                total.add(tally)
        finally:
            os.chdir(here)
    return total


def run(n_sessions: int, n_keys: int, seed: int = 0) -> Tally:
    return asyncio.run(run_sessions(n_sessions, n_keys, seed=seed))


def figures(tally: Tally, seconds: float) -> list[str]:
    lines = [
        f"app monkey: {tally.sessions} sessions, {tally.keys} keys, {tally.exceptions} exceptions, "
        f"{tally.hangs} hangs, {tally.data_faults} data faults ({seconds:.0f} s)",
        f"  sessions with confirmed changes (journaled, then undone byte for byte): {tally.changes_confirmed}",
        "  keys per screen: " + ", ".join(f"{name} {n}" for name, n in tally.screens.most_common()),
    ]
    lines += [f"  FAIL {f}" for f in tally.failures]
    return lines


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    n_sessions = int(argv[0]) if argv else 24
    n_keys = int(argv[1]) if len(argv) > 1 else 150
    t0 = time.monotonic()
    tally = run(n_sessions, n_keys)
    print("\n".join(figures(tally, time.monotonic() - t0)))
    return 0 if tally.ok else 1


if __name__ == "__main__":
    raise SystemExit(main())
