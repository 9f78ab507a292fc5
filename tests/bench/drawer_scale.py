"""Drawer commands on large files: `list --json`, `count`, `add` wall time per size, end to end.

    python -m tests.bench.drawer_scale [MB ...]      (default: 1 5 20 50)

Each command runs as a fresh `python -m tui` process on a generated drawer (invented rows of
about 50 bytes; every tenth line repeats a value so duplicates are warned about, as in real
files).  Prints seconds and seconds per MB: near-linear scaling shows as a flat s/MB column.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
COMMANDS = {
    "list --json": ["list", "--json"],
    "count": ["count", "2", "+1"],
    "add": ["add", "resistor", "1M5", "--qty", "1", "--location", "new bin"],
}


def drawer_bytes(megabytes: float) -> bytes:
    """An invented drawer of about `megabytes` MB: resistors and capacitors in numbered bins."""
    out = ["kind,value,qty,tolerance,voltage,location,notes"]
    size, i = 0, 0
    target = int(megabytes * 1e6)
    while size < target:
        if i % 3 == 2:
            row = f"capacitor,{(i % 97) + 1}n,{i % 9},10%,50V,C{i},lot {i}"
        else:
            row = f"resistor,{(i % 900) + 100}R,{i % 7},1%,,bin {i // 10 if i % 10 == 0 else i},film {i}"
        out.append(row)
        size += len(row) + 1
        i += 1
    return ("\n".join(out) + "\n").encode()


def run(path: Path, argv: list[str]) -> tuple[float, int]:
    t0 = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "tui", "--inventory", str(path), *argv], cwd=ROOT,
                          stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, timeout=1800)
    return time.perf_counter() - t0, done.returncode


def main(sizes: list[float]) -> None:
    print(f"{'MB':>6} {'lines':>9} " + " ".join(f"{name:>22}" for name in COMMANDS))
    with tempfile.TemporaryDirectory() as folder:
        for mb in sizes:
            path = Path(folder) / "drawer.csv"
            data = drawer_bytes(mb)
            path.write_bytes(data)
            cells = []
            for argv in COMMANDS.values():
                seconds, code = run(path, argv)
                cells.append(f"{seconds:7.2f} s {seconds / (len(data) / 1e6):6.2f} s/MB" + ("" if code == 0 else f" rc{code}"))
            lines = data.count(b"\n")
            print(f"{len(data) / 1e6:6.1f} {lines:>9} " + " ".join(f"{c:>22}" for c in cells), flush=True)
            os.remove(path)


if __name__ == "__main__":
    main([float(a) for a in sys.argv[1:]] or [1, 5, 20, 50])
