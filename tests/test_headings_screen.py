"""The headings screen and the form's heading field: stepping, console-safe drawing, closing.

Checks are on widget state after `pilot.pause()` (Textual's testing guide); the Latin-1 check is
the console rule of TUI-NOTES.
"""

from __future__ import annotations

import asyncio
from pathlib import Path

from textual.app import App

from slopetune.engine import load_setup
from slopetune.tui.headings_screen import HeadingsScreen
from slopetune.tui.units import Units
from slopetune.tui.widgets import form_fields as ff
from slopetune.tui.widgets.heading_chart import HeadingChart
from slopetune.tui.widgets.wheel_view import WheelView, uphill_words

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"


class Host(App):
    """A bare app that opens the headings screen on start and keeps what it hands back."""

    def __init__(self, setup, **kwargs) -> None:
        super().__init__()
        self.start, self.kwargs = setup, kwargs
        self.returned = "not closed"

    def on_mount(self) -> None:
        self.push_screen(HeadingsScreen(self.start, **self.kwargs), lambda s: setattr(self, "returned", s))


async def _ready(pilot, screen) -> None:
    for _ in range(200):
        await pilot.pause()
        if screen.sweep is not None:
            return
    raise AssertionError("the heading sweep never arrived")


def test_arrows_turn_the_rig_and_move_the_loads_without_a_plotext_build():
    asyncio.run(_arrows())


async def _arrows():
    app = Host(load_setup(DEMO).setup, ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        await _ready(pilot, screen)
        await pilot.pause()
        chart, wheels = screen.query_one(HeadingChart), screen.query_one(WheelView)
        builds = chart.builds
        assert builds >= 1
        await pilot.press(*["right"] * 18)  # 18 x 5 = +90: left side uphill
        await pilot.pause()
        await pilot.pause()
        assert screen.setup.terrain.heading_deg == 90
        fl, fr, rl, rr = wheels.data.loads_g
        assert fr > fl and rr > rl  # MODEL section 8: at +90 the right wheels carry more
        assert wheels.data.uphill == "Uphill: to the left"
        assert chart.builds == builds  # the heading marker moved over the cached drawing
        assert chart.data.setup_heading_deg == 90
        words = str(screen.query_one("#headings-words").render())
        assert "Worst +90 deg (across, left up)" in words and "crabs" in words
        await pilot.press("up")
        await pilot.pause()
        await pilot.pause()
        assert screen.setup.terrain.slope_deg == 31
        # everything on screen is Latin-1 (a plain console can draw it)
        text = _screen_text(app)
        text.encode("latin-1")
        await pilot.press("escape")
        await pilot.pause()
    assert app.returned is not None and app.returned.terrain.heading_deg == 90


def _screen_text(app) -> str:
    """The rendered text of the visible widgets (enough for the Latin-1 check)."""
    parts = []
    for widget in app.screen.query("*"):
        try:
            parts.append(str(widget.render()))
        except Exception:  # containers render nothing useful
            continue
    return "\n".join(parts)


def test_closing_without_a_change_hands_back_nothing():
    asyncio.run(_unchanged())


async def _unchanged():
    app = Host(load_setup(DEMO).setup, ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        await _ready(pilot, app.screen)
        await pilot.press("q")
        await pilot.pause()
    assert app.returned is None


def test_heading_field_steps_round_the_circle():
    """The form's heading row steps 5 deg (coarse 45 deg, onto the diagonals and across) and wraps
    past 180 to -175 (no dead end at the range)."""
    setup = load_setup(DEMO).setup.with_value("terrain.heading_deg", 175.0)
    row = next(r for r in ff.build_rows(setup) if r.key == "terrain.heading_deg")
    edit = ff.step(setup, row, 1)
    assert edit.error is None and edit.setup.terrain.heading_deg == 180.0
    edit = ff.step(edit.setup, row, 1)
    assert edit.setup.terrain.heading_deg == -175.0
    edit = ff.step(edit.setup, row, -ff.COARSE)
    assert edit.setup.terrain.heading_deg == 140.0
    assert ff.shown_value(edit.setup, row, Units())[0] == "140"
    across = ff.step(load_setup(DEMO).setup, row, ff.COARSE)
    assert across.setup.terrain.heading_deg == 45.0
    assert ff.step(across.setup, row, ff.COARSE).setup.terrain.heading_deg == 90.0
    assert ff.set_typed(edit.setup, row, "270", Units()).error  # refused, with the reason


def test_uphill_words_follow_the_heading_convention():
    """MODEL section 8: at ψ = +90 the left side is uphill; 0 climbs straight up."""
    assert uphill_words(30, 0) == "Uphill: ahead"
    assert uphill_words(30, 90) == "Uphill: to the left"
    assert uphill_words(30, -90) == "Uphill: to the right"
    assert uphill_words(30, 180) == "Uphill: behind"
    assert uphill_words(30, 45) == "Uphill: ahead and to the left"
    assert uphill_words(-30, 0) == "Uphill: behind"


def test_tuner_words_and_marks_on_a_heading_say_the_named_angles_are_for_a_straight_climb():
    """Off straight up the sweep and the verdict follow the heading (MODEL section 8) but the named
    angles are those of a straight climb: the words say so, no distance to them is given, the chart
    drops their marks, and no fix is offered while the flag is down. Plumbing, not physics."""
    from slopetune.engine import analyse
    from slopetune.tui.chart_data import chart_data
    from slopetune.tui.fixes import target_for
    from slopetune.tui.slopes import slope_grid
    from slopetune.tui.status_words import status_view
    from slopetune.tui.units import Units

    s0 = load_setup(DEMO).setup
    units = Units(ascii_only=True)
    straight = analyse(s0, slope_grid(False))
    words = " | ".join(status_view(straight, units).lines)
    assert "climbing" in words and "straight up" not in words and "to go" in words
    assert chart_data(straight, units).marks  # B, H, M, L at heading 0
    across = analyse(s0.with_value("terrain.heading_deg", 90.0), slope_grid(False))
    view = status_view(across, units)
    words = " | ".join(view.lines)
    assert "on heading +90 deg" in words and "climbing" not in words
    assert "Handover 22.1 deg at 7.0% OD, straight up" in words  # the straight climb's figure, labelled
    assert "straight up, ends by" in words and "to go" not in words and "margin" not in words
    assert chart_data(across, units).marks == ()
    assert view.level == "ok" and target_for(across) is None
