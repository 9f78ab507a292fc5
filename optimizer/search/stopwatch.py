"""When a search must stop: the user's cancel event and the time limit, polled from deep loops.

`watch(cancel, deadline, quiet)` installs a watch for the current thread (the app solves in a
worker thread, the CLI in the main one); `poll()` raises `Cancelled`, `OutOfTime` or
`Settled` (the caller's `quiet()` says its result has stopped changing) when it is due.  The branch-and-bound loops poll once per round, so a stop lands within a few
tens of milliseconds wherever the search is.
"""

from __future__ import annotations

import threading
import time
from contextlib import contextmanager


def seconds_text(x: float) -> str:
    """Seconds to three digits, as a message shows a limit or a share of one: 10, 2.5, 86400, 0.635 (never
    0.635237, the share `--topology any` gives a kind)."""
    return f"{float(f'{x:.3g}'):g}"


class Stopped(Exception):
    """The search was asked to stop; what was found so far stands."""


class Cancelled(Stopped):
    pass


class OutOfTime(Stopped):
    pass


class Settled(Stopped):
    """The anytime search's result has not changed for its patience period (select.py's stop rule)."""


_local = threading.local()


class Watch:
    def __init__(self, cancel=None, deadline=None, quiet=None):
        self.cancel = cancel
        self.deadline = deadline  # time.perf_counter() value, or None
        self.quiet = quiet  # callable() -> True (a settled stop is due), a Stopped class, or falsy; or None

    def due(self) -> type[Stopped] | None:
        if self.cancel is not None and self.cancel.is_set():
            return Cancelled
        if self.deadline is not None and time.perf_counter() >= self.deadline:
            return OutOfTime
        if self.quiet is not None:
            due = self.quiet()
            if due:
                return due if isinstance(due, type) else Settled
        return None

    def left(self) -> float:
        return float("inf") if self.deadline is None else self.deadline - time.perf_counter()


@contextmanager
def watch(cancel=None, deadline=None, quiet=None):
    """Install a Watch for this thread (nesting keeps the earlier deadline if it is sooner; a nested
    watch does not inherit `quiet`: work it guards must not be cut off by a settled stop)."""
    outer = getattr(_local, "watch", None)
    if outer is not None and outer.deadline is not None:
        deadline = outer.deadline if deadline is None else min(deadline, outer.deadline)
    w = Watch(cancel if cancel is not None else (outer.cancel if outer else None), deadline, quiet)
    _local.watch = w
    try:
        yield w
    finally:
        _local.watch = outer


def current() -> Watch | None:
    return getattr(_local, "watch", None)


def poll() -> None:
    """Raise Cancelled, OutOfTime or Settled if the current thread's watch is due."""
    w = getattr(_local, "watch", None)
    if w is not None:
        due = w.due()
        if due is not None:
            raise due()


def afford(seconds: float) -> None:
    """poll(), then raise OutOfTime if the current thread's watch has less than `seconds` left: for a
    step that cannot poll once started (a sort of millions of values), asked before it starts."""
    poll()
    w = getattr(_local, "watch", None)
    if w is not None and w.left() < seconds:
        raise OutOfTime()
