"""The tuner's suggested fixes: worked out in a worker once the keys pause, opened in the planner by `f`.

A mixin of `SlopeTuneApp`. Every update books one run `FIXES_AFTER_S` later (a held key keeps
pushing it back, so it never runs while the key is down); the planner runs in a thread and hands
its line back with `call_from_thread`. A result for a setup that has changed since is dropped.
"""

from __future__ import annotations

from textual import work

FIXES_AFTER_S = 0.4


class FixActions:
    """Suggested fixes for `SlopeTuneApp`."""

    _fixes_timer = None
    fixes = None  # tui.fixes.Fixes for `_fixes_setup`, or None
    _fixes_setup = None

    def _schedule_fixes(self) -> None:
        """After any update: look for fixes once the keys have paused."""
        if self._fixes_timer is not None:
            self._fixes_timer.stop()
        self._fixes_timer = self.set_timer(FIXES_AFTER_S, self._start_fixes)

    def _start_fixes(self) -> None:
        self._fixes_timer = None
        if self.analysis is not None:
            self._find_fixes(self.setup, self.analysis, self.units)

    @work(thread=True, exclusive=True, group="fixes")
    def _find_fixes(self, setup, analysis, units) -> None:
        from .fixes import fixes_for

        try:
            found = fixes_for(setup, analysis, units)
        except Exception as exc:  # noqa: BLE001 - a planner fault must never take the tuner down
            found = exc
        self.call_from_thread(self._fixes_found, setup, found)

    def _fixes_found(self, setup, found) -> None:
        if setup != self.setup:
            return  # the setup moved on; its own run is booked
        if isinstance(found, Exception):
            self.fixes, self._fixes_setup = None, None
            self.status.fixes = f"Fix: the planner failed ({type(found).__name__}); p opens it by hand"
            return
        self.fixes, self._fixes_setup = found, setup
        self.status.fixes = "" if found is None else found.line(self.ascii_only)

    def action_fix(self) -> None:
        """Open the planner with the suggested fix's target and lever."""
        from .fixes import target_for

        fixes = self.fixes if self._fixes_setup == self.setup else None
        target = fixes.target if fixes is not None else (
            target_for(self.analysis) if self.analysis is not None else None)
        if target is None:
            self._note("Nothing to fix at this slope; p opens the planner")
            return
        first = fixes.fixes[0].kind if fixes is not None and fixes.fixes else "ballast"
        lever = "ballast" if first == "overdrive" and self.setup.driveline.uses_stages else first
        self.action_plan(target=target, lever=lever, item=_heaviest(self.setup))


def _heaviest(setup) -> int:
    items = setup.rig.ballast
    return max(range(len(items)), key=lambda i: items[i].mass_g, default=0)
