"""analyze(): the report's shape, conservation laws, warnings."""

from __future__ import annotations

import json
import math

import pytest

from optimizer.physics.analysis import PREDICTED_KEYS, analyze
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor


def ce(**kw) -> Stage:
    r = kw.pop("r", {"R1": 56e3, "R2": 12e3, "RC": 4.7e3, "RE1": 470, "RE2": 680})
    return Stage("common-emitter", r, kw.pop("caps", {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 220e-6}),
                 kw.pop("supply_v", 12.0), 1e3, 22e3, kw.pop("transistor", Transistor(bf=180.0)), 25.0)


def test_predicted_has_exactly_the_contract_keys_and_json_is_strict():
    rep = analyze(ce(), 2.0)
    assert tuple(rep.predicted) == PREDICTED_KEYS
    doc = json.loads(json.dumps(rep.to_json(), allow_nan=False))
    assert set(doc) >= {"predicted", "operating_point", "dissipation_w", "corners_hz", "warnings"}
    assert doc["predicted"]["thd"] > 0
    assert analyze(ce()).predicted["thd"] is None


def test_supply_power_equals_the_sum_of_dissipations():
    # Conservation of energy (Tellegen): the supply delivers exactly what the parts dissipate at DC
    # (the source and the capacitive load carry no DC current here).
    rep = analyze(ce())
    delivered = 12.0 * rep.operating_point["i_supply"]
    assert delivered == pytest.approx(sum(rep.dissipation_w.values()), rel=1e-9)


def test_kirchhoff_current_at_the_emitter():
    # KCL: IE = IC + IB flows through RE1 and RE2 in series (CE open at DC).
    rep = analyze(ce())
    op = rep.operating_point
    assert (op["ve"] - op["vmid"]) / 470 == pytest.approx(op["ic"] + op["ib"], rel=1e-9)
    assert op["vmid"] / 680 == pytest.approx(op["ic"] + op["ib"], rel=1e-9)


def test_saturated_bias_is_flagged():
    # RC so large that the collector sits below the emitter: saturation.
    rep = analyze(ce(r={"R1": 10e3, "R2": 10e3, "RC": 100e3, "RE1": 470, "RE2": 680}), 1.0)
    assert rep.operating_point["saturated"]
    assert any("saturated" in w for w in rep.warnings)
    assert rep.predicted["thd"] is None and any("distortion" in w for w in rep.warnings)


def test_swing_past_the_load_line_warns_of_clipping():
    rep = analyze(ce(), 10.0)
    assert rep.predicted["swing_pp"] < 10.0
    assert any("clips" in w for w in rep.warnings)
    assert any("load line" in w for w in rep.warnings)


def test_transistor_ratings_are_checked():
    q = Transistor(bf=180.0, vceo_v=10.0, pd_max_w=1e-3)
    warnings = " ".join(analyze(ce(transistor=q)).warnings)
    assert "VCE at cut-off" in warnings and "dissipation" in warnings


def test_capacitor_orientation_follows_the_dc_voltage():
    rep = analyze(ce())
    assert rep.capacitors["CIN"]["positive_node"] == "base"
    assert rep.capacitors["COUT"]["positive_node"] == "coll"
    assert rep.capacitors["CE"]["dc_v"] == pytest.approx(rep.operating_point["vmid"])


def test_textbook_figures_are_close_to_the_exact_ones():
    # Handbook: VB ≈ VTH for a stiff divider; re' = Vt/IC with Vt = kT/q.
    rep = analyze(ce())
    a = rep.approximations
    assert a["vb_thevenin"] == pytest.approx(rep.predicted["vb"], rel=0.05)
    assert a["re_prime"] == pytest.approx(1.380649e-23 * 298.15 / 1.602176634e-19 / rep.predicted["ic"], rel=1e-6)


def test_response_curve_spans_1_hz_to_1_mhz():
    curve = analyze(ce()).response
    assert curve["freq_hz"][0] == pytest.approx(1.0) and curve["freq_hz"][-1] == pytest.approx(1e6)
    assert len(curve["gain_db"]) == len(curve["freq_hz"]) == len(curve["phase_deg"])
    assert curve["gain_db"][-1] == pytest.approx(20 * math.log10(abs(analyze(ce()).predicted["gain"])), abs=1e-3)


def test_missing_required_position_is_refused():
    with pytest.raises(ValueError, match="R2"):
        analyze(ce(r={"R1": 56e3, "RC": 4.7e3}))
