"""Undo and redo for the tuner: the setups before each change, with a few words on what changed.

Setups are frozen dataclasses, so a step stores whole setups (a few hundred bytes each), never a
diff that could go stale. Steps of one key that come closer together than a held key's
auto-repeat make one undo step: holding Right for a second is one change to undo, not thirty.
"""

from __future__ import annotations

import time
from typing import NamedTuple, Optional

from slopetune.engine import Setup

MAX_STEPS = 200
MERGE_GAP_S = 0.35  # a key repeated faster than this continues the same undo step


class Step(NamedTuple):
    before: Setup
    after: Setup
    what: str  # "slope", "measurement applied", ...


class History:
    """Two stacks of `Step`; `record` after a change, `undo`/`redo` hand back the setup to show."""

    def __init__(self) -> None:
        self.done: list[Step] = []
        self.undone: list[Step] = []
        self._last_key: Optional[str] = None
        self._last_time = 0.0
        self.clock = time.monotonic  # tests hand in a fixed clock

    def record(self, before: Setup, after: Setup, what: str, key: Optional[str] = None) -> None:
        """`before` became `after`; `key` (a setup key) lets quick repeats of it merge into one step."""
        if before == after:
            return
        now = self.clock()
        if (key is not None and key == self._last_key and now - self._last_time < MERGE_GAP_S
                and self.done and self.done[-1].after == before):
            self.done[-1] = self.done[-1]._replace(after=after)
        else:
            self.done.append(Step(before, after, what))
            del self.done[:-MAX_STEPS]
        self.undone.clear()
        self._last_key, self._last_time = key, now

    def undo(self) -> Optional[Step]:
        """The step to take back (show its `before`), or None when there is nothing to undo."""
        return self._move(self.done, self.undone)

    def redo(self) -> Optional[Step]:
        """The step to do again (show its `after`), or None."""
        return self._move(self.undone, self.done)

    def _move(self, source: list, target: list) -> Optional[Step]:
        if not source:
            return None
        step = source.pop()
        target.append(step)
        self._last_key = None  # the next key starts a step of its own
        return step

    def clear(self) -> None:
        self.done.clear()
        self.undone.clear()
        self._last_key = None
