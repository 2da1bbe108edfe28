"""Rate-limit a repaint: run at once, then at most once per period, always ending on the latest state."""

from __future__ import annotations

import math
import time
from typing import Callable

from textual.app import App


class Throttle:
    """Call `run` at once, then at most once per `every_s`; calls in between book one trailing run."""

    def __init__(self, app: App, every_s: float, run: Callable[[], None]) -> None:
        self.app, self.every_s, self.run = app, every_s, run
        self._last = -math.inf
        self._timer = None

    def __call__(self) -> None:
        if self._timer is not None:
            return  # the trailing run will see the latest state
        wait = self._last + self.every_s - time.monotonic()
        if wait <= 0:
            self._fire()
        else:
            self._timer = self.app.set_timer(wait, self._trailing)

    @property
    def pending(self) -> bool:
        return self._timer is not None

    def mark(self) -> None:
        """`run` was just called from elsewhere: count it for the rate."""
        self._last = time.monotonic()

    def _trailing(self) -> None:
        self._timer = None
        self._fire()

    def _fire(self) -> None:
        self._last = time.monotonic()
        self.run()
