"""How the tuner draws cheaply, checked against what it would draw the plain way.

The slope marker is laid over a cached plotext drawing instead of running plotext per step: the
reference is plotext 5 itself, drawing the same chart with its own `vline` (cell for cell, styles
included). Partial repaints are checked against a whole-line comparison done by hand, and the
start-up against what it must not import (numpy and plotext cost more than Textual's whole start).
"""

from __future__ import annotations

import asyncio
import subprocess
import sys
from pathlib import Path

import pytest
from rich.console import Console
from rich.style import Style
from rich.text import Text

from slopetune.engine import load_setup
from slopetune.tui.app import SlopeTuneApp
from slopetune.tui.units import Units
from slopetune.tui.widgets import load_chart as lc
from slopetune.tui.widgets.line_strips import changed_cells, text_strip

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"
STYLES = {name: Style(color=colour) for name, colour in (
    ("front", "red"), ("rear", "green"), ("marks", "yellow"), ("slope", "blue"), ("base", "magenta"),
    ("axes", "white"))}
_CONSOLE = Console(width=300, color_system="truecolor")


def _cells(line: Text) -> list[tuple[str, Style]]:
    out = []
    for seg in line.render(_CONSOLE, end=""):
        out += [(ch, seg.style) for ch in seg.text]
    return out


def _plotext_lines(data, width, height, ascii_only) -> list[Text]:
    """The chart as plotext draws it, slope line and all (the reference)."""
    text = Text.from_ansi(lc.plot_text(data, width, height, ascii_only), no_wrap=True, end="")
    return list(lc.restyle(text, STYLES).split("\n", allow_blank=True))


@pytest.mark.parametrize("ascii_only", [False, True])
@pytest.mark.parametrize("full_range", [False, True])
def test_slope_marker_over_the_cached_drawing_is_what_plotext_draws(ascii_only, full_range):
    import numpy as np

    from slopetune.engine import analyse

    grid = np.arange(-90.0, 91.0, 1.0) if full_range else np.arange(0.0, 91.0, 1.0)
    analysis = analyse(load_setup(DEMO).setup, grid)
    base = analysis if full_range else None  # the dimmed baseline curves under the marker too
    data = lc.chart_data(analysis, Units(ascii_only=ascii_only), base)
    slopes = [float(grid[0]), float(grid[-1]), 0.0, 7.5, 33.3, 47.25, 89.5] + [float(s) for s in grid[::7]]
    for width, height in ((49, 14), (24, 5), (70, 30)):
        layer = lc.build_layer(data, width, height, ascii_only, STYLES)
        assert layer.frame is not None
        for slope in slopes:
            shown = data._replace(slope_deg=slope)
            got = lc.slope_overlay(layer, shown, ascii_only, STYLES["slope"])
            want = _plotext_lines(shown, width, height, ascii_only)
            assert [_cells(line) for line in got] == [_cells(line) for line in want], (width, height, slope)


def test_stepping_the_slope_runs_no_plotext_but_other_values_do(tmp_path):
    async def go():
        app = SlopeTuneApp(load_setup(DEMO))
        app.word_updates.every_s = app.chart_updates.every_s = 0.0
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause(0.3)
            await pilot.press("right")  # the first key also gives the start-up note's room to the chart
            await pilot.pause()
            builds = app.chart.builds
            for _ in range(5):
                await pilot.press("right")
            await pilot.pause()
            assert app.chart.data.slope_deg == 36 and app.chart.builds == builds
            assert "36\u00b0" in app.chart.render().plain  # the legend follows
            assert app.form.focus_key("rig.mass_g")
            await pilot.press("right")  # the mass: new curves, plotext again
            await pilot.pause()
            assert app.setup.rig.mass_g == 2385
            await pilot.pause()
            assert app.chart.builds == builds + 1

    asyncio.run(go())


def test_changed_cells_compares_columns_not_words():
    same = Text("Handover 6.9\u00b0, 23.1\u00b0 below")
    assert changed_cells(same, same.copy()) is None
    # a shorter number shifts the rest of the line left: everything from it on changes
    old, new = Text("ends by slip; 12.6 deg to go"), Text("ends by slip; 2.6 deg to go")
    first, end = changed_cells(old, new)
    assert (first, end) == (14, len(old.plain))
    assert old.plain[:first] == new.plain[:first]
    # a marker that moves one column: only those two cells
    a, b = Text("|    x     |"), Text("|     x    |")
    assert changed_cells(a, b) == (5, 7)
    # the same characters in another style change too; the same look split into other spans does not
    plain, styled = Text("abc"), Text("abc")
    styled.stylize("red", 1, 2)
    assert changed_cells(plain, styled) == (1, 2)
    split = Text("abc")
    split.stylize("red", 0, 1)
    split.stylize("red", 1, 3)
    whole = Text("abc")
    whole.stylize("red", 0, 3)
    assert changed_cells(whole, split) is None
    # a wide character: the whole line, as cells and characters no longer line up
    assert changed_cells(Text("ab"), Text("a\u4e2d")) == (0, 3)


def test_importing_the_tuner_leaves_numpy_and_plotext_for_after_the_first_frame():
    code = ("import sys, slopetune.tui.app, slopetune.tui.app_main;"
            "print(sorted(m for m in ('numpy', 'plotext', 'slopetune.engine.analysis', 'slopetune.engine.traction') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "[]"


def test_first_frame_draws_without_an_analysis_and_a_key_brings_it():
    async def go():
        app = SlopeTuneApp(load_setup(DEMO))
        app._first_analysis = lambda: None  # hold the analysis back: every widget draws without one
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause(0.2)
            assert app.analysis is None
            assert app.flag.level == "wait" and "Working" in app.flag.words
            assert app.form.value_text("terrain.slope_deg") == "30.0"
            assert app.chart.render().plain == "" and app.status.view is None
            for widget in (app.chart, app.status, app.form, app.title_bar):
                for y in range(widget.size.height):
                    widget.render_line(y)
            await pilot.press("right")
            await pilot.pause(0.3)
            assert app.analysis is not None and app.analysis.setup.terrain.slope_deg == 31
            assert app.flag.level in ("ok", "warn", "danger") and "31" in app.flag.words
            assert app.chart.data is not None and app.status.view.lines[1].startswith("At 31")

    asyncio.run(go())


def test_a_theme_change_restyles_every_cached_line():
    def colours(widget):
        found = set()
        for y in range(widget.size.height):
            for seg in widget.render_line(y):
                if seg.style is not None:
                    found.add((seg.style.color, seg.style.bgcolor))
        return found

    async def go():
        app = SlopeTuneApp(load_setup(DEMO))
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause(0.5)
            before = {w: colours(w) for w in (app.chart, app.status, app.flag, app.form)}
            app.theme = "textual-light" if app.theme != "textual-light" else "textual-dark"
            await pilot.pause(0.3)
            for widget, seen in before.items():
                assert colours(widget) != seen, type(widget).__name__

    asyncio.run(go())


def test_without_curves_plotext_draws_the_marker_for_each_slope():
    """No slope where both axles touch: plotext draws the marker itself, so each slope is a build."""
    empty = lc.Curves((), (), ())
    data = lc.ChartData(empty, None, 30.0, (("B", 12.0),), "g", (0.0, 90.0), 2500.0)
    chart = lc.LoadChart()
    first = chart._layer_for(data, 49, 14, STYLES)
    assert first.frame is None
    assert chart._layer_for(data, 49, 14, STYLES) is first and chart.builds == 1
    moved = chart._layer_for(data._replace(slope_deg=60.0), 49, 14, STYLES)
    assert chart.builds == 2 and [line.plain for line in moved.lines] != [line.plain for line in first.lines]
    want = _plotext_lines(data._replace(slope_deg=60.0), 49, 14, False)
    assert [line.plain for line in moved.lines] == [line.plain for line in want]


def test_text_strip_is_the_plain_render_cropped_and_on_the_base_style():
    """The text's own style counts too (rich's `Text.render` leaves it out when there are no spans)."""
    from rich.text import Span
    from textual.strip import Strip

    def reference(line: Text, width: int, base: Style) -> Strip:
        own = line.style if isinstance(line.style, Style) else Style.parse(line.style or "none")
        spelled = Text(line.plain, spans=[Span(0, len(line.plain), own), *line.spans])
        return Strip(spelled.render(_CONSOLE, end="")).crop_extend(0, width, None).apply_style(base)

    base = Style(color="#e0e0e0", bgcolor="#121212")
    lines = [Text("short"), Text("exactly ten"), Text("a line much longer than the width", style="bold"),
             Text("1500\u2524\u2824\u2824\u28c0  \u2502 x", style=Style(color="#888888"))]
    lines[0].stylize(Style(color="red"), 1, 3)
    lines[3].stylize(Style(color="blue"), 9, 10)
    for line in lines:
        for width in (3, 11, 40):
            plain = reference(line, width, base)
            fast = text_strip(line, width, base, _CONSOLE)
            assert fast.cell_length == width
            assert [(s.text, s.style) for s in fast.simplify()] == [(s.text, s.style) for s in plain.simplify()]
