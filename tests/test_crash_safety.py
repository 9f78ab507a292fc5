"""A save killed at any moment leaves the old or the new file, never a torn or empty one.

os.replace is an atomic rename on POSIX (rename(2): "If newpath already exists, it will be
atomically replaced"), so the trial checks that nothing is written to the file in place.
"""

from __future__ import annotations

import pytest

from tests.helpers.trials import kill_trials


@pytest.mark.fuzz
def test_sigkill_during_saves_never_tears_the_file(tmp_path):
    figures = kill_trials(tmp_path, trials=100)
    print(f"\nkill trials: {figures}")
    assert figures["trials"] == 100
    assert figures["torn"] == 0
    # The kills must land among saves, or the trial proves nothing: the journal shows the child
    # completed saves, and the aimed kills left temporary files (they came inside a write).
    assert figures["journal_entries"] > 0 and figures["mid_save"] >= 5


@pytest.mark.fuzz
def test_the_trial_does_see_a_torn_file_when_saving_in_place(tmp_path):
    # The same trial against a writer that truncates and rewrites the file in place must
    # catch torn files, or the check above could not fail.
    figures = kill_trials(tmp_path, trials=20, unsafe=True)
    print(f"\nkill trials, in-place writer: {figures}")
    assert figures["torn"] > 0
