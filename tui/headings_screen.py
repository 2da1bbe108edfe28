"""The headings screen: the steepest face the rig holds from every direction.

A line chart of tip, first wheel lift and hold angle against heading (−180..180, straight up in
the middle) with the setup's heading and slope marked, a top view of the rig with the four wheel
loads at the setup's slope and heading, and the words: what the rig does here, the worst heading,
the best line up the face and which headings hold this slope.

The per-heading curves do not depend on the setup's own slope or heading, so the sweep runs once,
in a worker; Left/Right (heading) and Up/Down (slope) then only recompute the four wheel loads and
the words, and move the chart's markers (the heading marker without a plotext build). Esc hands
the changed heading and slope back to the tuner.
"""

from __future__ import annotations

from typing import ClassVar, Optional

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding, BindingType
from textual.containers import Horizontal
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Static

from slopetune.engine import Setup, check_value

from .heading_words import heading_label_short, heading_text, here_line, light_wheel_short, summary_lines
from .units import Units
from .widgets.heading_chart import HeadingChart, chart_data
from .widgets.wheel_view import WheelView, WheelViewData, uphill_words

HEADING_STEP_DEG = 5.0
SLOPE_STEP_DEG = 1.0
COARSE = 3  # Shift or PgUp/PgDn: three steps (15 deg of heading)
KEYS_LINE = "Lt/Rt heading  Up/Dn slope  PgUp/PgDn x3  Home straight up  Esc/q back"
CAUTION = "Static model on a flat plane; real rigs roll sooner (track at tyre centres)"


def wrap(deg: float) -> float:
    """A heading in (−180, 180]."""
    w = (deg + 180.0) % 360.0 - 180.0
    return 180.0 if w == -180.0 else w + 0.0


class HeadingsScreen(Screen[Optional[Setup]]):
    """`HeadingsScreen(setup)`; dismisses with the setup at its new heading and slope, or None."""

    CSS_PATH = "headings_screen.tcss"
    BINDINGS: ClassVar[list[BindingType]] = [
        Binding("right", f"heading({HEADING_STEP_DEG})", "Heading +5", id="headings.right"),
        Binding("left", f"heading(-{HEADING_STEP_DEG})", "Heading -5", id="headings.left"),
        Binding("shift+right,pagedown", f"heading({HEADING_STEP_DEG * COARSE})", "Heading +15", show=False,
                id="headings.right_far"),
        Binding("shift+left,pageup", f"heading(-{HEADING_STEP_DEG * COARSE})", "Heading -15", show=False,
                id="headings.left_far"),
        Binding("up", f"slope({SLOPE_STEP_DEG})", "Slope +1", id="headings.up"),
        Binding("down", f"slope(-{SLOPE_STEP_DEG})", "Slope -1", id="headings.down"),
        Binding("home", "straight_up", "Straight up", show=False, id="headings.home"),
        Binding("escape,q,h", "close", "Back", id="headings.close"),
    ]

    class SweepReady(Message):
        def __init__(self, sweep) -> None:
            super().__init__()
            self.sweep = sweep

    def __init__(self, setup: Setup, *, ascii_only: Optional[bool] = None) -> None:
        super().__init__()
        self.start_setup = setup
        self.setup = setup
        self._ascii_only = ascii_only
        self.sweep = None  # the HeadingSweep, once the worker is done
        self._chart_pending = False

    @property
    def ascii_only(self) -> bool:
        if self._ascii_only is None:
            return bool(getattr(self.app, "ascii_only", False))
        return self._ascii_only

    @property
    def units(self) -> Units:
        units = getattr(self.app, "units", None)
        return Units(imperial=bool(units and units.imperial), ascii_only=self.ascii_only)

    def compose(self) -> ComposeResult:
        yield Static(self._title(), id="headings-title", markup=False)
        with Horizontal(id="headings-body"):
            yield HeadingChart(ascii_only=self.ascii_only, id="headings-chart")
            yield WheelView(id="headings-wheels")
        yield Static("Working out every heading...", id="headings-words", markup=False)
        yield Static(CAUTION, id="headings-caution", markup=False)
        yield Static(KEYS_LINE, id="headings-keys", markup=False)

    def _title(self) -> str:
        t = self.setup.terrain
        u = self.units
        return (f"Headings: face {t.slope_deg:g}{u.deg}, heading {heading_text(t.heading_deg, u)} "
                f"({heading_label_short(t.heading_deg)})  {self.setup.name}")

    def on_mount(self) -> None:
        self._sweep()

    @work(thread=True, exclusive=True)
    def _sweep(self) -> None:
        from slopetune.engine.heading_sweep import heading_sweep

        self.post_message(self.SweepReady(heading_sweep(self.setup)))

    @on(SweepReady)
    def _ready(self, message: SweepReady) -> None:
        self.sweep = message.sweep
        self._show(chart_now=True)

    # ----- showing the current pose

    def _show(self, chart_now: bool = False) -> None:
        """Wheel loads and words now; the chart now or after this frame (coalesced on a held key)."""
        if self.sweep is None:
            return
        from slopetune.engine.heading_sweep import at_pose

        hs = at_pose(self.sweep, self.setup)
        self.sweep = hs
        u = self.units
        t = self.setup.terrain
        self.query_one("#headings-title", Static).update(self._title())
        self.query_one(WheelView).show(WheelViewData(
            tuple(float(v) for v in hs.wheels.as_array()), light_wheel_short(hs, u),
            uphill_words(t.slope_deg, t.heading_deg), u))
        words = [here_line(self.setup, u, short=True), *summary_lines(hs, u, short=True)]
        self.query_one("#headings-words", Static).update("\n".join(words))
        if chart_now:
            self._push_chart()
        elif not self._chart_pending:
            self._chart_pending = True
            self.call_after_refresh(self._push_chart)

    def _push_chart(self) -> None:
        self._chart_pending = False
        if self.sweep is not None:
            t = self.setup.terrain
            self.query_one(HeadingChart).show(chart_data(self.sweep, t.heading_deg, t.slope_deg))

    def _set(self, key: str, value: float) -> None:
        if check_value(self.setup, key, value) is None:
            self.setup = self.setup.with_value(key, value)
            self._show()

    # ----- keys

    def action_heading(self, step: float) -> None:
        """Turn the rig on the face by `step` degrees (wraps round at 180)."""
        self._set("terrain.heading_deg", wrap(round(self.setup.terrain.heading_deg + step, 6)))

    def action_slope(self, step: float) -> None:
        """Make the face steeper or gentler by `step` degrees."""
        value = round(self.setup.terrain.slope_deg + step, 6)
        self._set("terrain.slope_deg", max(-89.0, min(89.0, value)))

    def action_straight_up(self) -> None:
        """Point the rig straight up the face."""
        self._set("terrain.heading_deg", 0.0)

    def action_close(self) -> None:
        """Back to the tuner, keeping the heading and slope chosen here."""
        self.dismiss(self.setup if self.setup != self.start_setup else None)
