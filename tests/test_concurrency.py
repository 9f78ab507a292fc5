"""Two processes taking from the same drawer line at once: no count is lost, each take journaled."""

from __future__ import annotations

import pytest

from tests.helpers.trials import decrement_trial


@pytest.mark.fuzz
def test_two_processes_take_200_parts_without_losing_one(tmp_path):
    f = decrement_trial(tmp_path, processes=2, times=100)
    print(f"\ndecrement trial: {f}")
    assert f["exit_codes"] == [0, 0]
    assert f["qty_before"] - f["qty_after"] == 200
    assert f["other_line_qty"] == 9  # the line nobody took from is untouched
    assert f["journal_entries"] == 200 and f["distinct_ids"] == 200
