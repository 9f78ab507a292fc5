"""A chain's figures at a batch of corners, exactly: DC, midband gain, Rin, Rout, f_low and THD.

Everything is solved on the whole chain (chain/circuit.py), both transistors at once, one batch
row per corner (BF of Q1, BF of Q2, temperature).  THD is the large-signal solve of the whole
chain over one period with every capacitor holding its DC charge (as optimizer.physics.distortion does for
one stage): the source amplitude is adjusted per corner until the load sees the asked swing, and
harmonics 2…10 of the load voltage are taken (distortion.thd_of).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optimizer.chain.circuit import (
    Chain,
    Net,
    build_net,
    dc_links,
    operating_point,
    q_currents,
    solve_nonlinear,
    solve_small_signal,
)
from optimizer.physics.distortion import HARMONICS, VCE_SAT_V
from optimizer.physics.swing import CUTOFF_FRACTION

SCAN_HZ = np.logspace(-4, 9, 261)
POINTS = 256


@dataclass
class Figures:
    """Per corner (arrays of length K): see `figures`."""

    net: Net
    op: np.ndarray  # (K, n) node voltages
    ic: list  # [ic of Q1, ic of Q2], (K,) each
    ib: list
    gain: np.ndarray  # source EMF → load, signed, midband
    gain_second: np.ndarray  # from node x (the interstage) to the load
    rin: np.ndarray
    rout: np.ndarray
    i_supply: np.ndarray
    f_low: np.ndarray | None = None
    thd: np.ndarray | None = None
    reached: np.ndarray | None = None
    saturates: np.ndarray | None = None
    cuts_off: np.ndarray | None = None
    min_vce: np.ndarray | None = None
    amplitude: np.ndarray | None = None  # source EMF, V peak, that gives the swing

    def node(self, name: str) -> np.ndarray:
        """The solved net's DC voltage at `name` per corner (an all-PNP chain's mirror frame: VCE, VBE as magnitudes)."""
        return self.op[:, self.net.nodes.index(name)]

    def volts(self, name: str) -> np.ndarray:
        """The DC voltage at `name` per corner in real polarity (V to 0 V), as the user measures it."""
        return self.net.real(self.op)[:, self.net.nodes.index(name)]

    @property
    def clips(self) -> np.ndarray:
        return self.saturates | self.cuts_off | ~self.reached


def figures(chain: Chain, corners, swing_pp: float | None = None, *, points: int = POINTS,
            low_cut: bool = True) -> Figures:
    """The chain's figures at each corner [(BF1, BF2, °C), …]; THD (and clipping) when `swing_pp`
    (V p-p at the load) is given; f_low when `low_cut`.  RuntimeError when the DC point fails."""
    net = build_net(chain, corners)
    op = operating_point(net)
    i = net.nodes.index
    (ic1, ib1), (ic2, ib2) = q_currents(net, op)
    mid = solve_small_signal(net, op)[:, 0, :]
    gain = mid[:, i("out")].real
    second = (mid[:, i("out")] / mid[:, i("x")]).real
    rin = solve_small_signal(net, op, source=0.0, inject=("in", "0"), skip=("RS",))[:, 0, i("in")].real
    rout = solve_small_signal(net, op, source=0.0, inject=("out", "0"), skip=("RL",))[:, 0, i("out")].real
    i_supply = np.zeros(net.batch)
    for p in net.parts:
        if p.kind == "R" and "vcc" in (p.a, p.b):
            other = p.b if p.a == "vcc" else p.a
            i_supply += (op[:, i("vcc")] - op[:, i(other)]) / p.value
    for (c, _, _), ic in zip(net.qs, (ic1, ic2), strict=True):
        if _tied_to_supply(net, c):
            i_supply += ic  # a follower's collector sits on the supply: its current comes from it
    out = Figures(net, op, [ic1, ic2], [ib1, ib2], gain, second, rin, rout, i_supply)
    if low_cut:
        out.f_low = np.array([_lower_corner(_pick(net, k), op[k:k + 1], gain[k]) for k in range(net.batch)])
    if swing_pp is not None:
        _distortion(out, swing_pp, points)
    return out


def _tied_to_supply(net: Net, node: str) -> bool:
    return (node, "vcc") in net.shorts or ("vcc", node) in net.shorts


def _pick(net: Net, k: int) -> Net:
    models = tuple(tuple(m[k:k + 1] for m in model) for model in net.models)
    return Net(net.nodes, net.parts, net.shorts, net.qs, models, net.supply_v, net.mirror_v)


def transfer(net: Net, op, freq_hz) -> np.ndarray:
    """(K, nf) complex gain V(out)/V(source EMF)."""
    return solve_small_signal(net, op, freq_hz=np.asarray(freq_hz, dtype=float))[:, :, net.nodes.index("out")]


def _lower_corner(net: Net, op, gain_mid: float) -> float:
    """f_low (Hz) of one corner: the highest frequency where |H| = |H_mid|/√2 (as response.lower_corner)."""
    target = abs(gain_mid) / np.sqrt(2.0)
    below = np.abs(transfer(net, op, SCAN_HZ)[0]) < target
    if not below.any():
        return 0.0
    j = int(np.nonzero(below)[0][-1])
    if j == len(SCAN_HZ) - 1:
        return float("inf")
    from scipy.optimize import brentq

    def excess(log_f):
        return float(np.abs(transfer(net, op, [10.0 ** log_f])[0, 0])) - target

    return float(10.0 ** brentq(excess, np.log10(SCAN_HZ[j]), np.log10(SCAN_HZ[j + 1]), xtol=1e-9, rtol=1e-12))


def _distortion(f: Figures, swing_pp: float, points: int) -> None:
    """THD and clipping at `swing_pp` V p-p at the load, every corner at once (fills `f`)."""
    net, op, k = f.net, f.op, f.net.batch
    wide = net.tiled(points)
    i = net.nodes.index
    phase = np.tile(np.sin(2 * np.pi * np.arange(points) / points), k)
    held = [(p.a, p.b, np.repeat(op[:, i(p.a)] - op[:, i(p.b)], points)) for p in net.parts if p.kind == "C"]
    last = np.repeat(op, points, axis=0)

    def solve(amp):
        nonlocal last
        v, ok = solve_nonlinear(wide, dc_links(net, np.repeat(amp, points) * phase) + held, last)
        good = ok.reshape(k, points).all(axis=1)
        v = np.where(np.repeat(good, points)[:, None], v, last)
        last = v
        return v, good

    lin = swing_pp / (2 * np.maximum(np.abs(f.gain), 1e-12))
    for frac in (0.25, 0.5, 0.75):
        solve(frac * lin)
    amp = lin.copy()
    v, good = solve(amp)
    pp = np.ptp(v[:, i("out")].reshape(k, points), axis=1)
    active = good.copy()
    for _ in range(40):
        active &= np.abs(pp - swing_pp) > 1e-6 * swing_pp
        if not active.any():
            break
        nxt = np.minimum(4 * lin, amp * swing_pp / np.maximum(pp, 1e-15))
        trial = np.where(active, amp + np.clip(nxt - amp, -0.25 * amp, 0.25 * amp), amp)
        v_t, good_t = solve(trial)
        pp_t = np.ptp(v_t[:, i("out")].reshape(k, points), axis=1)
        take = active & good_t
        stalled = take & (trial > amp) & (pp_t - pp < 1e-3 * pp)
        amp = np.where(take, trial, amp)
        pp = np.where(take, pp_t, pp)
        active &= good_t & ~stalled
    v = last
    out = v[:, i("out")].reshape(k, points)
    x = np.abs(np.fft.rfft(out, axis=1))
    with np.errstate(invalid="ignore", divide="ignore"):
        thd = np.sqrt(np.sum(x[:, list(HARMONICS)] ** 2, axis=1)) / x[:, 1]
    f.thd = np.where(good & np.isfinite(thd), thd, np.inf)  # a corner that never solved: no figure to claim
    f.reached = good & (np.abs(pp - swing_pp) <= 1e-3 * swing_pp)
    sat = np.zeros(k, dtype=bool)
    cut = np.zeros(k, dtype=bool)
    min_vce = np.full(k, np.inf)
    currents = q_currents(wide, v)
    for (c, _, e), (ic, _), ic_q in zip(net.qs, currents, f.ic, strict=True):
        vce = (v[:, i(c)] - v[:, i(e)]).reshape(k, points).min(axis=1)
        min_vce = np.minimum(min_vce, vce)
        sat |= vce < VCE_SAT_V
        cut |= ic.reshape(k, points).min(axis=1) < CUTOFF_FRACTION * ic_q
    f.saturates, f.cuts_off, f.min_vce, f.amplitude = sat, cut, min_vce, amp
