"""Design-path fuzz: random legal drawers and random `design` requests through the real command line.

Each case runs `tui.cli.main(["--inventory", F, "design", …, "--json"])` in a forked child (the
parent has imported everything, so the child starts in milliseconds and its time is the command's
own), with stdout and stderr captured to files.  The parent kills a child still running at its
time limit + 1 s: a hang is counted, it never hangs the run.  Each case is judged:

* exit 0, 3 or 4 with one JSON document on stdout (0 iff it has designs), or exit 2 with one line
  on stderr naming an option; anything else (a traceback, exit 1 or 70) is a crash;
* ended within --time-limit + 1 s;
* every design's `uses` within the drawer's counts (summed per line, lines that hold a part);
* the drawer file byte-identical afterwards.

Drawers (invented): 1…400 lines of resistors 0R…22M (E12 values, RKM, SI and exponent spellings),
capacitors with tiny to ample ratings, NPN and PNP transistors with and without hFE, duplicated
lines, single-value drawers, drawers without capacitors, PNP-only drawers.
"""

from __future__ import annotations

import collections
import io
import json
import multiprocessing
import os
import random
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

from inventory.drawer import Drawer

_FORK = multiprocessing.get_context("fork")
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 E12 mantissas
HEADER = "kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,location"
NONSENSE = ("nan", "NaN", "inf", "-inf", "-1", "", "garbage", "1e400", "0", "-0.5", "4k7k", "1..2", "1e-400", " ")


def _spell_ohms(ohms: float, rng: random.Random) -> str:
    if ohms == 0:
        return rng.choice(("0R", "0"))
    style = rng.random()
    if style < 0.6:  # RKM
        for letter, scale in (("M", 1e6), ("k", 1e3), ("R", 1.0)):
            if ohms >= scale or letter == "R":
                whole, frac = divmod(round(ohms / scale * 100), 100)
                frac_text = f"{frac:02d}".rstrip("0")
                return f"{whole}{letter}{frac_text}" if whole else f"0{letter}{frac_text}"
    if style < 0.85:
        return f"{ohms:g}"
    return f"{ohms:.3e}"


def random_drawer(rng: random.Random, max_lines: int = 400) -> bytes:
    """A legal drawer file (no errors; duplicates are warnings) of 1…max_lines lines."""
    flavour = rng.choice(("mixed", "mixed", "mixed", "single value", "no capacitors", "pnp only", "no hfe"))
    n = rng.randint(1, max_lines)
    rows = []
    single = rng.choice(E12) * 10 ** rng.randint(1, 5)
    for i in range(n):
        kind = rng.choices(("resistor", "capacitor", "transistor"), (6, 3, 1))[0]
        if flavour == "no capacitors" and kind == "capacitor":
            kind = "resistor"
        qty = rng.choice((0, 1, 1, 2, 3, 5, 10, 100))
        loc = f"B{rng.randint(1, 9)}"
        if kind == "resistor":
            r = rng.random()
            ohms = 0.0 if r < 0.05 else single if flavour == "single value" else (
                rng.choice(E12) * 10 ** rng.randint(-1, 6))
            ohms = min(ohms, 22e6)
            rows.append(f"resistor,{_spell_ohms(ohms, rng)},{qty},{rng.choice(('', '1%', '5%'))},"
                        f"{rng.choice(('', '1/4W', '0.5W'))},,,,,,,,,,{loc}")
        elif kind == "capacitor":
            farads = rng.choice(E12) * 10 ** rng.randint(-12, -3)
            prefixed = f"{farads * 1e9:.3g}n" if farads < 1e-6 else f"{farads * 1e6:.4g}u"
            spelled = rng.choice((prefixed, prefixed, f"{farads:.2e}"))
            diel = rng.choice(("", "x7r", "film", "electrolytic", "tantalum", "c0g"))
            volts = rng.choice(("6V3", "1V", "2.5V", "16V", "25V", "50V")) if diel in ("electrolytic", "tantalum") \
                else rng.choice(("", "50V", "100V"))
            rows.append(f"capacitor,{spelled},{qty},,,{volts},{diel},,,,,,,,{loc}")
        else:
            pol = "PNP" if flavour == "pnp only" else rng.choice(("NPN", "NPN", "PNP"))
            lo = rng.choice((50, 100, 110, 200, 420))
            hfe = ("", "") if flavour == "no hfe" or rng.random() < 0.1 else (str(lo), str(lo * rng.choice((1, 2, 4))))
            rows.append(f"transistor,,{qty},,,,,Q{rng.randint(1, 99)},{pol},{hfe[0]},{hfe[1]},"
                        f"{rng.choice(('', '45V', '20V'))},{rng.choice(('', '100mA'))},{rng.choice(('', '500mW'))},{loc}")
        if rng.random() < 0.05 and rows:  # a duplicate line (a warning, not an error)
            rows.append(rows[-1])
    return ("\n".join([HEADER, *rows[:max_lines]]) + "\n").encode()


def random_request(rng: random.Random, time_limit: float = 2.0, depth: str | None = None,
                   nonsense_share: float = 0.2) -> list[str]:
    """`design` arguments over every option; in `nonsense_share` of requests one or two values are nonsense."""
    topo = rng.choice(("common-emitter", "common-emitter", "emitter-follower", "collector-feedback"))
    supply = rng.choice((5, 9, 12, 15, 24, 60))
    gain = rng.uniform(0.5, 0.99) if topo == "emitter-follower" else rng.choice((2, 5, 10, 20, 50, 100))
    opts = {
        "--topology": topo, "--gain": f"{gain:.3g}", "--supply": str(supply),
        "--gain-tol": rng.choice(("0.05", "5%", "0.1", "0.02")),
        "--load": rng.choice(("22k", "10k", "1k", "100k", "4.7e3", "2.2E4")),
        "--source": rng.choice(("0", "50", "600", "1k", "10k")),
        "--swing": f"{rng.uniform(0.1, 0.6) * supply:.2f}",
        "--low-cut": rng.choice(("20", "30", "100", "1.8k", "3e2")),
        "--depth": depth or rng.choice(("1", "2", "3")),
        "--top": rng.choice(("1", "3", "5")),
        "--seed": str(rng.randint(0, 99)),
        "--prefer": rng.choice(("balanced", "parts", "clean", "robust", "frugal")),
        "--time-limit": f"{time_limit:g}",
    }
    for flag, choices in (("--min-rin", ("1k", "8k", "47k")), ("--max-current", ("5m", "1m", "20mA")),
                          ("--max-thd", ("1%", "0.05", "3 %")), ("--min-vce", ("1", "0.5", "2V")),
                          ("--temp-range", ("0..50", "27..27", "-20..70")), ("--min-yield", ("0.5", "90%"))):
        if rng.random() < 0.3:
            opts[flag] = rng.choice(choices)
    bad: list[str] = []
    if rng.random() < nonsense_share:
        keys = [k for k in opts if k not in ("--topology", "--prefer", "--time-limit")]
        keys += ["--min-rin", "--max-thd", "--min-vce", "--temp-range", "--max-current"]
        for flag in rng.sample(keys, rng.choice((1, 1, 2))):
            opts[flag] = rng.choice(NONSENSE + ("1e-6", "1000M", "-300..-280", "-inf..inf", "50..0"))
            bad.append(flag)
    argv = ["design"]
    for flag, text in opts.items():
        argv.append(f"{flag}={text}")  # `=` keeps values like "-1" from reading as options
    return argv + ["--json", "--no-hints"] if rng.random() < 0.7 else argv + ["--json"]


@dataclass
class Tally:
    cases: int = 0
    exits: collections.Counter = field(default_factory=collections.Counter)
    crashes: int = 0          # traceback, internal error, or an exit code outside 0/2/3/4
    overruns: int = 0         # ran past its time limit + 1 s (killed there)
    stock_violations: int = 0
    drawer_changed: int = 0
    bad_output: int = 0       # exit 0/3/4 without one JSON document, or exit 2 without one line naming an option
    slowest_s: float = 0.0
    failures: list = field(default_factory=list)

    def ok(self) -> bool:
        return not (self.crashes or self.overruns or self.stock_violations or self.drawer_changed or self.bad_output)

    def line(self) -> str:
        hist = ", ".join(f"{k}: {v}" for k, v in sorted(self.exits.items(), key=lambda kv: str(kv[0])))
        return (f"{self.cases} cases: {self.crashes} tracebacks/crashes, {self.overruns} overruns, "
                f"{self.stock_violations} stock violations, {self.drawer_changed} drawer files changed, "
                f"{self.bad_output} malformed outputs; exit codes {{{hist}}}; slowest {self.slowest_s:.2f} s")


def _child(argv: list[str], out_path: str, err_path: str) -> None:
    out, err = io.StringIO(), io.StringIO()
    sys.stdout, sys.stderr = out, err
    code = 99
    try:
        from tui.cli import main

        code = main(argv)
    except BaseException as exc:  # noqa: BLE001 - anything escaping main() is a crash to count
        err.write(f"ESCAPED {type(exc).__name__}: {exc}\n")
        code = 98
    finally:
        Path(out_path).write_text(out.getvalue())
        Path(err_path).write_text(err.getvalue())
        os._exit(code if isinstance(code, int) and 0 <= code < 256 else 97)


def run_case(drawer: bytes, argv: list[str], time_limit: float, folder: Path, tally: Tally, *,
             fork: bool = True) -> None:
    """Run and judge one case.  fork=False runs in this process (no kill: only for requests that
    cannot search, e.g. refused input)."""
    path = folder / "drawer.csv"
    path.write_bytes(drawer)
    out_path, err_path = folder / "out.txt", folder / "err.txt"
    for p in (out_path, err_path):
        p.write_text("")
    full = ["--inventory", str(path), *argv]
    t0 = time.perf_counter()
    if fork:
        child = _FORK.Process(target=_child, args=(full, str(out_path), str(err_path)))
        child.start()
        child.join(time_limit + 1.0)
    else:
        child = _InProcess(full, out_path, err_path)
    elapsed = time.perf_counter() - t0
    tally.cases += 1
    tally.slowest_s = max(tally.slowest_s, elapsed)
    if child.is_alive():
        child.kill()
        child.join()
        tally.overruns += 1
        tally.exits["killed"] += 1
        tally.failures.append(("overrun", argv, len(drawer)))
        if path.read_bytes() != drawer:
            tally.drawer_changed += 1
        return
    code = child.exitcode
    tally.exits[code] += 1
    out, err = out_path.read_text(), err_path.read_text()
    if path.read_bytes() != drawer:
        tally.drawer_changed += 1
        tally.failures.append(("drawer changed", argv, len(drawer)))
    if code not in (0, 2, 3, 4) or "Traceback" in err or "ESCAPED" in err or "internal error" in err:
        tally.crashes += 1
        tally.failures.append(("crash", argv, err.strip()[-300:]))
        return
    if code == 2:
        lines = [ln for ln in err.strip().splitlines() if "warning:" not in ln]
        if len(lines) != 1 or "--" not in lines[0]:
            tally.bad_output += 1
            tally.failures.append(("exit 2 message", argv, err.strip()[-300:]))
        return
    try:
        doc = json.loads(out)
    except ValueError:
        tally.bad_output += 1
        tally.failures.append(("not JSON", argv, out[:200]))
        return
    if (code == 0) != bool(doc.get("designs")):
        tally.bad_output += 1
        tally.failures.append(("exit code vs designs", argv, code))
    if not _within_stock(Drawer.from_bytes(drawer), doc):
        tally.stock_violations += 1
        tally.failures.append(("stock", argv, len(drawer)))


class _InProcess:
    """The result of `tui.cli.main` run here, shaped like a finished multiprocessing child."""

    def __init__(self, argv: list[str], out_path: Path, err_path: Path) -> None:
        out, err = io.StringIO(), io.StringIO()
        real = sys.stdout, sys.stderr
        sys.stdout, sys.stderr = out, err
        try:
            from tui.cli import main

            self.exitcode = main(argv)
        except BaseException as exc:  # noqa: BLE001
            err.write(f"ESCAPED {type(exc).__name__}: {exc}\n")
            self.exitcode = 98
        finally:
            sys.stdout, sys.stderr = real
        out_path.write_text(out.getvalue())
        err_path.write_text(err.getvalue())

    def is_alive(self) -> bool:
        return False


def _within_stock(drawer: Drawer, doc: dict) -> bool:
    for d in doc.get("designs", []):
        need: collections.Counter = collections.Counter()
        for u in d.get("uses", []):
            need[u["line"]] += u["qty"]
        for line, qty in need.items():
            part = drawer.part_at(line)
            if part is None or part.qty < qty:
                return False
    return True


def warm_up() -> None:
    """Import what a design needs once in the parent, so every forked child starts warm."""
    import optimizer.search.select  # noqa: F401
    import tui.cli  # noqa: F401


def run(cases: int, seed: int = 20261202, time_limit: float = 2.0, max_lines: int = 400,
        depth: str | None = None, progress: bool = False) -> Tally:
    warm_up()
    rng = random.Random(seed)
    tally = Tally()
    with tempfile.TemporaryDirectory() as folder:
        for i in range(cases):
            drawer = random_drawer(rng, max_lines)
            argv = random_request(rng, time_limit, depth)
            run_case(drawer, argv, time_limit, Path(folder), tally)
            if progress and (i + 1) % 50 == 0:
                print(f"  … {tally.line()}", file=sys.stderr, flush=True)
    return tally
