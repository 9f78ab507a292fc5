"""The low cut-off test with the coupling and bypass capacitors in place: |H(f_cut)| ≥ |H_mid|/√2, and the
passband starts a decade above it: |H(10·f_cut)| ≥ 0.99·|H_mid|.

The second test is what keeps a bypass capacitor honest: a CE far too small to bypass RE2 at
audio frequencies can still pass the first test when RE2 is small beside RE1 (the gain then only
falls by a few dB), yet the stage's gain in use would be the unbypassed one, not the midband
figure it is designed and checked for.  A decade up, a stage whose corners all sit at or below
f_cut is within 0.2 % of midband, so the test costs a sound design nothing (common practice, no
source: "the passband starts a decade above the corner").

The midband nodal solve of smallsignal.py takes complex conductances, so CIN in
series with RS, COUT in series with RL and CE across RE2 enter as impedances
1/(jωC).  The response of these high-pass networks rises monotonically with
frequency, so f_low ≤ f_cut exactly when |H(j·2π·f_cut)|² ≥ ½·|H_mid|²; and f_low
falls as any capacitance grows.

`meets_low_cut` is the plain test (any arrays, one full solve per element); the
exhaustive oracle uses it.  `LowCut` is the same test for one screened row, fast
over many capacitor combinations: CIN and COUT enter only the source and load
conductances, so the stage is solved once per distinct CE value
(`smallsignal.source_load_terms`) and each combination costs a few products.
"""

from __future__ import annotations

import numpy as np

from optimizer import kinds
from optimizer.physics import smallsignal
from optimizer.kinds.blocks import inv as _inv
from optimizer.physics.circuit import OPEN_LOAD_OHMS
from optimizer.search.feasible import corner_names

SHORT = smallsignal.SHORT_S
HALF_POWER = 0.5
PASSBAND_FACTOR = 10.0  # the passband is checked this many times above the low cut-off
PASSBAND_POWER = 0.99 ** 2  # |H|² there over |H_mid|²: within 1 % of the midband gain
CHECKS = ((1.0, HALF_POWER), (PASSBAND_FACTOR, PASSBAND_POWER))  # (multiple of f_cut, least |H|²/|H_mid|²)


def _y(row, corner):
    gm, gpi, gmu, go = (np.asarray(row[f"{corner}_{k}"]) for k in ("gm", "gpi", "gmu", "go"))
    return gpi, gmu, gm + go, -go - gmu  # inverse of smallsignal.hybrid_pi


def _zc(c, omega):
    """1/(jωC) (Ω) with C = inf a short."""
    c = np.asarray(c, dtype=float)
    return np.where(np.isinf(c), 0.0, 1.0 / (1j * omega * np.where(np.isinf(c), 1.0, c)))


def _stage(topology, r, omega, ce):
    """(g_bias, g_feedback, g_collector, g_emitter, output) of the stage with CE fitted (S): `Kind.ac_network`."""
    return kinds.get(topology).ac_network(r, omega, ce)


def _load(spec) -> float:
    """RL (Ω), an open load as the same 1 TΩ stand-in the exact solver uses."""
    return min(float(spec.load_ohms), OPEN_LOAD_OHMS)


def transfer(topology, r, y, rs, rl, omega, cin, cout, ce):
    """Complex gain load voltage / source EMF (broadcast arrays); C = inf is a short, ω in rad/s."""
    r = {k: np.asarray(v, dtype=float) for k, v in r.items()}
    g_bias, g_fb, g_coll, g_emit, out = _stage(topology, r, omega, ce)
    g_load = 1.0 / (rl + _zc(cout, omega))
    ss = smallsignal.midband(y, g_source=_inv(rs + _zc(cin, omega)), g_bias=g_bias, g_feedback=g_fb,
                             g_collector=g_coll, g_emitter=g_emit, g_load=g_load, output=out)
    return ss["gain"] * rl * g_load


def meets_low_cut(topology, row, spec, cin, cout, ce):
    """Bool array: f_low ≤ spec.low_cut_hz at both hFE corners for the capacitor arrays given (F)."""
    r = {k: row[k] for k in kinds.get(topology).resistors if k in row}
    ok = True
    for factor, power in CHECKS:
        w = 2 * np.pi * spec.low_cut_hz * factor
        for corner in corner_names(row):
            y = _y(row, corner)
            h = transfer(topology, r, y, spec.source_ohms, _load(spec), w, cin, cout, ce)
            hm = transfer(topology, r, y, spec.source_ohms, _load(spec), w, np.inf, np.inf, np.inf)
            ok = ok & (np.abs(h) ** 2 >= power * np.abs(hm) ** 2)
    return np.asarray(ok)


class _AtFrequency:
    """One of the tests of `CHECKS` for one row, fast over arrays of CIN, COUT and CE (F).

    The stage terms of each CE value (one solve per corner) are kept: a capacitor choice asks
    about the same few CE values many times."""

    def __init__(self, topology, r, rs, rl, ys, w, power):
        self.topology, self.r, self.rs, self.rl, self.y, self.w, self.power = topology, r, rs, rl, ys, w, power
        self.h_mid2 = [float(np.abs(transfer(topology, r, y, rs, rl, w, np.inf, np.inf, np.inf)) ** 2) for y in ys]
        self.known = np.zeros(0)  # CE values (F, sorted) whose terms are kept
        self.terms = [np.zeros((5, 0), dtype=complex) for _ in ys]  # per corner: [5, len(known)]

    def _terms_of(self, ce):
        """Per corner, the stage terms [5, len(ce)] of sorted distinct CE values `ce`."""
        missing = ce[~np.isin(ce, self.known)]
        if len(missing):
            g_bias, g_fb, g_coll, g_emit, out = _stage(self.topology, self.r, self.w, missing)
            new = [np.array([np.broadcast_to(t, missing.shape) for t in
                             smallsignal.source_load_terms(y, g_bias=g_bias, g_feedback=g_fb, g_collector=g_coll,
                                                           g_emitter=g_emit, output=out)], dtype=complex)
                   for y in self.y]
            known = np.concatenate([self.known, missing])
            order = np.argsort(known, kind="stable")
            self.known = known[order]
            self.terms = [np.concatenate([t, n], axis=1)[:, order] for t, n in zip(self.terms, new, strict=True)]
        at = np.searchsorted(self.known, ce)
        return [t[:, at] for t in self.terms]

    def __call__(self, cin, cout, ce) -> np.ndarray:
        gs = _inv(self.rs + _zc(cin, self.w))
        gl = 1.0 / (self.rl + _zc(cout, self.w))
        uce, inv = np.unique(ce, return_inverse=True)
        inv = inv.reshape(cin.shape)
        ok = np.ones(cin.shape, dtype=bool)
        for terms, hm2 in zip(self._terms_of(uce), self.h_mid2, strict=True):
            det0, c_bb, c_oo, c_bo, a_kk = terms[:, inv]
            h = gs * c_bo / (det0 + gs * c_bb + gl * c_oo + gs * gl * a_kk) * self.rl * gl
            ok &= h.real ** 2 + h.imag ** 2 >= self.power * hm2
        return ok


class LowCut:
    """`meets_low_cut` for one row (dict of scalars), fast over arrays of CIN, COUT and CE (F)."""

    def __init__(self, topology, row, spec):
        r = {k: float(row[k]) for k in kinds.get(topology).resistors if k in row}
        ys = [_y(row, c) for c in corner_names(row)]
        w = 2 * np.pi * spec.low_cut_hz
        self.tests = [_AtFrequency(topology, r, float(spec.source_ohms), _load(spec), ys, w * factor, power)
                      for factor, power in CHECKS]

    def __call__(self, cin, cout, ce=np.inf) -> np.ndarray:
        cin, cout, ce = np.broadcast_arrays(np.asarray(cin, float), np.asarray(cout, float), np.asarray(ce, float))
        ok = self.tests[0](cin, cout, ce)
        flat = ok.reshape(-1)  # a view: the passband test fills in where the low cut-off is met
        idx = np.flatnonzero(flat)
        if len(idx):
            flat[idx] = self.tests[1](cin.reshape(-1)[idx], cout.reshape(-1)[idx], ce.reshape(-1)[idx])
        return ok
