"""The file system failing under a change: full disk, I/O errors, read-only folder, a journal that
cannot be written, the drawer deleted or replaced meanwhile, temporaries left by killed writers.

Each failure is simulated inside the writer (monkeypatch), so the tests also hold when run as root.
Every case: a clear message, the drawer's bytes and its journal as they were.  Invented fixtures.
"""

from __future__ import annotations

import errno
import os
import signal
from pathlib import Path

import pytest

from inventory import atomic
from inventory.journal import Journal, journal_path
from inventory.store import Store, StoreError
from tui.cli import main

GOOD = b"kind,value,qty,location\nresistor,4k7,10,A1\nresistor,1k,5,A2\n"


@pytest.fixture
def drawer(drawer_at) -> Path:
    return drawer_at(GOOD)


def _temporaries(folder: Path) -> list[Path]:
    return sorted(folder.glob(".drawer.csv.*.tmp"))


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EIO])
@pytest.mark.parametrize("where", ["write", "fsync", "replace"])
def test_a_failing_write_changes_nothing(drawer, monkeypatch, capsys, code, where):
    assert main(["count", "2", "9"]) == 0  # one entry already in the journal
    before, journal_before = drawer.read_bytes(), journal_path(drawer).read_bytes()

    def fail(*a, **k):
        raise OSError(code, os.strerror(code))

    if where == "write":  # the data write itself (a full disk shows here)
        real_fdopen = os.fdopen

        class Failing:
            def __init__(self, f):
                self.f = f

            def __enter__(self):
                return self

            def __exit__(self, *exc):
                self.f.close()

            def write(self, data):
                fail()

        monkeypatch.setattr(atomic.os, "fdopen", lambda fd, mode: Failing(real_fdopen(fd, mode)))
    else:
        monkeypatch.setattr(atomic.os, where, fail)
    assert main(["count", "2", "-1"]) == 2
    err = capsys.readouterr().err
    assert os.strerror(code) in err and "drawer.csv" in err and "Traceback" not in err
    monkeypatch.undo()
    assert drawer.read_bytes() == before
    assert journal_path(drawer).read_bytes() == journal_before
    assert _temporaries(drawer.parent) == []


def test_read_only_folder(drawer, monkeypatch, capsys):
    def denied(*a, **k):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(atomic.tempfile, "mkstemp", denied)
    assert main(["add", "resistor", "22k", "--qty", "1"]) == 2
    assert "Permission denied" in capsys.readouterr().err
    assert drawer.read_bytes() == GOOD and not journal_path(drawer).exists()


def test_journal_that_cannot_be_written_leaves_the_drawer_as_it_was(drawer, capsys):
    # Finding 13: a journal that cannot be appended to (here a folder in its place) used to leave the
    # drawer rewritten.  Both or neither.
    journal_path(drawer).mkdir()
    assert main(["count", "2", "+1"]) == 2
    err = capsys.readouterr().err
    assert "journal" in err and "nothing was written" in err
    assert drawer.read_bytes() == GOOD
    assert _temporaries(drawer.parent) == []


def test_journal_failure_after_the_save_puts_the_old_bytes_back(drawer, monkeypatch):
    store = Store(drawer)
    store.load()

    def full(self, entry):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(Journal, "append", full)
    with pytest.raises(StoreError, match="was not kept"):
        store.take([(2, 3)], "build")
    assert drawer.read_bytes() == GOOD


def test_ctrl_c_is_held_back_until_drawer_and_journal_are_both_written(drawer, monkeypatch):
    """SIGINT arriving between the drawer save and the journal append is delivered after both."""
    real_append = Journal.append
    seen = []

    def append_with_interrupt(self, entry):
        os.kill(os.getpid(), signal.SIGINT)  # Ctrl-C lands in the middle of the commit
        seen.append("appended")
        real_append(self, entry)

    monkeypatch.setattr(Journal, "append", append_with_interrupt)
    store = Store(drawer)
    store.load()
    # Python's own handler (a solver run earlier in the session may have installed another).
    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    try:
        with pytest.raises(KeyboardInterrupt):
            store.set_qty(2, 3)
    finally:
        signal.signal(signal.SIGINT, previous)
    assert seen == ["appended"]
    assert b"resistor,4k7,3,A1" in drawer.read_bytes()
    assert len(Journal(journal_path(drawer)).read()) == 1


def test_stale_temporaries_are_cleaned_up_on_the_next_write(drawer):
    stale = [drawer.parent / ".drawer.csv.abc123.tmp", drawer.parent / ".drawer.csv.zz.tmp"]
    for s in stale:
        s.write_bytes(b"half a file")
    other = drawer.parent / ".other.csv.abc.tmp"  # another file's temporary is not ours to remove
    other.write_bytes(b"x")
    assert main(["count", "2", "+1"]) == 0
    assert _temporaries(drawer.parent) == [] and other.exists()


def test_drawer_deleted_meanwhile(drawer, capsys):
    store = Store(drawer)
    store.load()
    drawer.unlink()
    with pytest.raises(StoreError, match="cannot read"):
        store.set_qty(2, 1)
    assert not drawer.exists()  # never re-created from memory: the user removed it


def test_drawer_replaced_meanwhile_finds_the_part_again(drawer):
    store = Store(drawer)
    store.load()
    drawer.write_bytes(b"kind,value,qty,location\nresistor,1k,5,A2\nresistor,22k,1,A9\nresistor,4k7,10,A1\n")
    store.adjust_qty(2, -2)  # line 2 was the 4k7 when loaded; it is line 4 now
    assert b"resistor,4k7,8,A1" in drawer.read_bytes() and b"resistor,1k,5,A2" in drawer.read_bytes()


def test_drawer_replaced_by_a_binary_file_meanwhile(drawer):
    store = Store(drawer)
    store.load()
    junk = bytes(range(256)) * 4
    drawer.write_bytes(junk)
    with pytest.raises(StoreError, match="nothing was written"):
        store.set_qty(2, 1)
    assert drawer.read_bytes() == junk
