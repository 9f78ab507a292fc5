"""THD at the asked swing for many candidates at once: the fast check the search screens with.

The same midband large-signal model as `largesignal.transfer` (each capacitor a battery
at its DC charge, the transistor's full DC equations), but for arrays of candidates:
every candidate's source sine is sampled at `POINTS` instants and all
candidates × instants go through one batch Newton solve.  The source amplitude starts
from the small-signal gain and is corrected once from the fundamental actually reached,
so the load sees the asked swing to well under 1 % at the THD levels that matter here.
`distortion.distortion` (exact nodal solver, 256 points, amplitude solved to 1e-6) is
the reference the tests hold this to.
"""

from __future__ import annotations

import numpy as np

from .bias import Network, solve_operating_point
from .largesignal import held_network
from .stage import EMITTER_FOLLOWER
from .stopwatch import poll

POINTS = 24  # samples per period: harmonics up to the 11th resolved, 2..10 counted as in distortion.py
HARMONICS = np.arange(2, 11)
CHUNK = 4096  # candidates per batch (× POINTS solves)


def thd_at_swing(topology, r, op, *, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, swing_pp,
                 bypassed=True) -> np.ndarray:
    """THD (fraction, harmonics 2..10 over the fundamental) at `swing_pp` V p-p on the load, per candidate.

    r: position → ohms (1-D arrays of one length n); op: the candidates' `screen` result at the
    same beta (BF at 27 °C) and temp_c (°C), of which vb, vc, ve, vn and gain are read.
    Candidates that do not converge over the cycle get inf.  swing_pp = 0 gives 0.
    """
    n = len(np.atleast_1d(op["vb"]))
    out = np.zeros(n)
    if swing_pp <= 0 or n == 0:
        return out
    for lo in range(0, n, CHUNK):
        poll()
        sl = slice(lo, min(n, lo + CHUNK))
        rr = {k: np.broadcast_to(np.asarray(v, dtype=float), (n,))[sl] for k, v in r.items()}
        oo = {k: np.broadcast_to(np.asarray(op[k], dtype=float), (n,))[sl] for k in ("vb", "vc", "ve", "vn", "gain")}
        out[sl] = _thd_chunk(topology, rr, oo, transistor, beta, temp_c, supply_v, source_ohms, load_ohms,
                             swing_pp, bypassed)
    return out


def _thd_chunk(topology, r, op, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, swing_pp, bypassed):
    phase = 2 * np.pi * np.arange(POINTS) / POINTS
    sine = np.sin(phase)[None, :]
    want = swing_pp / 2.0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        amp = want / np.maximum(np.abs(op["gain"]), 1e-12)
        for _ in range(2):
            v_out, ok = _wave(topology, r, op, transistor, beta, temp_c, supply_v, source_ohms, load_ohms,
                              amp[:, None] * sine, bypassed)
            spec = np.abs(np.fft.rfft(v_out, axis=1))
            fund = spec[:, 1] * 2.0 / POINTS
            amp = amp * np.where(fund > 0, want / fund, 1.0)
        thd = np.sqrt(np.sum(spec[:, HARMONICS] ** 2, axis=1)) / spec[:, 1]
    return np.where(ok & np.isfinite(thd), thd, np.inf)


def _wave(topology, r, op, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, emf, bypassed):
    """Load voltage (V, AC part) for emf of shape (n, POINTS); and per-candidate convergence."""
    n, m = emf.shape
    col = {k: v[:, None] for k, v in r.items()}
    ocol = {k: v[:, None] for k, v in op.items()}
    net = held_network(topology, col, supply_v=supply_v, source_ohms=source_ohms, load_ohms=load_ohms,
                       op=ocol, emf_v=emf, bypassed=bypassed)
    flat = Network(*(np.broadcast_to(x, (n, m)).ravel() for x in net))
    is_a, bf, br, vt = (float(x) for x in transistor.at(temp_c))
    bf = bf * float(beta) / transistor.bf
    dc = solve_operating_point(flat, is_a, bf, br, transistor.vaf_v, vt)
    vb, vc, ve = flat.voltages(dc["ib"], dc["ic"])
    node = (ve - np.repeat(op["ve"], m)) if topology == EMITTER_FOLLOWER else (vc - np.repeat(op["vc"], m))
    return node.reshape(n, m), dc["converged"].reshape(n, m).all(axis=1)
