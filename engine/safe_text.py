"""Text from a file, made safe to print on a terminal or draw on the tuner's screen.

A name or note in a setup file may hold terminal control sequences (ESC [2J clears the screen,
ESC ] 2 ; ... BEL retitles the window, the C1 byte U+009B starts a sequence on some terminals) or
Unicode bidirectional controls that reorder what follows (the "Trojan Source" class: N. Boucher,
R. Anderson, CVE-2021-42574; the characters are those of Unicode UAX #9, section 2). Each is
spelled out as a Python escape (``\\x1b``, ``\\u202e``) so the user sees it and the terminal does
not act on it. The file itself keeps the text as written.
"""

from __future__ import annotations

import re

# C0 controls and DEL, C1 controls, line and paragraph separators, and the bidi controls
# (ALM, LRM, RLM, LRE..RLO, LRI..PDI).
_UNSAFE = "\x00-\x1f\x7f-\x9f\u2028\u2029\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069"
_ONE_LINE = re.compile(f"[{_UNSAFE}]")
_KEEP_LINES = re.compile(f"[{_UNSAFE.replace(chr(0) + '-' + chr(0x1f), chr(0) + '-' + chr(8) + chr(0xb) + '-' + chr(0x1f))}]")


def _spell(m: re.Match) -> str:
    return repr(m.group())[1:-1]  # "\n", "\x1b", "\u202e": each of these is unprintable to repr


def one_line(text: str) -> str:
    """`text` with line breaks, tabs, control and bidi characters spelled out: one safe line."""
    return _ONE_LINE.sub(_spell, str(text))


def safe_lines(text: str) -> str:
    """`text` with control and bidi characters spelled out, keeping line breaks and tabs."""
    return _KEEP_LINES.sub(_spell, str(text))


__all__ = ["one_line", "safe_lines"]
