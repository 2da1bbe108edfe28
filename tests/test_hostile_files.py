"""Opening and saving hostile files: bench/hostile_files.py's places, one test each.

Special files refused before reading (POSIX stat(2) file types), read-only, hard-linked and other
users' files refused with how to save elsewhere, mode and owner kept, an outside edit that keeps
the mtime noticed, save-as through a link to nowhere asking first (issue 12, items 1, 10-12).
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import hostile_files as hf  # noqa: E402
from test_hostile_places import checked_rows  # noqa: E402


@pytest.mark.parametrize("place", list(hf.PLACES))
def test_place(place):
    checked_rows(place, hf.PLACES[place])
