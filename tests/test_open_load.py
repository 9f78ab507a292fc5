"""An open load (RL = inf, `--load` not connected) must not make the bounds rule out good stages.

RC‖RL is RC itself when RL is open (Ohm's law); the bounds once computed inf/inf there and lost
every tuple, so a spec the hand method meets was called infeasible.  The tuple below is the hand
design that exposed it (gain 4.5 ± 10 % on 15.8 V from a 600 Ω source, ≤ 1 mA).
"""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.kinds import common_emitter_bounds as ce_boxes
from optimizer.search.feasible import check
from optimizer.spec import Spec
from tests.test_select_oracle import CAPS, QS, qline, resistors
from optimizer.search.select import search

SPEC = Spec(gain=4.5, gain_tol=0.1, supply_v=15.8, load_ohms=float("inf"), source_ohms=600.0, swing_pp=1.26,
            low_cut_hz=29.0, max_supply_a=1e-3, temp_range_c=(27.0, 27.0))
TUPLE = {"R1": 300e3, "R2": 56e3, "RC": 13e3, "RE1": 2700.0, "RE2": 330.0}


def test_the_tuple_meets_the_spec_and_the_bounds_keep_it():
    q = qline(60, "BC547A", 110, 220)
    t = {k: np.array([v]) for k, v in TUPLE.items()}
    assert len(check("common-emitter", t, q, SPEC)["ge"]) == 1
    kept = list(ce_boxes.ce_chunks(t, SPEC, q.transistor, (110.0, 220.0)))
    assert kept and float(kept[0]["RC"][0]) == 13e3


def test_search_finds_designs_on_an_open_load():
    rs = resistors([(2, 300e3, 1), (3, 56e3, 1), (4, 13e3, 1), (5, 2700.0, 1), (6, 330.0, 1)])
    sol = search(rs, CAPS, QS, SPEC, top=3, depth=1)
    assert sol.designs and sol.exhaustive


def test_cli_takes_an_open_load_and_answers_in_finite_json(tmp_path):
    import json
    import math
    import shutil
    from contextlib import redirect_stdout
    from io import StringIO

    from tests.demo_job import DEMO
    from tui.cli import main

    drawer = tmp_path / "drawer.csv"
    shutil.copy(DEMO, drawer)
    out = StringIO()
    with redirect_stdout(out):
        # A 5 s limit, not the default 10 s: the JSON's spelling of an open load is tested, not the search
        # (its first designs come within about a second at depth 1 on the demo drawer).
        code = main(["--inventory", str(drawer), "design", "--gain", "20", "--load", "open", "--depth", "1",
                     "--time-limit", "5", "--json"])
    doc = json.loads(out.getvalue(), parse_constant=lambda c: pytest.fail(f"{c} in the JSON"))
    assert code == 0 and doc["designs"] and math.isfinite(doc["spec"]["load_ohms"])
    assert Spec(load_ohms=float("inf")).problems() == []
