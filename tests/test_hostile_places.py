"""Saving and opening in hostile places: one clear line, the file intact, nothing lost in the tuner.

Runs bench/hostile_places.py's places one by one. The read-only folder and the full disk are tmpfs
mounts and need root (CI runs as root); as a plain user the read-only folder is a folder without
write permission and the full disk is skipped. The expected errno texts are the C library's
strerror strings for EROFS, ENOSPC and EACCES (POSIX.1-2017, <errno.h>).
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import hostile_places as hp  # noqa: E402

EXPECTED_WORDS = {  # what the user must read in the refusal, per place
    "read-only folder": "Read-only file system",
    "full disk": "No space left on device",
    "file replaced while open": "changed on disk",
    "setup path is a folder": "is a folder",
    "symlink to nowhere": "link to nowhere",
    "file the user may not read": "Permission denied",
}


def checked_rows(place, make):
    """The rows `make()` gives for `place`, every one OK; skipped where this machine cannot make it."""
    try:
        rows = make()
    except hp.Unavailable as exc:
        pytest.skip(f"{place}: {exc}")
    assert rows
    bad = [f"{r.action}: {r.why} ({r.message})" for r in rows if not r.ok]
    assert not bad, bad
    return rows


@pytest.mark.parametrize("place", list(hp.PLACES))
def test_place(place):
    rows = checked_rows(place, hp.PLACES[place])
    words = EXPECTED_WORDS.get(place)
    if place == "read-only folder" and hp.os.geteuid() != 0:
        words = "Permission denied"  # a folder without write permission, not a read-only mount
    if words:
        assert any(words in r.message for r in rows), [r.message for r in rows]
