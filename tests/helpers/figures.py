"""Print the trial figures the lead quotes: fuzz cases, kill trials, concurrent decrements.

    python -m tests.helpers.figures
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

from tests import test_drawer_fuzz as fuzz
from tests import test_store_model as model
from tests.helpers.trials import decrement_trial, kill_trials


def main() -> None:
    t0 = time.perf_counter()
    for test in (fuzz.test_random_bytes, fuzz.test_random_csv_like_text,
                 fuzz.test_random_cells_under_a_random_header, fuzz.test_broken_quoting_and_stray_bytes,
                 fuzz.test_a_count_changes_one_line_and_undo_restores_the_bytes):
        test()  # a hypothesis test called directly runs all its examples
    kinds = ", ".join(f"{k}: {v}" for k, v in fuzz.CASES.items())
    print(f"fuzz cases: {sum(fuzz.CASES.values())} without a traceback ({kinds}) "
          f"in {time.perf_counter() - t0:.1f} s")
    model.test_changes_match_the_model_and_undoing_all_restores_the_file()
    print(f"model sequences: {model.RUNS['sequences']} random change sequences "
          f"({model.RUNS['steps']} steps) matched the list model, each undone back to the starting bytes")
    with tempfile.TemporaryDirectory() as folder:
        k = kill_trials(Path(folder), trials=100)
    print(f"kill trials: {k['trials']} SIGKILLs, {k['torn']} torn files, {k['mid_save']} landed inside a write "
          f"(temporary file left), {k['journal_entries']} saves completed")
    with tempfile.TemporaryDirectory() as folder:
        u = kill_trials(Path(folder), trials=20, unsafe=True)
    print(f"control, writing in place: {u['torn']} of {u['trials']} kills left a torn file")
    with tempfile.TemporaryDirectory() as folder:
        d = decrement_trial(Path(folder), processes=2, times=100)
    print(f"decrements: {d['processes']} processes x {d['takes'] // d['processes']} takes: qty "
          f"{d['qty_before']} -> {d['qty_after']} (dropped {d['qty_before'] - d['qty_after']}), "
          f"{d['journal_entries']} journal entries, {d['distinct_ids']} distinct ids, {d['seconds']:.1f} s")


if __name__ == "__main__":
    main()
