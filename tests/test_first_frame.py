"""The tuner's start: what the first frame holds and what loads before it (plumbing, not physics).

The figures (how fast) are in `bench/bench_tuner.py`; these tests pin the order that makes them:
reading a setup loads neither numpy nor Textual, the forked child works out the first screen
without Textual, and when its answer is there the very first frame shows the chart and the words.
"""

from __future__ import annotations

import asyncio
import os
import subprocess
import sys
from pathlib import Path

import pytest

from slopetune.engine import analyse, load_setup
from slopetune.tui import prefetch
from slopetune.tui.app import SlopeTuneApp
from slopetune.tui.chart_data import chart_data
from slopetune.tui.slopes import slope_grid
from slopetune.tui.status_words import status_view
from slopetune.tui.units import Units

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"
SIZE = (80, 24)
needs_fork = pytest.mark.skipif(not hasattr(os, "fork"), reason="no fork here: the tuner starts without the child")


def _watch_first_analysis(monkeypatch) -> dict:
    """What the app showed when its own first analysis began (filled in at that moment)."""
    seen: dict = {}
    original = SlopeTuneApp._first_analysis

    def spy(self):
        seen.update(analysis=self.analysis, chart=self.chart.data, builds=self.chart.builds,
                    level=self.flag.level, view=self.status.view)
        original(self)

    monkeypatch.setattr(SlopeTuneApp, "_first_analysis", spy)
    return seen


def test_reading_a_setup_and_the_childs_work_load_no_textual_and_no_numpy_before_the_fork():
    """The parent reads the file, parses its arguments and forks before any heavy import; the
    child's modules (chart data, status words) stay free of Textual."""
    code = f"""
import sys
from slopetune.tui import cli, app_main, prefetch, chart_data, chart_plot, status_words, slopes, units
cli.tuner_parser().parse_args([{str(DEMO)!r}])
app_main.load_setup({str(DEMO)!r})
heavy = [m for m in ("numpy", "textual", "plotext", "tomlkit", "importlib.metadata") if m in sys.modules]
print(",".join(heavy) or "none")
"""
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT)
    assert out.stdout.strip() == "none"


@needs_fork
def test_prefetch_child_sends_the_first_screen_the_parent_would_work_out(monkeypatch):
    """The forked child's answer equals the same calls made here; `ready` waits for it."""
    monkeypatch.setenv("SLOPETUNE_PREFETCH", "1")
    setup = load_setup(DEMO).setup
    child = prefetch.start(setup, None, False)
    assert child.ready(10.0)
    first = child.result()
    units = Units(imperial=False, ascii_only=False)
    a = analyse(setup, slope_grid(False))
    assert first.setup == setup
    assert first.chart == chart_data(a, units) and first.view == status_view(a, units)
    monkeypatch.setenv("SLOPETUNE_PREFETCH", "0")
    assert prefetch.start(setup, None, False) is None


def test_first_frame_holds_the_chart_and_words_when_the_first_screen_is_given(monkeypatch):
    """With the child's answer in hand before the app starts, the chart, the flag and the words are
    composed into the first frame: they are already there when the app's own first analysis runs."""
    loaded = load_setup(DEMO)
    units = Units(imperial=False, ascii_only=False)
    a = analyse(loaded.setup, slope_grid(False))
    first = prefetch.FirstScreen(loaded.setup, chart_data(a, units), status_view(a, units))
    seen = _watch_first_analysis(monkeypatch)

    async def go():
        app = SlopeTuneApp(loaded, first_screen=first)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.3)
            assert seen["analysis"] is None  # the screen was full before this process analysed anything
            assert seen["chart"] == first.chart and seen["view"] == first.view
            assert seen["level"] == first.view.level != "wait"
            assert app.chart.builds >= 1 and app.analysis is not None  # then it analyses on its own

    asyncio.run(go())


def test_a_first_screen_for_another_setup_is_not_shown():
    """A stale answer (the child worked on other values) is dropped: the app analyses its own."""
    loaded = load_setup(DEMO)
    other = load_setup(ROOT / "setups" / "marmot-stock.toml")
    units = Units(imperial=False, ascii_only=False)
    a = analyse(other.setup, slope_grid(False))
    stale = prefetch.FirstScreen(other.setup, chart_data(a, units), status_view(a, units))

    async def go():
        app = SlopeTuneApp(loaded, first_screen=stale)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.3)
            own = analyse(loaded.setup, slope_grid(False))
            assert app.chart.data == chart_data(own, units)
            assert app.status.view == status_view(own, units)

    asyncio.run(go())


@pytest.mark.parametrize("columns,rows", [(80, 24), (100, 30), (120, 40), (79, 24), (80, 23), (60, 20), (200, 60)])
def test_expected_chart_size_is_the_laid_out_widgets_size(columns, rows):
    """The start-up child draws the first chart at `expected_chart_size`: it must be the size the
    tuner's layout (app.tcss) gives the chart widget, at wide, normal and cramped terminals."""
    from slopetune.tui.chart_plot import expected_chart_size

    async def go():
        app = SlopeTuneApp(load_setup(DEMO))
        async with app.run_test(size=(columns, rows)) as pilot:
            await pilot.pause()
            size = app.chart.size
            assert (size.width, size.height) == expected_chart_size(columns, rows)

    asyncio.run(go())


@pytest.mark.parametrize("ascii_only", [False, True])
def test_a_chart_drawn_by_the_child_shows_as_the_widget_would_draw_it(ascii_only, monkeypatch):
    """The first frame from the child's plotext text (slope marker drawn by plotext) has the same
    characters and colours as the widget's own drawing (marker laid over a cached build), and runs
    no plotext in this process."""
    from slopetune.tui.chart_plot import expected_chart_size

    loaded = load_setup(DEMO)
    monkeypatch.setenv("SLOPETUNE_PREFETCH", "1")
    child = prefetch.start(loaded.setup, None, ascii_only, (80, 24))
    if child is None:
        pytest.skip("no fork here: the tuner starts without the child")
    first = child.result()
    width, height = expected_chart_size(80, 24)
    assert first.plot[:2] == (width, height - 1)

    def lines(app):
        # spans sorted: the two drawings list the same non-overlapping spans in another order
        return [(line.plain, sorted((s.start, s.end, str(s.style)) for s in line.spans)) for line in app.chart._lines]

    async def go():
        drawn = SlopeTuneApp(loaded, first_screen=first, ascii_only=ascii_only)
        own = SlopeTuneApp(loaded, first_screen=first._replace(plot=None), ascii_only=ascii_only)
        seen = []
        for app in (drawn, own):
            async with app.run_test(size=(80, 24)) as pilot:
                await pilot.pause()
                seen.append((lines(app), app.chart.builds))
        (child_lines, child_builds), (own_lines, own_builds) = seen
        assert child_lines == own_lines and len(child_lines) == height
        assert child_builds == 0 and own_builds == 1

    asyncio.run(go())


@needs_fork
def test_a_first_screen_that_comes_after_the_first_frame_is_shown_from_the_childs_drawing(monkeypatch):
    """When the child answers after the app has started, its chart and words are shown the moment
    they arrive, drawn by the child (no plotext build here), and equal the app's own analysis."""
    monkeypatch.setenv("SLOPETUNE_PREFETCH", "1")
    loaded = load_setup(DEMO)
    child = prefetch.start(loaded.setup, None, False, SIZE)
    seen = _watch_first_analysis(monkeypatch)

    async def go():
        app = SlopeTuneApp(loaded, prefetch=child)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.5)
            units = Units(imperial=False, ascii_only=False)
            own = analyse(loaded.setup, slope_grid(False))
            assert seen["analysis"] is None and seen["builds"] == 0  # shown before this process drew
            assert seen["chart"] == chart_data(own, units) and app.status.view == status_view(own, units)

    asyncio.run(go())
