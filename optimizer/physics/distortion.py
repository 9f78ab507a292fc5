"""Harmonic distortion at a given output swing, from the exact large-signal transfer.

At midband every capacitor keeps its DC charge over a cycle, so each is a fixed
voltage source equal to its DC voltage.  The nonlinear circuit is then solved
at every time point of one period of the source sine (a batch Newton, each
amplitude started from the previous one's solution), the source amplitude is
adjusted until the load sees the requested peak-to-peak swing, and the output
is Fourier-analysed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optimizer.physics.circuit import NODES, Circuit, build, dc_links, operating_point, q_currents, solve_nonlinear
from optimizer.physics.response import midband
from optimizer.physics.stage import Stage
from optimizer.physics.swing import CUTOFF_FRACTION

POINTS = 256  # samples per period
HARMONICS = range(2, 11)  # THD counts harmonics 2..10
VCE_SAT_V = 0.2  # below this the stage is taken as saturated (common practice, no source)
OUT = NODES.index("out")


@dataclass(frozen=True)
class Distortion:
    thd: float  # fraction: sqrt(sum of harmonic powers 2..10) / fundamental
    source_amplitude_v: float  # peak EMF that gives the swing
    swing_pp: float  # V p-p reached at the load
    reached: bool  # False when the stage cannot deliver the requested swing
    saturates: bool
    cuts_off: bool
    min_vce_v: float
    min_ic_a: float

    @property
    def clips(self) -> bool:
        return self.saturates or self.cuts_off or not self.reached


def thd_of(samples) -> float:
    """THD (fraction) of one period of uniformly spaced samples (harmonics 2..10)."""
    x = np.abs(np.fft.rfft(np.asarray(samples, dtype=float)))
    return float(np.sqrt(np.sum(x[list(HARMONICS)] ** 2)) / x[1])


def _held_links(circuit: Circuit, op: dict, source_v):
    caps = [(p.a, p.b, op[p.a] - op[p.b]) for p in circuit.parts if p.kind == "C"]
    return dc_links(circuit, source_v) + caps


class Waveforms:
    """Large-signal solutions of one stage for one period at a chosen source amplitude."""

    def __init__(self, stage: Stage, points: int = POINTS):
        self.circuit = build(stage)
        self.op = operating_point(self.circuit)
        self.phase = np.sin(2 * np.pi * np.arange(points) / points)
        self.gain = midband(self.circuit, self.op).gain
        self.ic_q = float(q_currents(self.circuit, self.op)[0])
        self._last = np.array([self.op[n] for n in NODES])[None].repeat(points, 0)

    def solve(self, amplitude_v: float) -> np.ndarray:
        """Node voltages (points, n) with a source of `amplitude_v` V peak."""
        v, ok = solve_nonlinear(self.circuit, _held_links(self.circuit, self.op, amplitude_v * self.phase), self._last)
        if not ok.all():
            raise RuntimeError(f"the large-signal solution did not converge at {amplitude_v:g} V")
        self._last = v
        return v

    def swing(self, amplitude_v: float) -> tuple[float, np.ndarray]:
        v = self.solve(amplitude_v)
        return float(np.ptp(v[:, OUT])), v


def drive_for_swing(stage: Stage, swing_pp: float, waves: Waveforms | None = None, rtol: float = 1e-6):
    """Source amplitude (V peak) that gives `swing_pp` V p-p at the load.

    Starts from the linear estimate and rescales in small steps; when the stage clips before
    the swing is reached the drive stops at 4× the linear estimate, or where the output stops
    growing (`distortion` reports `reached=False`).
    """
    return _drive(stage, swing_pp, waves, rtol)[0]


def _drive(stage, swing_pp, waves, rtol):
    waves = waves or Waveforms(stage)
    linear = swing_pp / (2 * abs(waves.gain))
    amp, ceiling = linear, 4 * linear
    # Step up from a small amplitude so each batch Newton starts near its answer.
    for frac in (0.25, 0.5, 0.75):
        waves.solve(frac * linear)
    pp, v = waves.swing(amp)
    for _ in range(40):
        if abs(pp - swing_pp) <= rtol * swing_pp:
            break
        nxt = min(ceiling, amp * swing_pp / max(pp, 1e-15))
        if nxt == amp:
            break
        trial = amp + min(max(nxt - amp, -0.25 * amp), 0.25 * amp)  # continuation: small steps
        try:
            pp_trial, v_trial = waves.swing(trial)
        except RuntimeError:
            break  # driven into a junction runaway (e.g. an ideal source forcing the base): stop short
        stalled = trial > amp and pp_trial - pp < 1e-3 * pp
        amp, pp, v = trial, pp_trial, v_trial
        if stalled:
            break  # more drive no longer widens the output: it is clipped on both sides
    return amp, pp, v, waves


def distortion(stage: Stage, swing_pp: float, points: int = POINTS) -> Distortion:
    """THD and clipping at `swing_pp` V p-p across the load (midband, capacitors holding their charge)."""
    if not swing_pp > 0:
        raise ValueError(f"swing {swing_pp:g} V p-p: expected a positive swing")
    amp, pp, v, waves = _drive(stage, swing_pp, Waveforms(stage, points), 1e-6)
    c, b, e = (NODES.index(n) for n in waves.circuit.q)
    ic = q_currents(waves.circuit, dict(zip(NODES, v.T)))[0]
    vce = v[:, c] - v[:, e]
    return Distortion(
        thd=thd_of(v[:, OUT]),
        source_amplitude_v=float(amp),
        swing_pp=pp,
        reached=bool(abs(pp - swing_pp) <= 1e-3 * swing_pp),
        saturates=bool(vce.min() < VCE_SAT_V),
        cuts_off=bool(ic.min() < CUTOFF_FRACTION * waves.ic_q),
        min_vce_v=float(vce.min()),
        min_ic_a=float(ic.min()),
    )
