"""The physical constants the model writes out, against scipy.constants (CODATA; exact in the 2019 SI)."""

from __future__ import annotations

import pytest
from scipy import constants

from optimizer.physics import transistor


def test_boltzmann_over_q_and_zero_celsius_match_scipy():
    assert transistor.BOLTZMANN_J_PER_K == constants.k  # exact by definition since 2019
    assert transistor.ELEMENTARY_CHARGE_C == constants.e
    assert transistor.ZERO_C_IN_K == constants.zero_Celsius
    # Vt at 27 °C is about 25.9 mV (every transistor-circuits text rounds it to 26 mV; from memory)
    assert float(transistor.thermal_voltage(27.0)) == pytest.approx(constants.k * 300.15 / constants.e, rel=1e-15)
