"""Cross-check a design in ngspice: its own netlist, simulated at hFE min, typical and max, beside drawerfit's figures.

The design's deck (deck.py) gets a source, a load and analyses (`bench`); the
transistor card's BF is set to each hFE corner.  ngspice (an independent simulator)
then gives the DC points (VB, VE, VC), the midband gain and Rin (AC at a frequency
far above every corner), f_low (the highest frequency where |H| falls to |H_mid|/√2,
interpolated on a dense log sweep) and THD (harmonics 2…10 over the last whole
periods of a transient at the spec's swing, the drive found by distortion.py).
Headless and bounded: one ngspice run per corner with a time limit.
"""

from __future__ import annotations

import math
import re
import shutil
import subprocess
import tempfile
from dataclasses import asdict, dataclass, field, is_dataclass
from pathlib import Path

import numpy as np

from optimizer.physics.deck import deck_nodes, netlist_of, spice_value, stage_of_design
from optimizer.physics.distortion import HARMONICS, drive_for_swing

NOT_INSTALLED = "ngspice is not installed: apt-get install ngspice"
CORNERS = ("min", "typical", "max")
FIGURES = (("vb", "V"), ("ve", "V"), ("vc", "V"), ("gain", ""), ("rin", "Ω"), ("f_low", "Hz"), ("thd", ""))
PERIODS, ANALYSED, STEPS = 40, 10, 200  # transient length, periods analysed, samples per period


@dataclass
class CrossCheck:
    """available: ngspice found; ok: every corner simulated; rows: one per (figure, corner)."""

    available: bool
    ok: bool
    message: str
    rows: list = field(default_factory=list)

    def to_json(self) -> dict:
        return asdict(self)

    def worst(self, figure: str) -> float | None:
        """Largest |relative deviation| of one figure over the corners (None when not compared)."""
        rel = [abs(r["relative"]) for r in self.rows if r["figure"] == figure and r["relative"] is not None]
        return max(rel) if rel else None


def with_bf(deck: str, bf: float) -> str:
    """The deck with every transistor card's BF set to `bf`."""
    return re.sub(r"(?im)^(\.model\s.*?\bBF=)[^\s)]+", lambda m: m.group(1) + f"{bf:.6g}", deck)


def bench(deck: str, *, source_ohms: float, load_ohms: float | None, amplitude_v: float = 0.0,
          signal_hz: float = 1e3, analyses: tuple[str, ...] = ("op", "ac", "tran"), periods: int = 10,
          save_nodes: tuple[str, ...] = ()) -> str:
    """The deck with a source (DC 0, AC 1, a sine of `amplitude_v` V peak), its resistance, the load and
    analyses as dot-commands, runnable as written with `ngspice -b` (the sheet's cir format).

    `.save` names the vectors kept (out, in and `save_nodes`): `.four` needs a saved transient, and
    ngspice 39's `.save all` warns beside `.print ac vdb(out)`.
    """
    body = deck.rstrip().rsplit("\n.end", 1)[0]
    src = "src" if source_ohms and source_ohms > 0 else "in"
    add = ["* Added for simulation: the source, its resistance, the load and the analyses.",
           f"VS {src} 0 DC 0 AC 1 SIN(0 {spice_value(amplitude_v)} {spice_value(signal_hz)})"]
    if src == "src":
        add.append(f"RS src in {spice_value(source_ohms)}")
    if load_ohms is not None and math.isfinite(load_ohms):
        add.append(f"RL out 0 {spice_value(load_ohms)}")
    else:
        add.append("RL out 0 1e12 ; no load: a stand-in DC path")
    if analyses:
        keep = ["out", "in"] + [n for n in save_nodes if n not in ("0", "out", "in")]
        add.append(".save " + " ".join(f"v({n})" for n in dict.fromkeys(keep)))
    if "op" in analyses:
        add.append(".op")
    if "ac" in analyses:
        add += [".ac dec 20 1 1meg", ".print ac vdb(out)"]
    if "tran" in analyses:
        step = 1.0 / signal_hz / STEPS
        add += [f".tran {spice_value(step)} {spice_value(periods / signal_hz)} 0 {spice_value(step)}",
                f".four {spice_value(signal_hz)} v(out)"]
    return body + "\n" + "\n".join(add) + "\n.end\n"


def _read(path: Path) -> np.ndarray:
    rows = [ln.split() for ln in path.read_text().splitlines() if ln.strip()]
    if rows and not re.match(r"^[-+0-9.]", rows[0][0]):
        rows = rows[1:]
    return np.array(rows, dtype=float)


def thd_of_wave(v: np.ndarray, per_period: int, periods: int) -> float:
    """THD (fraction) of the last `periods` whole periods of a uniformly sampled wave.

    The window holds whole periods, so each harmonic falls in one bin; the coupling capacitors'
    slow settling (its corner is ≥ 100× below the signal) stays in the lowest bins, which are not counted.
    """
    x = v[-per_period * periods:]
    spec = np.abs(np.fft.rfft(x))
    fund = spec[periods]
    harm = [spec[periods * k] for k in HARMONICS if periods * k < spec.size]
    return float(np.sqrt(np.sum(np.square(harm))) / fund)


def _corner(ngspice: str, deck: str, stage, spec: dict, timeout_s: float) -> dict:
    names = deck_nodes(stage)
    probes = {k: names[n] for k, n in (("vb", "base"), ("ve", "emit"), ("vc", "coll"))}
    swing = float(spec.get("swing_pp") or 0.0)
    amp = drive_for_swing(stage, swing) if swing > 0 else 0.0
    return simulate(ngspice, deck, source_ohms=float(spec.get("source_ohms") or 0.0), load_ohms=stage.load_ohms,
                    amplitude_v=amp, probes=probes, timeout_s=timeout_s)


def simulate(ngspice: str, deck: str, *, source_ohms: float, load_ohms: float, amplitude_v: float, probes: dict,
             timeout_s: float, options: str = ".options reltol=1e-6 abstol=1e-12 vntol=1e-9") -> dict:
    """ngspice's figures for a design deck with a source and load added: the DC voltage at each probe
    (key → node), midband gain and Rin at 100 kHz, f_low from a sweep, and THD at `amplitude_v` (V
    peak at the source; 0 = none) from a transient of PERIODS periods at 10 kHz."""
    f_sig = 1e4
    per = 1.0 / f_sig
    amp = amplitude_v
    with tempfile.TemporaryDirectory(prefix="drawerfit-xcheck-") as tmp:
        folder = Path(tmp)
        text = bench(deck, source_ohms=source_ohms, load_ohms=load_ohms, amplitude_v=amp, signal_hz=f_sig,
                     analyses=())
        nodes = [n for n in dict.fromkeys(probes.values()) if n != "0"]
        control = [options, ".control", "set wr_singlescale", "op"]
        if nodes:
            control.append(f"wrdata {folder / 'op.txt'} " + " ".join(f"v({n})" for n in nodes))
        control += ["ac lin 1 1e5 1e5", f"wrdata {folder / 'mid.txt'} v(out) v(in) i(vs)",
                    "ac dec 200 0.01 1e5", f"wrdata {folder / 'sweep.txt'} v(out)"]
        if amp > 0:
            control += [f"tran {per / STEPS:.6g} {PERIODS * per:.6g} 0 {per / STEPS:.6g}",
                        "linearize v(out)", f"wrdata {folder / 'tran.txt'} v(out)"]
        control += ["quit", ".endc", ".end"]
        (folder / "bench.cir").write_text(text.replace("\n.end\n", "\n" + "\n".join(control) + "\n"))
        done = subprocess.run([ngspice, "-b", "bench.cir"], capture_output=True, text=True, timeout=timeout_s,
                              cwd=tmp)
        if not (folder / "mid.txt").exists():
            tail = (done.stdout + done.stderr).strip().splitlines()[-3:]
            raise RuntimeError("ngspice did not finish: " + " / ".join(tail))
        out = {}
        op = _read(folder / "op.txt")[0] if nodes else []
        for k, n in probes.items():
            out[k] = 0.0 if n == "0" else float(op[1 + nodes.index(n)])
        mid = _read(folder / "mid.txt")[0]
        gain = complex(mid[1], mid[2])
        out["gain"] = gain.real
        out["rin"] = (complex(mid[3], mid[4]) / -complex(mid[5], mid[6])).real
        sweep = _read(folder / "sweep.txt")
        mag = np.abs(sweep[:, 1] + 1j * sweep[:, 2])
        out["f_low"] = _corner_hz(sweep[:, 0], mag, abs(gain))
        out["thd"] = None
        if amp > 0 and (folder / "tran.txt").exists():
            out["thd"] = thd_of_wave(_read(folder / "tran.txt")[:, 1], STEPS, ANALYSED)
        return out


def _corner_hz(freq: np.ndarray, mag: np.ndarray, mid: float) -> float:
    """The highest frequency where |H| crosses |H_mid|/√2 (log-log interpolation); 0 when it never falls."""
    target = mid / math.sqrt(2.0)
    below = np.nonzero(mag < target)[0]
    if below.size == 0:
        return 0.0
    i = int(below[-1])
    if i + 1 >= freq.size:
        return float("inf")
    f0, f1, m0, m1 = np.log(freq[i]), np.log(freq[i + 1]), np.log(mag[i]), np.log(mag[i + 1])
    return float(np.exp(f0 + (np.log(target) - m0) * (f1 - f0) / (m1 - m0)))


def crosscheck(design: dict, spec, *, timeout_s: float = 60.0, ngspice: str | None = None) -> CrossCheck:
    """ngspice's figures beside drawerfit's at hFE min, typical and max for one design document entry.

    spec: the saved document's "spec" dict (or an optimizer.spec.Spec).  Never raises for a missing or
    failing ngspice: the result says so in `message`.
    """
    spec = asdict(spec) if is_dataclass(spec) else dict(spec or {})
    exe = ngspice or shutil.which("ngspice")
    if not exe:
        return CrossCheck(False, False, NOT_INSTALLED)
    hfe = design.get("hfe") or {}
    ours = {"min": (design.get("at_hfe") or {}).get("min"), "typical": design.get("predicted"),
            "max": (design.get("at_hfe") or {}).get("max")}
    rows = []
    try:
        deck = netlist_of(design, spec)
        for corner in CORNERS:
            bf = hfe.get(corner)
            if not bf or not ours[corner]:
                continue
            stage = stage_of_design(design, spec, bf=float(bf))
            sim = _corner(exe, with_bf(deck, float(bf)), stage, spec, timeout_s)
            for key, unit in FIGURES:
                a, b = ours[corner].get(key), sim.get(key)
                dev = None if a is None or b is None else b - a
                rel = None if dev is None or a == 0 or not math.isfinite(dev) else dev / abs(a)
                rows.append({"figure": key, "unit": unit, "corner": corner, "hfe": float(bf), "drawerfit": a,
                             "ngspice": b, "deviation": dev, "relative": rel})
    except subprocess.TimeoutExpired:
        return CrossCheck(True, False, f"ngspice took longer than {timeout_s:g} s; stopped", rows)
    except (OSError, RuntimeError, ValueError, KeyError, IndexError) as exc:
        return CrossCheck(True, False, f"ngspice cross-check failed: {exc}", rows)
    if not rows:
        return CrossCheck(True, False, "the design holds no hFE corners to simulate")
    worst = max((abs(r["relative"]) for r in rows if r["relative"] is not None), default=0.0)
    return CrossCheck(True, True, f"ngspice agrees within {100 * worst:.2g} % on every figure", rows)
