"""A save killed at any moment leaves the old or the new complete file (fast version of
bench/kill_during_save.py: 10 kills instead of 150).

The property is the one POSIX gives `rename(2)`: the target name refers either to the old or to
the new file, never to a partial one (IEEE Std 1003.1-2017, rename: "If the link named by the new
argument exists, it shall be removed and old renamed to new. In this case, a link named new shall
remain visible to other threads throughout the renaming operation and refer either to the file
referred to by new or old before the operation began.").
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import kill_during_save as kd  # noqa: E402
from slopetune.tui import setup_writer  # noqa: E402

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork (POSIX)")


def test_ten_kills_leave_a_whole_file_and_no_temporary_file(tmp_path):
    tally = kd.run(10, seed=313, folder=tmp_path, log=lambda *_: None)
    assert tally.problems == []
    assert tally.intact == tally.kills == 10
    assert tally.temp_left_after_next_save == 0


def test_the_same_check_catches_a_plain_overwrite(tmp_path, monkeypatch):
    """Control: truncate-and-write (what `Path.write_text` does), slowed to a slow SD card's pace,
    is caught half-written by the same kills. Without this the test above could not fail."""
    import time

    def plain_write(path, text):
        with open(path, "w", encoding="utf-8") as f:
            for i in range(0, len(text), 64):
                f.write(text[i: i + 64])
                f.flush()
                time.sleep(0.001)
        return os.stat(path).st_mtime_ns

    monkeypatch.setattr(setup_writer, "write_atomic", plain_write)
    tally = kd.run(10, seed=313, folder=tmp_path, max_delay_s=0.05, log=lambda *_: None)
    assert tally.kills - tally.intact >= 3
