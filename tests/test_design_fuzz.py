"""Design-path fuzz through the real command line (tests/helpers/design_fuzz.py says what each case checks).

The quick slice runs a few seeded cases on small drawers at --depth 1; the hypothesis run and the
large seeded run are marked `fuzz`.  `python -m tests.helpers.figures --design-cases 2000` prints the
counts over a long run.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from tests.helpers import design_fuzz as fuzz


def _assert_clean(tally: fuzz.Tally) -> None:
    assert tally.ok(), (tally.line(), tally.failures[:5])


def test_nonsense_requests_are_one_line_exit_2(tmp_path):
    # Every option's nonsense, on a real drawer: instant, one line naming the option, file untouched.
    rng = random.Random(7)
    drawer = fuzz.random_drawer(rng, max_lines=30)
    tally = fuzz.Tally()
    fuzz.warm_up()
    for flag in ("--gain", "--gain-tol", "--supply", "--load", "--source", "--swing", "--low-cut", "--min-rin",
                 "--max-current", "--max-thd", "--min-vce", "--temp-range", "--depth", "--top", "--min-yield",
                 "--seed", "--time-limit"):
        for text in ("nan", "-1", "garbage"):
            argv = ["design", "--gain=5", f"{flag}={text}", "--json", "--time-limit=1"]
            if flag == "--time-limit":
                argv = argv[:-1]
            fuzz.run_case(drawer, argv, 1.0, tmp_path, tally, fork=False)
    assert tally.exits.get(2) == tally.cases, tally.line()
    _assert_clean(tally)


def _quick_slice(tmp_path) -> fuzz.Tally:
    fuzz.warm_up()
    rng = random.Random(20261202)
    tally = fuzz.Tally()
    for _ in range(3):
        drawer = fuzz.random_drawer(rng, max_lines=12)
        argv = fuzz.random_request(rng, time_limit=1.0, depth="1", nonsense_share=0.0)
        fuzz.run_case(drawer, argv, 1.0, tmp_path, tally)
    return tally


def test_quick_slice_small_drawers_depth_1(tmp_path):
    # A few real searches: small drawers, depth 1, a 1 s limit.  A hang is killed at the limit + 1 s
    # and counted, never stalls the suite.  No crash, stock breach, changed file or malformed output.
    tally = _quick_slice(tmp_path)
    assert not (tally.crashes or tally.stock_violations or tally.drawer_changed or tally.bad_output
                or tally.overruns), (tally.line(), tally.failures[:5])


@pytest.mark.fuzz
# No shrinking: a case is a seed, and shrinking a seed only re-runs searches for minutes.
@settings(max_examples=60, deadline=None, phases=[Phase.explicit, Phase.reuse, Phase.generate],
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(seed=st.integers(0, 2**32 - 1), lines=st.integers(1, 400), nonsense=st.booleans())
def test_hypothesis_drawers_and_requests(tmp_path, seed, lines, nonsense):
    fuzz.warm_up()
    rng = random.Random(seed)
    tally = fuzz.Tally()
    fuzz.run_case(fuzz.random_drawer(rng, lines), fuzz.random_request(rng, 2.0, nonsense_share=float(nonsense)),
                  2.0, Path(tmp_path), tally)
    _assert_clean(tally)


@pytest.mark.fuzz
def test_seeded_run_of_200_cases():
    _assert_clean(fuzz.run(200, seed=11, time_limit=2.0))
