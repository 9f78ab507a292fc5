"""Large-signal distortion against the exponential law's Bessel series and trade facts."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import iv

from optimizer.physics.circuit import build
from optimizer.physics.distortion import distortion, drive_for_swing, thd_of
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor


def ce(re1: float | None, bf: float = 200.0, vaf: float = 100.0, rs: float = 1e3) -> Stage:
    r = {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE2": 1e3}
    if re1:
        r["RE1"] = re1
    return Stage("common-emitter", r, {"CIN": 10e-6, "COUT": 10e-6, "CE": 470e-6}, 12.0, rs, 22e3,
                 Transistor(bf=bf, vaf_v=vaf))


def test_thd_of_known_waveforms():
    # Fourier definition: a sine with 1 % second and 0.5 % third harmonic has THD √(1² + 0.5²) %.
    t = np.arange(256) / 256
    wave = np.sin(2 * np.pi * t) + 0.01 * np.sin(4 * np.pi * t + 0.3) + 0.005 * np.cos(6 * np.pi * t)
    assert thd_of(wave) == pytest.approx(math.hypot(0.01, 0.005), rel=1e-9)
    assert thd_of(3 + np.sin(2 * np.pi * t)) < 1e-12


def test_undegenerated_stage_follows_the_bessel_series_of_the_exponential():
    # exp(x·sin θ) expands in modified Bessel functions I_n(x) (Abramowitz & Stegun 9.6.34), so
    # with the base driven by an ideal source (RS = 0, CIN and CE shorts at midband), no
    # emitter resistance and no Early effect, the collector current — and the load voltage,
    # linear in it — has THD √(Σ_{n=2..10} I_n(x)²)/I_1(x), x = v̂/Vt.
    st = ce(None, vaf=math.inf, rs=0.0)
    d = distortion(st, 1.0)
    x = d.source_amplitude_v / build(st).model[4]
    n = np.arange(2, 11)
    assert d.thd == pytest.approx(np.sqrt(np.sum(iv(n, x) ** 2)) / iv(1, x), rel=1e-4)


def test_no_emitter_resistance_distorts_where_degeneration_stays_clean():
    # Common practice, no source: RE = 0 distorts by several % at a few volts out, while a
    # few hundred ohms of unbypassed RE1 keep the same swing under 1 %.
    bare = distortion(ce(None), 3.0)
    degenerated = distortion(ce(470.0), 3.0)
    assert bare.thd > 0.03
    assert degenerated.thd < 0.01


def test_requested_swing_is_delivered():
    d = distortion(ce(330.0), 4.0)
    assert d.swing_pp == pytest.approx(4.0, rel=1e-4)
    assert d.reached and not d.clips


def test_swing_beyond_the_supply_clips():
    # A 12 V single-supply stage cannot swing 11.5 V p-p into its load.
    d = distortion(ce(470.0), 11.5)
    assert d.clips
    assert d.saturates or d.cuts_off


def test_drive_scales_with_the_swing_while_linear():
    # Well below clipping the stage is nearly linear: double the swing needs about double the drive.
    st = ce(470.0)
    a1, a2 = drive_for_swing(st, 0.5), drive_for_swing(st, 1.0)
    assert a2 / a1 == pytest.approx(2.0, rel=0.01)


def test_bad_swing_is_refused():
    with pytest.raises(ValueError, match="positive swing"):
        distortion(ce(470.0), 0.0)
