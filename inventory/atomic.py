"""Whole-file replacement that a crash cannot tear, and the lock every writer takes."""

from __future__ import annotations

import contextlib
import os
import tempfile
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
    fd, tmp = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
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
