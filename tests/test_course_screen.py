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
    app = Host(load_setup(KESTREL).setup, ascii_only=True)
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
    app = Host(load_setup(KESTREL).setup, ascii_only=True)
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
    walk_setup = load_setup(KESTREL).setup
    from slopetune.engine.course_walk import walk_course

    walk = walk_course(walk_setup, 5.0)
    grid, tags = draw_side_view(walk, 0, 80, 12)
    rows = ["".join(r) for r in grid]
    surface = max(i for i, r in enumerate(rows) if "_" in r)
    wheel_rows = [i for i, r in enumerate(tags) if "wheel" in r]
    assert max(wheel_rows) in (surface - 1, surface)
    assert any("=" in r for r in rows)


def test_setup_without_a_course_says_so_and_closes():
    asyncio.run(_without_a_course())


async def _without_a_course():
    app = Host(load_setup(ROOT / "setups" / "marmot-stock.toml").setup)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        words = str(app.screen.query_one(CourseStatus).render())
        assert "no [course]" in words
        await pilot.press("escape")
        await pilot.pause(0.2)
        assert app.closed
