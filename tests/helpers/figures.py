"""Print the trial figures the lead quotes: fuzz cases, kill trials, concurrent decrements, design fuzz.

    python -m tests.helpers.figures [--design-cases 2000] [--time-limit 2] [--app-sessions 36]
                                    [--only drawer|design|app]

The design fuzz (tests/helpers/design_fuzz.py) runs `drawerfit design` through `tui.cli.main` on
random drawers and requests and prints tracebacks, overruns, stock violations, changed drawer files
and the exit-code histogram.  At 2 000 cases and a 2 s limit it takes up to about 1.7 hours.
"""

from __future__ import annotations

import argparse
import collections
import tempfile
import time
from pathlib import Path

from tests import test_drawer_fuzz as fuzz
from tests import test_store_model as model
from tests.helpers import design_fuzz
from tests.helpers.trials import decrement_trial, kill_trials


def main() -> None:
    parser = argparse.ArgumentParser(prog="python -m tests.helpers.figures")
    parser.add_argument("--design-cases", type=int, default=2000)
    parser.add_argument("--time-limit", type=float, default=2.0)
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--app-sessions", type=int, default=36)
    parser.add_argument("--app-keys", type=int, default=120)
    parser.add_argument("--only", choices=("drawer", "design", "app"))
    opts = parser.parse_args()
    if opts.only in (None, "drawer"):
        drawer_figures()
    if opts.only in (None, "design"):
        design_figures(opts.design_cases, opts.time_limit, opts.seed)
    if opts.only in (None, "app"):
        app_figures(opts.app_sessions, opts.app_keys, opts.seed)


def app_figures(sessions: int, keys: int, seed: int) -> None:
    from tests.helpers import app_monkey

    t0 = time.perf_counter()
    tally = app_monkey.run(sessions, keys, seed=seed)
    print("\n".join(app_monkey.figures(tally, time.perf_counter() - t0)))


def design_figures(cases: int, time_limit: float, seed: int) -> None:
    t0 = time.perf_counter()
    tally = design_fuzz.run(cases, seed=seed, time_limit=time_limit, progress=True)
    print(f"design fuzz (--time-limit {time_limit:g}, seed {seed}): {tally.line()} in "
          f"{time.perf_counter() - t0:.0f} s")
    kinds = collections.Counter(kind for kind, *_ in tally.failures)
    if kinds:
        print("  failures by kind: " + ", ".join(f"{k}: {v}" for k, v in kinds.most_common()))
        crashes = collections.Counter(str(detail).strip().splitlines()[-1][-140:] if str(detail).strip() else "?"
                                      for kind, _, detail in tally.failures if kind == "crash")
        for message, n in crashes.most_common():
            print(f"  crash ×{n}: {message}")
        for kind, argv, detail in tally.failures[:5]:
            print(f"  e.g. {kind}: drawerfit {' '.join(argv)} -> {str(detail)[-160:]}")


def drawer_figures() -> None:
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
