"""The tuner on awkward terminals, under a real pty (bench/hostile_terminals.py, minus the reference).

Each must paint (or, below the minimum size, say plainly why not), take a key, and exit with 0
after q, with no traceback. What each terminal can show: the Linux console font has no braille or
eighth blocks (console fonts carry the 512-glyph PSF set; kbd project, `showconsolefont`), a C
locale is ASCII (POSIX.1-2017, 7.2 "POSIX Locale": the portable character set), and NO_COLOR
forbids colour (no-color.org).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import hostile_terminals as ht  # noqa: E402

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs a POSIX pty")

CASES = [name for name in ht.TERMINALS if "reference" not in name]


@pytest.mark.parametrize("name", CASES)
def test_terminal(name, tmp_path):
    env, size = ht.TERMINALS[name]
    run = ht.run_terminal(name, env, size, tmp_path)
    assert run.ok, f"{name}: {run.problems}"
    assert run.exit_code == 0
    assert run.painted and run.usable


def test_the_checks_see_colour_and_non_ascii():
    """Control: the byte checks are not blind."""
    assert ht.hued_colours("\x1b[38;5;196mred\x1b[0m") == 1
    assert ht.hued_colours("\x1b[38;5;253;48;5;233mgrey\x1b[0m") == 0
    assert ht.hued_colours("\x1b[38;2;200;40;40mred") == 1
