"""Startup cost of `drawerfit design` on the demo drawer: time from process start to the search.

    python -m tests.bench.startup

Prints, as medians of 5 fresh processes: the wall time from spawning `drawerfit design` until
`find_designs` is entered (interpreter, imports, reading the drawer, checking the spec), the same
for `drawerfit list` end to end, and the import time of the heaviest top-level modules
(`python -X importtime`).  The search itself is replaced by an immediate exit.
"""

from __future__ import annotations

import os
import re
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "inventory" / "demo" / "drawer.csv"

# Stop at find_designs: print the clock and leave without searching.  optimizer.search.select is imported
# where the command imports it (inside run_design), so its cost counts as it does for a user.
PROBE = """
import sys, time
import tui.cmd_design as cd
real = cd.run_design
def stop(*a, **k):
    print(repr(time.time()), flush=True)
    raise SystemExit(0)
def probe(args):
    import optimizer.search.select as s
    s.find_designs = stop
    return real(args)
cd.run_design = probe
from tui.cli import main
sys.exit(main(sys.argv[1:]))
"""


def to_search(n: int = 5) -> list[float]:
    """Seconds from spawn to find_designs, with optimizer.search.select imported when the CLI imports it."""
    out = []
    with tempfile.TemporaryDirectory() as folder:
        drawer = Path(folder) / "drawer.csv"
        drawer.write_bytes(DEMO.read_bytes())
        for _ in range(n):
            t0 = time.time()
            done = subprocess.run([sys.executable, "-c", PROBE, "--inventory", str(drawer), "design",
                                   "--gain", "10", "--json"], cwd=ROOT, capture_output=True, text=True, timeout=120)
            stamp = float(done.stdout.strip().splitlines()[-1])
            out.append(stamp - t0)
    return out


def end_to_end(argv: list[str], n: int = 5) -> list[float]:
    out = []
    for _ in range(n):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "tui", "--inventory", str(DEMO), *argv], cwd=ROOT,
                       capture_output=True, timeout=120)
        out.append(time.perf_counter() - t0)
    return out


def import_times(module: str) -> list[tuple[int, str]]:
    done = subprocess.run([sys.executable, "-X", "importtime", "-c", f"import {module}"], cwd=ROOT,
                          capture_output=True, text=True, timeout=120, env={**os.environ, "PYTHONDONTWRITEBYTECODE": "1"})
    rows = []
    for line in done.stderr.splitlines():
        m = re.match(r"import time:\s+\d+ \|\s+(\d+) \|(\s*)(\S+)", line)
        if m and len(m[2]) <= 3:  # top-level and first-level imports only
            rows.append((int(m[1]), m[3]))
    return sorted(rows, reverse=True)[:8]


def main() -> None:
    t = to_search()
    print(f"design: spawn → find_designs  median {statistics.median(t):.3f} s  (min {min(t):.3f}, max {max(t):.3f})")
    e = end_to_end(["list"])
    print(f"list (demo drawer) end to end   median {statistics.median(e):.3f} s")
    for module in ("tui.cli", "optimizer.search.select"):
        rows = import_times(module)
        print(f"import {module}: " + ", ".join(f"{name} {us / 1e3:.0f} ms" for us, name in rows))
    loaded = subprocess.run([sys.executable, "-c", "import sys, tui.cli; print(' '.join(m for m in "
                             "('scipy', 'ortools', 'pandas', 'textual', 'rich') if m in sys.modules))"],
                            cwd=ROOT, capture_output=True, text=True, timeout=120).stdout.strip()
    print(f"heavy modules loaded by `import tui.cli`: {loaded or 'none'}")


if __name__ == "__main__":
    main()
