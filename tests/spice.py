"""Run ngspice in batch mode on a netlist and read back the vectors it wrote.

`run(netlist, blocks)` appends a `.control` section: each block is an analysis
command and the vectors to save; ngspice writes them with `wrdata` to files in a
temporary folder, which are parsed into numpy arrays (complex for AC).
Skips (locally) or fails (CI) when ngspice is missing, via conftest.need_program.
"""

from __future__ import annotations

import subprocess
import tempfile
from pathlib import Path

import numpy as np

from tests.conftest import need_program

# Tight tolerances so the simulator's own truncation error is far below what the tests compare.
ACCURATE = ".options reltol=1e-6 abstol=1e-12 vntol=1e-9"


def _read(path: Path, vectors: list[str]) -> dict[str, np.ndarray]:
    text = path.read_text().split("\n")
    rows = [ln.split() for ln in text if ln.strip()]
    if rows and not _is_number(rows[0][0]):
        rows = rows[1:]
    data = np.array(rows, dtype=float)
    out = {"scale": data[:, 0]}
    per = (data.shape[1] - 1) // len(vectors)
    for k, name in enumerate(vectors):
        col = data[:, 1 + k * per: 1 + (k + 1) * per]
        out[name] = col[:, 0] + 1j * col[:, 1] if per == 2 else col[:, 0]
    return out


def _is_number(s: str) -> bool:
    try:
        float(s)
        return True
    except ValueError:
        return False


def run(netlist: str, blocks: list[tuple[str, list[str]]], options: str = ACCURATE, timeout_s: float = 60):
    """Results of each (command, vectors) block, e.g. ("op", ["v(base)"]) → [{"v(base)": array}, …].

    A command may be several lines ("tran …\\nlinearize v(out)").
    """
    ngspice = need_program("ngspice")
    with tempfile.TemporaryDirectory(prefix="drawerfit-spice-") as tmp:
        folder = Path(tmp)
        control = [options, ".control", "set wr_singlescale"]
        for i, (command, vectors) in enumerate(blocks):
            control += [command, f"wrdata {folder / f'b{i}.txt'} {' '.join(vectors)}"]
        control += [".endc", ".end"]
        deck = netlist.replace("\n.end\n", "\n" + "\n".join(control) + "\n")
        (folder / "deck.cir").write_text(deck)
        done = subprocess.run(
            [ngspice, "-b", str(folder / "deck.cir")], capture_output=True, text=True, timeout=timeout_s, cwd=tmp
        )
        results = []
        for i, (_, vectors) in enumerate(blocks):
            path = folder / f"b{i}.txt"
            if not path.exists():
                raise RuntimeError(f"ngspice wrote no results for block {i}:\n{done.stdout[-2000:]}\n{done.stderr[-2000:]}")
            results.append(_read(path, vectors))
        return results
