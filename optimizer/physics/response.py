"""Small-signal figures of a stage: midband gain, input and output resistance, the frequency response.

Q1 is linearised exactly at its operating point (the Jacobian of the Gummel–Poon
currents: gm, gπ, go, gμ).  The model has no junction capacitances, so there is no
upper roll-off: "midband" is the limit where every capacitor is a short.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optimizer.physics.circuit import NODES, Circuit, q_currents, solve_small_signal

OUT, IN = NODES.index("out"), NODES.index("in")
CURVE_HZ = np.logspace(0, 6, 121)  # 1 Hz … 1 MHz, 20 points per decade
_SCAN_HZ = np.logspace(-4, 9, 261)  # wide enough to bracket any practical corner
REFINE_POINTS, REFINE_ROUNDS = 65, 5  # the corner to 0.05 / 64**5 ≈ 5e-11 decades


@dataclass(frozen=True)
class Midband:
    gain: float  # V/V, source EMF → load, signed
    rin_ohms: float  # what the source sees (after RS)
    rout_ohms: float  # what the load sees


def midband(circuit: Circuit, op: dict) -> Midband:
    h = solve_small_signal(circuit, op)[0, OUT]
    zin = solve_small_signal(circuit, op, source=0.0, inject=("in", "0"), skip=("RS",))[0, IN]
    zout = solve_small_signal(circuit, op, source=0.0, inject=("out", "0"), skip=("RL",))[0, OUT]
    return Midband(float(h.real), float(zin.real), float(zout.real))


def transfer(circuit: Circuit, op: dict, freq_hz) -> np.ndarray:
    """Complex gain V(out)/V(source EMF) at each frequency (Hz)."""
    return solve_small_signal(circuit, op, freq_hz=np.asarray(freq_hz, dtype=float))[:, OUT]


def curve(circuit: Circuit, op: dict, freq_hz=CURVE_HZ) -> dict:
    """{"freq_hz", "gain_db", "phase_deg"} as lists, for plots and the JSON."""
    h = transfer(circuit, op, freq_hz)
    return {
        "freq_hz": np.asarray(freq_hz, dtype=float).tolist(),
        "gain_db": (20 * np.log10(np.abs(h))).tolist(),
        "phase_deg": np.degrees(np.angle(h)).tolist(),
    }


def lower_corner(circuit: Circuit, op: dict, gain_mid: float) -> float:
    """f_low (Hz): the highest frequency where |H| = |H_mid|/√2; 0.0 for a DC-coupled stage."""
    if not any(p.kind == "C" for p in circuit.parts):
        return 0.0
    target = abs(gain_mid) / np.sqrt(2.0)
    below = np.abs(transfer(circuit, op, _SCAN_HZ)) < target
    if not below.any():
        return 0.0  # under 0.1 mHz: as good as DC-coupled
    i = int(np.nonzero(below)[0][-1])
    if i == len(_SCAN_HZ) - 1:
        return float("inf")

    # |H| rises monotonically through the bracket: narrow it on vectorised grids (each round
    # divides it by REFINE_POINTS − 1) to well under 1e-9 decades.  (No scipy root finder: its
    # import costs most of a second of a command's time limit.)
    lo, hi = np.log10(_SCAN_HZ[i]), np.log10(_SCAN_HZ[i + 1])
    for _ in range(REFINE_ROUNDS):
        grid = np.linspace(lo, hi, REFINE_POINTS)
        below = np.abs(transfer(circuit, op, 10.0**grid)) < target
        j = min(int(np.nonzero(below)[0][-1]) if below.any() else 0, REFINE_POINTS - 2)
        lo, hi = grid[j], grid[j + 1]
    return float(10.0 ** ((lo + hi) / 2.0))


def capacitor_corners(circuit: Circuit, op: dict) -> dict[str, dict[str, float]]:
    """Per capacitor: the resistance it sees (Ω, others shorted, source zeroed) and 1/(2π R C) (Hz).

    The short-circuit time-constant estimate: the corners add roughly to f_low when one dominates.
    """
    out = {}
    for p in circuit.parts:
        if p.kind != "C":
            continue
        v = solve_small_signal(circuit, op, source=0.0, inject=(p.a, p.b), skip=(p.name,))[0]
        r = float((v[NODES.index(p.a)] - v[NODES.index(p.b)]).real)
        out[p.name] = {"r_seen_ohms": r, "farads": p.value, "f_hz": 1.0 / (2 * np.pi * r * p.value)}
    return out


def small_signal_params(circuit: Circuit, op: dict) -> dict[str, float]:
    """gm, gπ, go, gμ (S) of Q1 at the operating point, from the exact model derivatives.

    With vbc = vbe − vce: gm = ∂ic/∂vbe|vce, go = ∂ic/∂vce, gπ = ∂ib/∂vbe|vce,
    gμ = ∂ib/∂vbc (the base–collector junction's own conductance).
    """
    _, _, a1, a2, b1, b2 = q_currents(circuit, op)
    return {"gm": float(a1 + a2), "go": float(-a2), "gpi": float(b1 + b2), "gmu": float(b2)}
