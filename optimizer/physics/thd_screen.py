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

from optimizer import kinds
from optimizer.physics.bias import Network, solve_operating_point
from optimizer.physics.largesignal import held_network
from optimizer.search.stopwatch import poll

POINTS = 16  # samples per period: harmonics 2..7 counted (a clip-free stage's THD is in the 2nd and 3rd)
RESCALE = 0.03  # fundamental within 3 % of the asked swing: THD rescaled in proportion, not re-solved
CHUNK = 4096  # candidates per batch (× POINTS solves)


def thd_at_swing(topology, r, op, *, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, swing_pp,
                 bypassed=True) -> np.ndarray:
    """THD (fraction, harmonics 2..10 over the fundamental) at `swing_pp` V p-p on the load, per candidate.

    r: position → ohms (1-D arrays of one length n); op: the candidates' `screen` result at the
    same beta (BF at 27 °C) and temp_c (°C), of which vb, vc, ve, vn, vbe and gain are read.
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
        oo = {k: np.broadcast_to(np.asarray(op[k], dtype=float), (n,))[sl]
              for k in ("vb", "vc", "ve", "vn", "gain", "vbe")}
        out[sl] = _thd_chunk(topology, rr, oo, transistor, beta, temp_c, supply_v, source_ohms, load_ohms,
                             swing_pp, bypassed)
    return out


def _thd_chunk(topology, r, op, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, swing_pp, bypassed):
    points = POINTS
    harmonics = np.arange(2, min(11, points // 2))
    phase = 2 * np.pi * np.arange(points) / points
    sine = np.sin(phase)[None, :]
    want = swing_pp / 2.0
    guess = None
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        amp = want / np.maximum(np.abs(op["gain"]), 1e-12)
        redo = np.ones(len(amp), dtype=bool)
        thd = np.full(len(amp), np.inf)
        ok = np.ones(len(amp), dtype=bool)
        for _ in range(3):
            sub = {k: v[redo] for k, v in r.items()}
            sop = {k: v[redo] for k, v in op.items()}
            v_out, conv, guess = _wave(topology, sub, sop, transistor, beta, temp_c, supply_v, source_ohms,
                                       load_ohms, amp[redo][:, None] * sine, bypassed, guess)
            spec = np.abs(np.fft.rfft(v_out, axis=1))
            fund = spec[:, 1] * 2.0 / points
            ratio = np.where(fund > 0, want / fund, np.inf)
            # Below a few % THD the harmonics grow in proportion to the drive (the second
            # dominates), so a fundamental within RESCALE of the swing is corrected by that ratio.
            h = np.sqrt(np.sum(spec[:, harmonics] ** 2, axis=1)) / spec[:, 1] * ratio
            close = np.abs(ratio - 1.0) <= RESCALE
            at = np.flatnonzero(redo)
            thd[at] = h
            ok[at] = conv
            amp[at] = amp[at] * np.where(np.isfinite(ratio), ratio, 1.0)
            redo[at[close | ~conv]] = False
            if not redo.any():
                break
            guess = None  # the rescaled rows start again from the quiescent point
    return np.where(ok & np.isfinite(thd), thd, np.inf)


def _wave(topology, r, op, transistor, beta, temp_c, supply_v, source_ohms, load_ohms, emf, bypassed, guess):
    """Load voltage (V, AC part) for emf of shape (n, POINTS), per-candidate convergence, and the
    junction voltages reached (the next, slightly rescaled, pass starts from them)."""
    n, m = emf.shape
    col = {k: v[:, None] for k, v in r.items()}
    ocol = {k: v[:, None] for k, v in op.items()}
    net = held_network(topology, col, supply_v=supply_v, source_ohms=source_ohms, load_ohms=load_ohms,
                       op=ocol, emf_v=emf, bypassed=bypassed)
    flat = Network(*(np.broadcast_to(x, (n, m)).ravel() for x in net))
    is_a, bf, br, vt = (float(x) for x in transistor.at(temp_c))
    bf = bf * float(beta) / transistor.bf
    if guess is None:  # start every instant from the quiescent point: a few Newton steps away
        guess = (np.repeat(op["vbe"], m), np.repeat(op["vb"] - op["vc"], m))
    dc = solve_operating_point(flat, is_a, bf, br, transistor.vaf_v, vt, guess=guess)
    vb, vc, ve = flat.voltages(dc["ib"], dc["ic"])
    key = kinds.get(topology).output_key
    node = {"ve": ve, "vc": vc}[key] - np.repeat(op[key], m)
    return node.reshape(n, m), dc["converged"].reshape(n, m).all(axis=1), (dc["vbe"], dc["vbc"])
