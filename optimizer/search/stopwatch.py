"""When a search must stop: the user's cancel event and the time limit, polled from deep loops.

`watch(cancel, deadline)` installs a watch for the current thread (the app solves in a
worker thread, the CLI in the main one); `poll()` raises `Cancelled` or `OutOfTime` when
it is due.  The branch-and-bound loops poll once per round, so a stop lands within a few
tens of milliseconds wherever the search is.
"""

from __future__ import annotations

import threading
import time
from contextlib import contextmanager


class Stopped(Exception):
    """The search was asked to stop; what was found so far stands."""


class Cancelled(Stopped):
    pass


class OutOfTime(Stopped):
    pass


_local = threading.local()


class Watch:
    def __init__(self, cancel=None, deadline=None):
        self.cancel = cancel
        self.deadline = deadline  # time.perf_counter() value, or None

    def due(self) -> type[Stopped] | None:
        if self.cancel is not None and self.cancel.is_set():
            return Cancelled
        if self.deadline is not None and time.perf_counter() >= self.deadline:
            return OutOfTime
        return None

    def left(self) -> float:
        return float("inf") if self.deadline is None else self.deadline - time.perf_counter()


@contextmanager
def watch(cancel=None, deadline=None):
    """Install a Watch for this thread (nesting keeps the earlier deadline if it is sooner)."""
    outer = getattr(_local, "watch", None)
    if outer is not None and outer.deadline is not None:
        deadline = outer.deadline if deadline is None else min(deadline, outer.deadline)
    w = Watch(cancel if cancel is not None else (outer.cancel if outer else None), deadline)
    _local.watch = w
    try:
        yield w
    finally:
        _local.watch = outer


def current() -> Watch | None:
    return getattr(_local, "watch", None)


def poll() -> None:
    """Raise Cancelled or OutOfTime if the current thread's watch is due."""
    w = getattr(_local, "watch", None)
    if w is not None:
        due = w.due()
        if due is not None:
            raise due()
