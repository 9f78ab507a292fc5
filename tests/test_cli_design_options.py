"""`design` options of the trade-off search (--max-thd, --min-vce, --prefer, --time-limit, --patience), the default Rin
floor, exit codes 0/3/4 and the progress bar.  The solver is replaced by a recorder here: these tests pin
what the command line hands to `find_designs` and how it reports each status, not the search."""

from __future__ import annotations

import io
import json

import pytest

import optimizer.search.select as select
from optimizer import spec as spec_module
from tui import cmd_design
from tui.cli import main

DRAWER = b"kind,value,qty\nresistor,4k7,10\n"


@pytest.fixture
def calls(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("DRAWERFIT_INVENTORY", raising=False)
    (tmp_path / "drawer.csv").write_bytes(DRAWER)
    seen = []
    from optimizer.search.result import spec_json

    def recorder(drawer, spec, **kw):
        seen.append((spec, kw))
        return {**DOC["now"], "spec": spec_json(spec)}

    monkeypatch.setattr(select, "find_designs", recorder)
    return seen


DESIGN = {"topology": "common-emitter", "parts": {}, "uses": [{"line": 2, "qty": 1}],
          "predicted": {"gain": -10.0, "vb": 1, "ve": 0.4, "vc": 6, "ic": 1e-3, "rin": 9e3, "rout": 4.7e3,
                        "f_low": 20.0, "swing_pp": 6.0, "thd": 0.004},
          "score": {"parts": 7, "thd": 0.004, "robustness": 0.12, "supply_a": 1.9e-3}, "best_for": ["cleanest"]}
DOC = {"now": None}


def _doc(status, designs=(), optimal=False):
    return {"designs": list(designs), "why": ["THD binds: 1.6 % at 5 V p-p"], "hints": [], "status": status,
            "optimal": optimal, "unexplored": None if optimal else "budgets above 9 parts", "spec": {}}


def test_defaults_reach_the_solver(calls):
    DOC["now"] = _doc("infeasible")
    assert main(["design", "--gain", "10", "--json"]) == 3
    spec, kw = calls[-1]
    assert spec.min_rin_ohms is None  # not given: the spec's default floor applies
    assert spec.max_thd == spec_module.DEFAULT_MAX_THD and spec.min_vce_v == spec_module.DEFAULT_MIN_VCE_V
    assert kw["prefer"] == select.DEFAULT_PREFER and kw["time_limit_s"] == select.DEFAULT_TIME_LIMIT_S
    assert kw["patience_s"] == select.DEFAULT_PATIENCE_S


def test_cli_mirrors_of_solver_constants_agree():
    # tui.cmd_design keeps copies so that `--help` does not load OR-Tools; they must not drift.
    assert cmd_design.PREFERENCES == select.PREFERENCES or set(cmd_design.PREFERENCES) == set(select.PREFERENCES)
    assert cmd_design.DEFAULT_PREFER == select.DEFAULT_PREFER
    assert cmd_design.DEFAULT_TIME_LIMIT_S == select.DEFAULT_TIME_LIMIT_S


@pytest.mark.parametrize(("text", "thd"), [("1%", 0.01), ("0.01", 0.01), ("2.5 %", 0.025), ("5e-3", 0.005)])
def test_max_thd_as_percent_or_fraction(calls, text, thd):
    DOC["now"] = _doc("infeasible")
    main(["design", "--gain", "10", "--max-thd", text, "--json"])
    assert calls[-1][0].max_thd == pytest.approx(thd)


def test_options_are_passed_through(calls):
    DOC["now"] = _doc("found", [DESIGN], optimal=True)
    assert main(["design", "--gain", "10", "--min-vce", "1.5", "--prefer", "robust", "--time-limit", "2.5",
                 "--min-rin", "20k", "--temp-range", "-10..60", "--low-cut", "1.8k", "--json"]) == 0
    spec, kw = calls[-1]
    assert (spec.min_vce_v, spec.min_rin_ohms, spec.temp_range_c, spec.low_cut_hz) == (1.5, 20e3, (-10.0, 60.0), 1800.0)
    assert kw["prefer"] == "robust" and kw["time_limit_s"] == 2.5


@pytest.mark.parametrize(("text", "seconds"), [("0", 0.0), ("1.5", 1.5), ("30", 30.0)])
def test_patience_is_passed_through(calls, text, seconds):
    DOC["now"] = _doc("found", [DESIGN], optimal=True)
    assert main(["design", "--gain", "10", "--patience", text, "--json"]) == 0
    assert calls[-1][1]["patience_s"] == seconds


@pytest.mark.parametrize("text", ["-1", "nan", "soon", "1e9"])
def test_patience_refuses_nonsense(calls, capsys, text):
    DOC["now"] = _doc("found", [DESIGN], optimal=True)
    assert main(["design", "--gain", "10", f"--patience={text}"]) == 2
    assert "--patience" in capsys.readouterr().err
    assert calls == []


def test_a_settled_stop_says_so(calls, capsys):
    DOC["now"] = {**_doc("found", [DESIGN], optimal=False), "search": {"stopped_by": "settled"},
                  "unexplored": "settled: the preferred design had not changed for 2 s (--patience), so the search "
                                "stopped; left: value tuples of 6 to 10 resistor parts"}
    assert main(["design", "--gain", "10"]) == 0
    out = capsys.readouterr().out
    assert "not proven optimal (--patience 0 searches to the time limit)" in out
    assert "unexplored: settled: the preferred design had not changed for 2 s" in out


@pytest.mark.parametrize(("status", "designs", "code"), [
    ("found", [DESIGN], 0), ("infeasible", [], 3), ("unproven", [], 4),
])
def test_exit_codes_follow_the_status(calls, capsys, status, designs, code):
    DOC["now"] = _doc(status, designs, optimal=status != "unproven")
    assert main(["design", "--gain", "10"]) == code
    out = capsys.readouterr().out
    if code == 4:  # reasons so far are still printed, and what to try
        assert "THD binds" in out and "--time-limit" in out
    if code == 0:
        assert "best for: cleanest" in out and "THD 0.40 %" in out and "1.9 mA" in out
        assert "not proven optimal" not in out


def test_found_but_not_optimal_is_exit_0_and_says_so(calls, capsys):
    DOC["now"] = _doc("found", [DESIGN], optimal=False)
    assert main(["design", "--gain", "10"]) == 0
    assert "not proven optimal" in capsys.readouterr().out


def test_human_output_states_the_default_rin_floor(calls, capsys):
    DOC["now"] = _doc("infeasible")
    main(["design", "--gain", "10", "--source", "600"])
    out = capsys.readouterr().out
    assert "Rin ≥ 6,000 Ω" in out and "default" in out  # 10 × 600 Ω (the spec's default floor)
    main(["design", "--gain", "10", "--source", "10"])
    assert "Rin ≥ 1,000 Ω" in capsys.readouterr().out  # never below 1 kΩ
    main(["design", "--gain", "10", "--min-rin", "47k"])
    out = capsys.readouterr().out
    assert "Rin ≥ 47,000 Ω (--min-rin)" in out


def test_design_without_score_keys_still_prints(calls, capsys):
    bare = {k: v for k, v in DESIGN.items() if k not in ("score", "best_for")}
    DOC["now"] = _doc("found", [bare], optimal=True)
    assert main(["design", "--gain", "10"]) == 0


def test_progress_bar_only_on_a_terminal(calls, monkeypatch):
    DOC["now"] = _doc("infeasible")
    main(["design", "--gain", "10", "--json"])
    assert calls[-1][1]["progress"] is None  # stderr is not a terminal under pytest

    class Tty(io.StringIO):
        def isatty(self):
            return True

    fake = Tty()
    monkeypatch.setattr("sys.stderr", fake)
    fed = []

    def solver(drawer, spec, **kw):
        for f in (0.0, 0.5, float("nan"), 1.0):
            kw["progress"](f, "screened")
        fed.append(True)
        return _doc("infeasible")

    monkeypatch.setattr(select, "find_designs", solver)
    assert main(["design", "--gain", "10", "--json"]) == 3
    assert fed and "searching" in fake.getvalue()


def test_json_carries_status_and_optimal(calls, capsys):
    DOC["now"] = _doc("unproven")
    assert main(["design", "--gain", "10", "--json"]) == 4
    doc = json.loads(capsys.readouterr().out)
    assert doc["status"] == "unproven" and doc["optimal"] is False


# ---- the crash sweep of a new bench user (each test names the command line it pins) ------------------------------

@pytest.mark.parametrize("text", ["0", "0 V", "0V"])
def test_min_vce_zero_is_taken(calls, text):
    # README: `--temp-range 27..27 --max-thd 1 --min-vce 0 --min-rin 0` gives the checks of earlier versions;
    # `--min-vce 0` was refused as '"0" is not a voltage'.
    DOC["now"] = _doc("infeasible")
    assert main(["design", "--gain", "10", "--min-vce", text, "--json"]) == 3
    assert calls[-1][0].min_vce_v == 0.0


def test_min_vce_zero_in_the_apps_request_form_too():
    from tui import request_fields as rf

    assert rf.BY_NAME["min_vce"].parse("0") == 0.0
    with pytest.raises(rf.FieldError):
        rf.BY_NAME["min_vce"].parse("-1")


@pytest.mark.parametrize(("argv", "said"), [
    (["--time-limit", "-1"], '--time-limit: "-1" is below 0'),   # was: "-1" is not a number
    (["--max-current", "0"], '--max-current: "0": expected a value above 0'),  # was: "0" is not a current
    (["--swing", "0"], '--swing: "0": expected a value above 0'),
    (["--supply", "-12"], '--supply: "-12" is below 0'),
])
def test_signs_and_zeros_are_said_plainly(calls, capsys, argv, said):
    assert main(["design", "--gain", "10", *argv]) == 2
    err = capsys.readouterr().err
    assert said in err and "is not a" not in err
    assert calls == []


def test_a_supply_over_60_v_blames_the_supply_alone(calls, capsys):
    # `--supply 61` once also said "--negative-supply: 0 V; the rails may span at most 60 V".
    assert main(["design", "--gain", "10", "--supply", "61"]) == 2
    err = capsys.readouterr().err
    assert "--supply: 61 V" in err and "--negative-supply" not in err


@pytest.mark.parametrize("target", ["missing/x.json", ".", ""])
def test_a_bad_save_target_is_refused_before_the_search(calls, capsys, target):
    # `--save missing/x.json` once failed only after the whole search (its result lost); `--save ""` saved
    # nothing and said nothing.
    assert main(["design", "--gain", "10", "--save", target]) == 2
    assert capsys.readouterr().err.startswith("drawerfit: --save")
    assert calls == []


@pytest.mark.parametrize(("argv", "said"), [
    # argparse took these for options and said "--max-thd: expected one argument", naming no reason.
    (["--max-thd", "-1%"], '--max-thd: "-1%" is below 0'),
    (["--gain-tol", "-1%"], '--gain-tol: "-1%" is below 0'),
    (["--source", "-1k"], '--source: "-1k" is below 0'),
    (["--load", "-4k7"], '--load: "-4k7" is below 0'),
    (["--low-cut", "-.5"], '--low-cut: "-.5" is below 0'),
    (["--swing", "-1e0"], '--swing: "-1e0" is below 0'),
    (["--source", "-inf"], '--source: "-inf" is not a resistance'),
])
def test_negative_looking_values_reach_the_options_own_check(calls, capsys, argv, said):
    assert main(["design", "--gain", "10", *argv]) == 2
    err = capsys.readouterr().err
    assert said in err and "expected one argument" not in err and err.count("\n") == 1
    assert calls == []


@pytest.mark.parametrize("argv", [["--supply", "12", "--negative-supply", "-12"], ["--supply", "±12"],
                                  ["--supply=12", "--negative-supply=-12"]])
def test_a_negative_rail_is_still_read(calls, argv):
    DOC["now"] = _doc("infeasible")
    assert main(["design", "--topology", "split-common-emitter", "--gain", "5", *argv]) == 3
    spec = calls[0][0]
    assert (spec.supply_v, spec.negative_supply_v) == (12.0, -12.0)


def test_a_value_that_is_an_option_is_still_refused_by_argparse(calls, capsys):
    assert main(["design", "--gain", "10", "--source", "--json"]) == 2
    assert "--source: expected one argument" in capsys.readouterr().err
    assert calls == []
