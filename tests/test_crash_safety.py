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
    # The trial must really land inside saves, or it proves nothing: some kills leave the
    # temporary file behind, and the journal shows the child was saving.
    assert figures["mid_save"] > 0 and figures["journal_entries"] > 0
