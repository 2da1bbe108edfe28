"""One linear pass over TOML text before it is parsed: cost bounds and a line index.

The standard TOML parser recurses once per nested array or inline table (a few hundred brackets
end in `RecursionError`) and its cost grows with the square of a dotted key's length (a key of
tens of thousands of parts costs gigabytes). `scan` walks the text once, refuses nesting deeper
than `MAX_NESTING`, keys longer than `MAX_KEY_PARTS`, more than `MAX_HEADERS` tables, `MAX_ITEMS` array
elements or `MAX_KEYS` keys before the parser sees them, and on the
way records where each table header and top-level key sits, so error and warning messages find
their line by a dictionary look-up instead of a rescan per message.

Syntax follows TOML 1.0 (https://toml.io/en/v1.0.0): basic and literal strings, their multi-line
forms, comments, dotted and quoted keys, arrays, inline tables, `[table]` and `[[array]]` headers.
Text the scanner does not understand is skipped to the end of its line: the parser reports it.
"""

from __future__ import annotations

import bisect
import re
from typing import Optional

# A setup nests 2 deep (a list of [x, z] points); 32 leaves room for any hand-written file
# while staying far inside Python's recursion limit (the parser uses a few frames per level).
MAX_NESTING = 32
# The longest key a setup uses has 3 parts (rig.ballast.name); 32 allows any sane layout.
MAX_KEY_PARTS = 32
# A setup has about six table headers plus one per ballast item (at most 100); thousands only
# make the parser slow.
MAX_HEADERS = 1000
# Array elements and inline tables in all: a 10,000-point course holds 30,000; the parser takes
# about 5 us each, so this bounds a file's parse to about half a second.
MAX_ITEMS = 100_000
# Keys in all (a setup uses about 40; your own extra keys are kept, but not tens of thousands).
MAX_KEYS = 10_000

_BARE = re.compile(r"[A-Za-z0-9_-]+")
_SPACE = re.compile(r"[ \t\r]*")
_BASIC = re.compile(r'"(?:[^"\\\n]|\\.)*"')
_LITERAL = re.compile(r"'[^'\n]*'")
_ML_BASIC = re.compile(r'"""(?:[^"\\]|\\.|"(?!""))*"""', re.S)
_ML_LITERAL = re.compile(r"'''(?:[^']|'(?!''))*'''")
_PLAIN = re.compile(r"[^\[\]{}\"'#,=\n]+")


class ScanProblem(ValueError):
    """Text that would cost the parser too much; `line` is 1-based."""

    def __init__(self, message: str, line: int):
        super().__init__(message)
        self.reason, self.line = message, line


class LineIndex:
    """Where each table header and top-level key of a TOML text sits.

    Keys are dotted paths with array-of-tables items numbered from 0 (``rig.ballast.1.x_mm``).
    """

    def __init__(self):
        self._first: dict[tuple, int] = {}

    def add(self, path: tuple, line: int) -> None:
        self._first.setdefault(path, line)

    def find(self, key: str) -> Optional[int]:
        """1-based line of `key`, else of its nearest enclosing key or header, else None.

        A one-part key that is nowhere gives line 1 (top-level keys belong to the file's head).
        """
        parts = tuple(key.split("."))
        for n in range(len(parts), 0, -1):
            line = self._first.get(parts[:n])
            if line is not None:
                return line
        return 1 if len(parts) == 1 else None


class _Scanner:
    def __init__(self, text: str):
        self.text, self.n = text, len(text)
        self.newlines = [m.start() for m in re.finditer("\n", text)]
        self.index = LineIndex()
        self.table: tuple = ()
        self.aot_count: dict[tuple, int] = {}
        self.headers = self.keys = 0

    def line(self, pos: int) -> int:
        return bisect.bisect_left(self.newlines, pos) + 1

    def eol(self, pos: int) -> int:
        end = self.text.find("\n", pos)
        return self.n if end < 0 else end

    def skip_space(self, pos: int) -> int:
        return _SPACE.match(self.text, pos).end()

    def string(self, pos: int) -> int:
        """End of the string starting at `pos` (past the closing quote; end of line if unclosed)."""
        t = self.text
        q = t[pos]
        if t.startswith(q * 3, pos):
            m = (_ML_BASIC if q == '"' else _ML_LITERAL).match(t, pos)
            if not m:
                return self.n
            end = m.end()
            for _ in range(2):  # up to two quotes may sit just before the closing three
                if end < self.n and t[end] == q:
                    end += 1
            return end
        m = (_BASIC if q == '"' else _LITERAL).match(t, pos)
        return m.end() if m else self.eol(pos)

    def key(self, pos: int):
        """(parts, end) of the key at `pos`; parts None when it is not a key the scanner knows."""
        t, parts = self.text, []
        while True:
            pos = self.skip_space(pos)
            if pos < self.n and t[pos] in "\"'":
                end = self.string(pos)
                parts.append(t[pos + 1: end - 1])
            else:
                m = _BARE.match(t, pos)
                if not m:
                    return None, pos
                end = m.end()
                parts.append(m.group())
            if len(parts) > MAX_KEY_PARTS:
                raise ScanProblem(f"a key with more than {MAX_KEY_PARTS} dotted parts; "
                                  "a setup key has at most 3", self.line(pos))
            pos = self.skip_space(end)
            if pos < self.n and t[pos] == ".":
                pos += 1
                continue
            return tuple(parts), pos

    def header(self, pos: int) -> int:
        t = self.text
        array = t.startswith("[[", pos)
        parts, pos = self.key(pos + (2 if array else 1))
        close = "]]" if array else "]"
        if parts is None or not t.startswith(close, pos):
            return self.eol(pos)
        line = self.line(pos)
        self.headers += 1
        if self.headers > MAX_HEADERS:
            raise ScanProblem(f"more than {MAX_HEADERS} [table] headers; a setup has a few", line)
        self.table = parts
        if array:
            i = self.aot_count.get(parts, -1) + 1
            self.aot_count[parts] = i
            self.index.add(parts, line)
            self.table = parts + (str(i),)
        self.index.add(self.table, line)
        return pos + len(close)

    def run(self) -> LineIndex:
        t, pos, stack, items = self.text, 0, [], 0
        expect_key = True  # at a top-level line start, or after "{" / "," in an inline table
        while pos < self.n:
            pos = self.skip_space(pos)
            if pos >= self.n:
                break
            c = t[pos]
            if c == "#":
                pos = self.eol(pos)
                continue
            if c == "\n":
                pos += 1
                if not stack:
                    expect_key = True
                continue
            if expect_key:
                if not stack and c == "[":
                    pos = self.header(pos)
                    continue
                if stack and c == "}":  # empty inline table
                    stack.pop()
                    pos += 1
                    expect_key = False
                    continue
                at = pos
                parts, pos = self.key(pos)
                if parts is None or pos >= self.n or t[pos] != "=":
                    pos = self.eol(pos)  # not TOML the scanner knows: the parser will say
                    continue
                self.keys += 1
                if self.keys > MAX_KEYS:
                    raise ScanProblem(f"more than {MAX_KEYS} keys; a setup has about 40", self.line(at))
                if not stack:
                    self.index.add(self.table + parts, self.line(at))
                pos += 1
                expect_key = False
                continue
            if c in "\"'":
                pos = self.string(pos)
            elif c in "[{":
                stack.append(c)
                items += 1
                if len(stack) > MAX_NESTING:
                    raise ScanProblem(f"arrays or tables nested more than {MAX_NESTING} deep; "
                                      "a setup nests at most 2", self.line(pos))
                pos += 1
                expect_key = c == "{"
            elif c in "]}":
                if stack:
                    stack.pop()
                pos += 1
            elif c == ",":
                expect_key = bool(stack) and stack[-1] == "{"
                items += 1
                if items > MAX_ITEMS:
                    raise ScanProblem(f"more than {MAX_ITEMS} array elements; a setup or course has far fewer",
                                      self.line(pos))
                pos += 1
            else:
                m = _PLAIN.match(t, pos)
                pos = m.end() if m else pos + 1
        return self.index


def scan(text: str) -> LineIndex:
    """Check `text` against the cost bounds and index its lines, in one linear pass.

    Raises
    ------
    ScanProblem
        Nesting deeper than `MAX_NESTING` or a key with more than `MAX_KEY_PARTS` parts.
    """
    return _Scanner(text).run()


def line_index(text: str) -> LineIndex:
    """The line index of `text`, or an empty one when the text breaks the cost bounds."""
    try:
        return scan(text)
    except ScanProblem:
        return LineIndex()


__all__ = ["MAX_NESTING", "MAX_KEY_PARTS", "MAX_HEADERS", "MAX_ITEMS", "MAX_KEYS", "ScanProblem", "LineIndex", "scan", "line_index"]
