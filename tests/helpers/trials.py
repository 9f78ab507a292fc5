"""Crash and concurrency trials on a real drawer file, shared by the tests and `figures.py`.

Children are forked (no re-import), so a trial costs milliseconds and 100 of them run in seconds.
"""

from __future__ import annotations

import multiprocessing
import os
import random
import signal
import time
from pathlib import Path

from inventory.drawer import Drawer
from inventory.journal import Journal, journal_path
from inventory import store as store_module
from inventory.store import Store, StoreError

_FORK = multiprocessing.get_context("fork")


def big_drawer(rows: int = 150) -> bytes:
    """An invented drawer file of `rows` resistor lines (large enough that a save takes a while)."""
    lines = ["kind,value,qty,tolerance,location,notes"]
    for i in range(rows):
        lines.append(f"resistor,{(i % 90) + 10}k,{i % 7},1%,bin {i},\"metal film, batch {i}\"")
    return ("\r\n".join(lines) + "\r\n").encode()


def _write_in_place(path, data: bytes) -> None:
    """The unsafe way (truncate, then write piece by piece), to show the trial can see tearing."""
    with open(path, "wb") as f:
        for i in range(0, len(data), 512):
            f.write(data[i:i + 512])
            f.flush()
            os.fsync(f.fileno())


def _save_forever(path: str, ready, unsafe: bool = False) -> None:
    if unsafe:
        store_module.atomic_write = _write_in_place  # only in this forked child
    store = Store(path)
    store.load()
    qty = 1
    ready.set()
    while True:
        try:
            store.set_qty(2, qty, "crash trial")
        except StoreError:  # only after an unsafe writer tore the file: nothing more to show
            return
        qty = 3 - qty  # 1, 2, 1, 2 … so the file is always one of three known contents


def kill_trials(folder: Path, trials: int = 100, seed: int = 20261201, *, unsafe: bool = False) -> dict:
    """Kill a child saving in a loop with SIGKILL at random moments; check the file every time.

    Half the kills come at a random moment, half just after a temporary file appears (inside the
    write).  Returns figures: trials, torn (file not one of the known contents), mid_save (a
    temporary file was left behind: the kill landed inside a write), journal_entries, save_ms.
    """
    rng = random.Random(seed)
    path = folder / "drawer.csv"
    path.write_bytes(big_drawer())
    first = path.read_bytes()  # line 2 is "resistor,10k,0,…"; the child sets its qty to 1 or 2
    known = {first} | {first.replace(b"resistor,10k,0,", b"resistor,10k,%d," % q, 1) for q in (1, 2)}
    probe = folder / "probe.csv"  # time one save here, so the kills spread over a few saves
    probe.write_bytes(first)
    t0 = time.perf_counter()
    Store(probe).set_qty(2, 1)
    save_s = time.perf_counter() - t0
    torn = mid_save = 0
    for trial in range(trials):
        if unsafe:  # each control trial starts from a whole file
            path.write_bytes(first)
        ready = _FORK.Event()
        child = _FORK.Process(target=_save_forever, args=(str(path), ready, unsafe))
        child.start()
        ready.wait(10)
        if trial % 2:  # every other kill aims at the write itself: as soon as it shows on disk
            deadline = time.perf_counter() + max(10 * save_s, 5.0)
            while not _writing(folder, path, len(first), unsafe) and time.perf_counter() < deadline:
                pass
            time.sleep(rng.uniform(0.0, 0.0005))
        else:
            time.sleep(rng.uniform(0.0, 3 * save_s))
        os.kill(child.pid, signal.SIGKILL)
        child.join()
        data = path.read_bytes()
        torn += data not in known
        leftovers = list(folder.glob(".drawer.csv.*.tmp"))
        mid_save += bool(leftovers)
        for tmp in leftovers:
            tmp.unlink()
    entries = len(Journal(journal_path(path)).read())
    return {"trials": trials, "torn": torn, "mid_save": mid_save, "journal_entries": entries,
            "save_ms": round(save_s * 1e3, 1)}


def _writing(folder: Path, path: Path, size: int, unsafe: bool) -> bool:
    """A write is under way: a temporary file exists, or (writing in place) the file is short."""
    if unsafe:
        try:
            return path.stat().st_size != size  # every known content has the same length
        except FileNotFoundError:
            return True
    return any(folder.glob(".drawer.csv.*.tmp"))


def _take_many(path: str, line: int, times: int) -> None:
    store = Store(path, lock_timeout_s=60)
    store.load()  # loaded once: the other process's takes make every later save re-find the part
    for _ in range(times):
        store.take([(line, 1)], "concurrency trial")


def decrement_trial(folder: Path, processes: int = 2, times: int = 100) -> dict:
    """`processes` children each take one part `times` times from the same line at once."""
    path = folder / "drawer.csv"
    start = processes * times + 50
    path.write_bytes(f"kind,value,qty,location\nresistor,4k7,{start},A1\nresistor,1k,9,A2\n".encode())
    children = [_FORK.Process(target=_take_many, args=(str(path), 2, times)) for _ in range(processes)]
    t0 = time.perf_counter()
    for c in children:
        c.start()
    for c in children:
        c.join(120)
    seconds = time.perf_counter() - t0
    drawer = Drawer.load(path)
    entries = Journal(journal_path(path)).read()
    return {
        "processes": processes, "takes": processes * times, "qty_before": start,
        "qty_after": drawer.part_at(2).qty, "other_line_qty": drawer.part_at(3).qty,
        "journal_entries": len(entries), "distinct_ids": len({e.id for e in entries}),
        "exit_codes": [c.exitcode for c in children], "seconds": seconds,
    }
