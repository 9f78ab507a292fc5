"""The bipolar transistor model shared by every analysis and by the SPICE netlist.

It is the DC subset of the Gummel–Poon model as SPICE evaluates it: with no
high-injection, leakage or ohmic terms it reduces to the Ebers–Moll transport
model plus the forward Early effect.  Keeping exactly SPICE's equations and
temperature laws lets the tests compare against ngspice with the same `.model`.

All functions take and return SI units and broadcast over numpy arrays.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
# Exact by definition in the 2019 SI (BIPM, The International System of Units, 9th ed.); the tests check
# them against scipy.constants.  Written out so that loading the model does not load scipy.
BOLTZMANN_J_PER_K = 1.380649e-23
ELEMENTARY_CHARGE_C = 1.602176634e-19
ZERO_C_IN_K = 273.15
TNOM_C = 27.0  # SPICE's default nominal temperature
BOLTZMANN_OVER_Q = BOLTZMANN_J_PER_K / ELEMENTARY_CHARGE_C  # V/K


def thermal_voltage(temp_c):
    """Vt = kT/q in volts at `temp_c` (°C)."""
    return BOLTZMANN_OVER_Q * (np.asarray(temp_c, dtype=float) + ZERO_C_IN_K)


def saturation_current(is_nom_a, temp_c, xti=3.0, eg_ev=1.11, tnom_c=TNOM_C):
    """IS at `temp_c`, SPICE's law: IS·(T/Tnom)^XTI·exp((T/Tnom − 1)·EG/Vt(T)).

    is_nom_a: IS at Tnom (A); eg_ev: band gap (eV); temperatures in °C.
    """
    t = np.asarray(temp_c, dtype=float) + ZERO_C_IN_K
    tn = tnom_c + ZERO_C_IN_K
    return is_nom_a * np.exp((t / tn - 1.0) * eg_ev / thermal_voltage(temp_c) + xti * np.log(t / tn))


def beta_at(beta_nom, temp_c, xtb=1.5, tnom_c=TNOM_C):
    """Forward (or reverse) beta at `temp_c`: β·(T/Tnom)^XTB, SPICE's law (dimensionless)."""
    t = np.asarray(temp_c, dtype=float) + ZERO_C_IN_K
    return beta_nom * ((t / (tnom_c + ZERO_C_IN_K)) ** xtb)


def is_from_vbe(vbe_at_1ma_v, ic_a=1e-3, temp_c=TNOM_C):
    """IS (A) that gives IC = `ic_a` at VBE = `vbe_at_1ma_v` and VCB = 0 (Early factor 1)."""
    return ic_a / np.expm1(np.asarray(vbe_at_1ma_v, dtype=float) / thermal_voltage(temp_c))


def terminal_currents(vbe_v, vbc_v, is_a, bf, br, vaf_v, vt_v):
    """Collector and base currents (A) of an NPN, as SPICE's Gummel–Poon subset.

    IBE = IS(e^(VBE/Vt) − 1), IBC = IS(e^(VBC/Vt) − 1), qb = 1/(1 − VBC/VAF),
    IC = (IBE − IBC)/qb − IBC/BR,  IB = IBE/BF + IBC/BR.
    `vaf_v` = inf disables the Early effect.  All values already at temperature.
    """
    ibe = is_a * np.expm1(vbe_v / vt_v)
    ibc = is_a * np.expm1(vbc_v / vt_v)
    inv_qb = 1.0 - vbc_v / vaf_v
    ic = (ibe - ibc) * inv_qb - ibc / br
    ib = ibe / bf + ibc / br
    return ic, ib


@dataclass(frozen=True)
class Transistor:
    """One transistor type with the parameters the model needs (SI units).

    bf: forward beta (hFE) at Tnom used for this analysis; hfe_min/hfe_max the
    spread a drawer line promises; is_a at Tnom; vaf_v Early voltage.
    """

    name: str = "generic NPN"
    polarity: str = "NPN"
    bf: float = 200.0
    is_a: float = float(is_from_vbe(0.65))
    vaf_v: float = 100.0
    br: float = 1.0
    xti: float = 3.0
    eg_ev: float = 1.11
    xtb: float = 1.5
    hfe_min: float | None = None
    hfe_max: float | None = None
    vceo_v: float | None = None
    ic_max_a: float | None = None
    pd_max_w: float | None = None

    def with_beta(self, bf: float) -> Transistor:
        return replace(self, bf=float(bf))

    def at(self, temp_c):
        """(IS, BF, BR, Vt) at `temp_c` °C."""
        return (
            saturation_current(self.is_a, temp_c, self.xti, self.eg_ev),
            beta_at(self.bf, temp_c, self.xtb),
            beta_at(self.br, temp_c, self.xtb),
            thermal_voltage(temp_c),
        )

    def spice_model(self, model_name: str = "QMOD") -> str:
        """A `.model` card with exactly the parameters this module evaluates."""
        kind = "NPN" if self.polarity.upper() == "NPN" else "PNP"
        vaf = f" VAF={self.vaf_v:.6g}" if np.isfinite(self.vaf_v) else ""
        return (
            f".model {model_name} {kind}(IS={self.is_a:.6e} BF={self.bf:.6g} BR={self.br:.6g}"
            f"{vaf} XTI={self.xti:.6g} EG={self.eg_ev:.6g} XTB={self.xtb:.6g})"
        )
