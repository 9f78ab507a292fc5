"""Whole-file replacement that a crash cannot tear, and the lock every writer takes."""

from __future__ import annotations

import contextlib
import os
import signal
import tempfile
import threading
from collections.abc import Iterator
from pathlib import Path

import filelock


class LockBusy(Exception):
    """Another drawerfit held the lock for longer than the timeout."""


@contextlib.contextmanager
def locked(path: Path, timeout_s: float = 10.0) -> Iterator[None]:
    """Hold `<path>.lock` (a `filelock` lock beside the file) for the duration."""
    lock = filelock.FileLock(str(path) + ".lock", timeout=timeout_s)
    try:
        lock.acquire()
    except filelock.Timeout:
        raise LockBusy(f"{path} is locked by another drawerfit ({path}.lock); try again") from None
    try:
        yield
    finally:
        lock.release()


def atomic_write(path: Path, data: bytes) -> None:
    """Replace `path` with `data`: temporary file in the same folder, fsync, os.replace, fsync folder.

    The file's permission bits are kept; a symlink is followed so the link stays a link.
    Readers see either the old or the new content, never a mix, whatever moment the process dies.
    """
    target = Path(os.path.realpath(path))
    try:
        mode = target.stat().st_mode & 0o7777
    except FileNotFoundError:
        umask = os.umask(0)
        os.umask(umask)
        mode = 0o666 & ~umask
    fd, tmp = tempfile.mkstemp(dir=target.parent, prefix=temporary_prefix(target), suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        os.chmod(tmp, mode)  # mkstemp made it 0600; keep the file's own bits
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    fsync_dir(target.parent)


def fsync_dir(folder: Path) -> None:
    """Make a rename in `folder` durable where the platform allows it (not on Windows)."""
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)


def append_durably(path: Path, line: bytes) -> None:
    """Append one line to `path`, flushed and fsynced; a torn last line is closed off first."""
    with open(path, "ab+") as f:
        f.seek(0, os.SEEK_END)
        if f.tell() > 0:
            f.seek(-1, os.SEEK_END)
            if f.read(1) != b"\n":
                f.write(b"\n")
        f.write(line)
        f.flush()
        os.fsync(f.fileno())


def temporary_prefix(path: Path) -> str:
    """Name prefix of `atomic_write`'s temporary files for `path` (suffix ".tmp")."""
    return f".{Path(path).name}."


def remove_stale_temporaries(path: Path) -> int:
    """Delete temporary files a killed writer of `path` left beside it; returns how many.

    Call it only while holding `locked(path)`: every writer of the drawer takes that lock, so a
    temporary file seen then belongs to no live writer.
    """
    target = Path(os.path.realpath(path))
    prefix = temporary_prefix(target)
    gone = 0
    try:
        names = [n for n in os.listdir(target.parent) if n.startswith(prefix) and n.endswith(".tmp")]
    except OSError:
        return 0
    for name in names:
        with contextlib.suppress(OSError):
            os.unlink(target.parent / name)
            gone += 1
    return gone


@contextlib.contextmanager
def interrupts_deferred() -> Iterator[None]:
    """Hold SIGINT/SIGTERM back for the duration (main thread, POSIX); they are delivered after.

    Two writes that belong together (the drawer and its journal entry) then cannot be split by
    Ctrl-C.  Elsewhere (another thread, Windows) this does nothing.

    Blocking the main thread's mask is not enough: a process-wide signal (Ctrl-C at the terminal)
    goes to any thread that does not block it (numpy's and the app's worker threads), and Python
    then runs the handler in the main thread anyway.  So for the duration the handlers only note
    the signal, and it is raised again, with the handlers as they were, once the block ends.
    """
    if not hasattr(signal, "pthread_sigmask") or threading.current_thread() is not threading.main_thread():
        yield
        return
    held = (signal.SIGINT, signal.SIGTERM)
    caught: list[int] = []
    handlers = {}
    for sig in held:
        previous = signal.getsignal(sig)
        if previous is not None:  # None: a handler not installed from Python; leave it alone
            handlers[sig] = previous
            signal.signal(sig, lambda signum, frame: caught.append(signum))
    old = signal.pthread_sigmask(signal.SIG_BLOCK, set(held))
    try:
        yield
    finally:
        for sig, previous in handlers.items():
            signal.signal(sig, previous)
        signal.pthread_sigmask(signal.SIG_SETMASK, old)  # a signal held by the mask is delivered here
        for sig in dict.fromkeys(caught):
            signal.raise_signal(sig)
