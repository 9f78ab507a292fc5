"""Chains the search returns, simulated by ngspice on a deck of their parts (the independent THD check
the quick tests leave out): DC of both transistors, midband gain, Rin, f_low and THD at the asked
swing, at the typical hFE and at both transistors' hFE min and max, 27 °C.  Prints the largest
deviations."""

from __future__ import annotations

import pytest

from inventory.drawer import Drawer
from tests.chain_job import DRAWER, JOBS, solved
from tests.helpers.verify_chain import chain_at
from tests.test_chain_ngspice import DEVIATIONS, simulate, summary  # noqa: F401  (the module's summary fixture)

pytestmark = pytest.mark.ngspice
SPEC = JOBS["common-emitter+emitter-follower"]


@pytest.fixture(scope="module")
def doc():
    # The search tests/test_chain_search.py checks too (tests/chain_job.py): one search a session.
    return solved(SPEC.topology)


def test_found_chains_agree_with_ngspice(doc):
    from optimizer.chain.figures import figures

    assert doc["designs"], doc["why"]
    for d in doc["designs"][:2]:
        hfe, hfe_b = d["hfe"], d["hfe_b"]
        for bf1, bf2 in ((hfe["typical"], hfe_b["typical"]), (hfe["min"], hfe_b["min"]), (hfe["max"], hfe_b["max"])):
            ch = chain_at(d, SPEC, Drawer.load(DRAWER), bf1, bf2)
            mine = figures(ch, [(bf1, bf2, 27.0)], SPEC.swing_pp)
            dc, gain, rin, fl, thd, names = simulate(ch, bf1, bf2, 27.0, mine.amplitude[0], mine.f_low[0])
            DEVIATIONS["search_gain_rel"] = max(DEVIATIONS.get("search_gain_rel", 0), abs(mine.gain[0] / gain - 1))
            DEVIATIONS["search_thd_rel"] = max(DEVIATIONS.get("search_thd_rel", 0), abs(mine.thd[0] / thd - 1))
            assert mine.gain[0] == pytest.approx(gain, rel=0.005)
            assert mine.rin[0] == pytest.approx(rin, rel=0.01)
            assert mine.f_low[0] == pytest.approx(fl, rel=0.02)
            assert mine.thd[0] == pytest.approx(thd, rel=0.1, abs=2e-4)
            assert thd <= SPEC.max_thd  # ngspice agrees the chain is clean enough
