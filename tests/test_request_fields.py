"""The design request's fields: one set of defaults, read from the solver's own definitions."""

from __future__ import annotations

import pytest

from optimizer.search.select import DEFAULT_PATIENCE_S, DEFAULT_PREFER, DEFAULT_TIME_LIMIT_S
from optimizer.spec import Spec, default_rin_floor
from tui import request_fields as rf


def test_the_defaults_are_the_solvers():
    spec, search, problems = rf.build_request({}, {})
    assert problems == {}
    assert spec == Spec()  # every Spec field, min_rin None = the default floor
    assert search == {"prefer": DEFAULT_PREFER, "time_limit_s": DEFAULT_TIME_LIMIT_S, "top": rf.DEFAULT_TOP,
                      "min_yield": None, "depth": Spec().max_parts_per_position, "patience_s": DEFAULT_PATIENCE_S}


def test_each_default_text_parses_back_to_the_default():
    for f in rf.FIELDS:
        if f.default == "":
            continue
        value = f.parse(f.default)
        want = getattr(Spec(), f.target) if f.target in rf.SPEC_FIELDS else {
            "top": rf.DEFAULT_TOP, "time_limit_s": DEFAULT_TIME_LIMIT_S, "patience_s": DEFAULT_PATIENCE_S}[f.target]
        assert value == pytest.approx(want), f.name


def test_every_cli_design_option_is_offered():
    from tui.cli import build_parser

    parser = build_parser()
    design = next(a for a in parser._subparsers._group_actions[0].choices.items() if a[0] == "design")[1]
    cli = {opt for action in design._actions for opt in action.option_strings if opt.startswith("--")}
    # Output and reproducibility switches belong to the command line, not to the request.
    cli -= {"--help", "--json", "--save", "--no-hints", "--seed", "--again"}
    offered = {f.option for f in rf.FIELDS} | {"--topology", "--depth", "--prefer"}
    assert cli <= offered, cli - offered
    for option in ("--max-current", "--temp-range", "--min-yield", "--top", "--max-thd", "--min-vce",
                   "--prefer", "--time-limit", "--patience", "--min-rin"):
        assert option in offered


def test_follower_is_not_asked_for_a_gain():
    spec, _, problems = rf.build_request({"gain": "12"}, {"topology": "emitter-follower"})
    assert problems == {} and spec.gain == rf.preset_gain("emitter-follower") < 1
    _, _, problems = rf.build_request({"gain": "12"}, {"topology": "common-emitter"})
    assert problems == {}


@pytest.mark.parametrize(("text", "value"), [("1%", 0.01), ("0.01", 0.01), ("5 %", 0.05), ("0", 0.0)])
def test_shares_take_a_fraction_or_a_percentage(text, value):
    assert rf.parse_fraction(text) == pytest.approx(value)


@pytest.mark.parametrize("text", ["1", "150%", "-1%", "abc", ""])
def test_shares_refuse_nonsense(text):
    with pytest.raises(ValueError, match="share"):
        rf.parse_fraction(text)


def test_empty_min_rin_is_the_default_floor_and_says_so():
    spec, _, _ = rf.build_request({"source": "4k7", "min_rin": ""}, {})
    assert spec.min_rin_ohms is None and spec.rin_floor == default_rin_floor(4.7e3)
    assert rf.rin_floor_text("4k7").endswith("47 kΩ")  # 10 × 4.7 kΩ (common practice, no source)


def test_frequencies_accept_si_prefixes():
    assert rf.parse_hz("1.8k") == pytest.approx(1800) and rf.parse_hz("30 Hz") == 30
    with pytest.raises(ValueError, match="frequency"):
        rf.parse_hz("fast")


def test_temperature_range_refuses_below_absolute_zero():
    with pytest.raises(ValueError):
        rf.parse_temp_range("-300..-280")
    assert rf.parse_temp_range("0..50") == (0.0, 50.0)


def test_command_line_options_from_the_same_list():
    import argparse

    parser = argparse.ArgumentParser()
    rf.add_arguments(parser)
    spec, search, problems = rf.from_arguments(parser.parse_args([]))
    assert (spec, search, problems) == rf.build_request({}, {})
    args = parser.parse_args(["--gain", "20", "--max-thd", "2%", "--prefer", "clean", "--time-limit", "3",
                              "--min-rin", "4k7", "--temp-range", "10..40"])
    spec, search, problems = rf.from_arguments(args)
    assert problems == {} and spec.gain == 20 and spec.max_thd == 0.02 and spec.min_rin_ohms == 4700
    assert spec.temp_range_c == (10.0, 40.0) and search["prefer"] == "clean" and search["time_limit_s"] == 3
    _, _, problems = rf.from_arguments(parser.parse_args(["--load", "22q"]))
    assert rf.BY_NAME["load"].option == "--load" and "22q" in problems["load"]


def test_a_chain_takes_a_min_yield():
    """Chains have a Monte Carlo yield (optimizer/chain/montecarlo.py), so Min yield is a constraint
    for them as for one stage, not a problem of the request."""
    spec, search, problems = rf.build_request({"min_yield": "80%", "min_rin": "100k"},
                                              {"topology": "common-emitter+common-emitter"})
    assert problems == {} and spec.topology == "common-emitter+common-emitter"
    assert search["min_yield"] == pytest.approx(0.8)
