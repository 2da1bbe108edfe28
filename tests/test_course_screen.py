"""The course view (tui.course_screen): stepping, events, console-safe drawing, closing.

Checks are on widget state after `pilot.pause()` (Textual's testing guide); the Latin-1 check is
the console rule of TUI-NOTES (no braille, box or block characters outside Latin-1).
"""

from __future__ import annotations

import asyncio
from pathlib import Path

from textual.app import App

from slopetune.engine import load_setup
from slopetune.tui.course_screen import CourseChart, CourseScreen, CourseStatus, SideView, draw_side_view

ROOT = Path(__file__).resolve().parent.parent
KESTREL = ROOT / "setups" / "course-kestrel-knuckle.toml"
RIG = ROOT / "setups" / "marmot-overdrive.toml"


def _kestrel_setup():
    """The demo rig with the Kestrel Knuckle course file's course as its own."""
    import dataclasses

    from slopetune.engine.course_file import load_course

    return dataclasses.replace(load_setup(RIG).setup, course=load_course(KESTREL).course)


class Host(App):
    """A bare app that opens the course view on start."""

    def __init__(self, setup, **kwargs) -> None:
        super().__init__()
        self.course_setup, self.kwargs = setup, kwargs
        self.closed = False

    def on_mount(self) -> None:
        self.push_screen(CourseScreen(self.course_setup, **self.kwargs), lambda _: setattr(self, "closed", True))


async def _ready(pilot, screen) -> None:
    for _ in range(100):
        await pilot.pause()
        if screen.walk is not None:
            return
    raise AssertionError("the walk never arrived")


def test_arrows_step_and_n_jumps_to_the_next_event():
    asyncio.run(_arrows_step_and_n_jumps())


async def _arrows_step_and_n_jumps():
    app = Host(_kestrel_setup(), ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        await _ready(pilot, screen)
        view, status, chart = screen.query_one(SideView), screen.query_one(CourseStatus), screen.query_one(CourseChart)
        await pilot.press("right", "right", "right", "left")
        await pilot.pause()
        assert screen.index == view.index == status.index == 2
        await pilot.pause()
        assert chart.index == 2
        assert "Rear axle at 10 mm" in status.words()
        first = screen.walk.events[0]
        await pilot.press("n")
        await pilot.pause()
        assert screen.index == first.index
        await pilot.press("end")
        await pilot.pause()
        assert screen.index == len(screen.walk) - 1
        await pilot.press("right")
        await pilot.pause()
        assert screen.index == len(screen.walk) - 1  # stays at the end
        await pilot.press("q")
        await pilot.pause()
        assert app.closed


def test_ascii_view_and_chart_are_latin_1():
    asyncio.run(_ascii_view_and_chart())


async def _ascii_view_and_chart():
    app = Host(_kestrel_setup(), ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        await _ready(pilot, screen)
        touching = next(e.index for e in screen.walk.events if e.kind == "belly_touches")
        screen._go(touching)
        await pilot.pause()
        await pilot.pause()
        for widget in (screen.query_one(SideView), screen.query_one(CourseChart)):
            text = widget.render().plain
            text.encode("latin-1")  # raises on anything a console font may lack
            assert text.strip()
        assert "!" in screen.query_one(SideView).render().plain  # where the belly touches
        assert "belly touches" in screen.query_one(CourseStatus).words()


def test_side_view_puts_the_wheels_on_the_ground():
    """On level ground the wheel outlines' lowest cells sit right above the surface row."""
    walk_setup = _kestrel_setup()
    from slopetune.engine.course_walk import walk_course

    walk = walk_course(walk_setup, 5.0)
    grid, tags = draw_side_view(walk, 0, 80, 12)
    rows = ["".join(r) for r in grid]
    surface = max(i for i, r in enumerate(rows) if "_" in r)
    wheel_rows = [i for i, r in enumerate(tags) if "wheel" in r]
    assert max(wheel_rows) in (surface - 1, surface)
    assert any("=" in r for r in rows)


def test_setup_without_a_course_offers_course_files_and_esc_closes():
    """No [course] in the setup: the view says so and offers the course files of the setups folder
    (issue 13 item 7); Esc on the list closes the view."""
    asyncio.run(_without_a_course())


async def _without_a_course():
    import os

    from slopetune.tui.screens.course_pick import CoursePickScreen

    old = os.getcwd()
    os.chdir(ROOT)
    try:
        app = Host(load_setup(ROOT / "setups" / "marmot-stock.toml").setup,
                   setup_path=ROOT / "setups" / "marmot-stock.toml")
        async with app.run_test(size=(80, 24)) as pilot:
            for _ in range(50):
                await pilot.pause()
                if isinstance(app.screen, CoursePickScreen) and app.screen.entries:
                    break
            picker = app.screen
            assert isinstance(picker, CoursePickScreen)
            names = {e.name for e in picker.entries}
            assert {"Bramble Steps", "Kestrel Knuckle"} <= names
            assert all(e.path is None or e.path.name.startswith("course-") for e in picker.entries)
            await pilot.press("escape")
            await pilot.pause(0.2)
            assert app.closed
    finally:
        os.chdir(old)


def test_picking_a_course_file_walks_it():
    asyncio.run(_pick_and_walk())


async def _pick_and_walk():
    import os

    from slopetune.tui.screens.course_pick import CoursePickScreen

    old = os.getcwd()
    os.chdir(ROOT)
    try:
        app = Host(load_setup(RIG).setup, setup_path=RIG, ascii_only=True)
        async with app.run_test(size=(80, 24)) as pilot:
            for _ in range(50):
                await pilot.pause()
                if isinstance(app.screen, CoursePickScreen) and app.screen.entries:
                    break
            target = next(i for i, e in enumerate(app.screen.entries) if e.name == "Kestrel Knuckle")
            app.screen.query_one("OptionList").highlighted = target
            await pilot.press("enter")
            screen = app.screen
            assert isinstance(screen, CourseScreen)
            await _ready(pilot, screen)
            assert screen.walk.course.name == "Kestrel Knuckle"
            assert "Kestrel Knuckle" in str(screen.query_one("#course-title").render())
            words = screen.query_one(CourseStatus).words()
            assert all(len(line) <= 78 for line in words.splitlines())
            assert "path ratio" in words.lower()
    finally:
        os.chdir(old)


def test_force_chart_is_readable_at_80x24():
    """Issue 13 item 7: the course view's force chart gets at least 6 plot rows at 80x24 (it had 3)."""
    asyncio.run(_chart_rows())


async def _chart_rows():
    app = Host(_kestrel_setup(), ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        await _ready(pilot, screen)
        await pilot.pause()
        chart = screen.query_one(CourseChart)
        assert chart.size.height >= 10
        lines = chart.render().plain.splitlines()
        plot_rows = [ln for ln in lines if ln.strip().startswith(("|", "+", "2", "1", "0")) and "|" in ln]
        assert len(plot_rows) >= 6


def test_status_says_where_the_onset_rule_decided():
    """A position with no steady K (engine.course_walk.CourseWalk.no_fixed_point) says so in the
    status words, within 78 columns at 80x24; its neighbours do not. The longest combination (a
    state with its qualifier, the belly touching and the onset note) still fits in one line."""
    asyncio.run(_onset_status())


async def _onset_status():
    from slopetune.engine.course_walk import state_words
    from slopetune.engine.traction import REAR
    from slopetune.tui.course_screen import ONSET_WORDS, doing_line

    app = Host(_kestrel_setup(), ascii_only=True)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = app.screen
        await _ready(pilot, screen)
        flagged = [i for i, f in enumerate(screen.walk.no_fixed_point) if f]
        assert flagged, "the demo walk no longer has a position with no steady K"
        status = screen.query_one(CourseStatus)
        before = flagged[0] - 1
        for key, times in (("pagedown", before // 10), ("right", before % 10)):
            for _ in range(times):
                await pilot.press(key)
        for i in (flagged[0] - 1, flagged[0]):
            await pilot.pause()
            assert status.index == i
            words = status.words()
            assert all(len(line) <= 78 for line in words.splitlines())
            assert (ONSET_WORDS in words) == (i in flagged)
            await pilot.press("right")
    longest = doing_line(state_words(REAR, "rear"), True, True)
    assert len(longest) <= 78 and "belly" in longest and ONSET_WORDS in longest
