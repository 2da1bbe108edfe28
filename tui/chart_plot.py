"""plotext's drawing of the load chart, as text: no Textual, no rich, no numpy.

The load chart's adapter is `widgets/load_chart.py` (the widget the tuner talks to) with this
module under it. Kept apart from the widget so the start-up child
(`prefetch.py`) can draw the first chart while the parent imports Textual, and the parent's first
frame needs no plotext at all.
"""

from __future__ import annotations

import math

from .chart_data import ChartData

# plotext draws in these standard colours; `render` swaps them for the theme's styles, so the
# numbers are tags, not colours.
_TAGS = {"front": ("red", 1), "rear": ("green", 2), "marks": ("yellow", 3), "slope": ("blue", 4),
         "base": ("magenta", 5)}

# Box-drawing characters plotext uses for its frame and lines, as ASCII for --ascii / TERM=linux.
ASCII_FOLD = str.maketrans({
    "\u2500": "-", "\u2502": "|", "\u250c": "+", "\u2510": "+", "\u2514": "+", "\u2518": "+",
    "\u251c": "+", "\u2524": "+", "\u252c": "+", "\u2534": "+", "\u253c": "+", "\u2022": "*",
    "\u00b7": ".",
})

# The tuner's layout (app.tcss): the form's width at each terminal size, the rows above and below
# the chart, and the gap left of it. `expected_chart_size` mirrors it so the start-up child can draw
# the first chart at the size the widget will have; a test compares it with the laid-out widget,
# and a mismatch only means the widget draws its own chart.
MIN_WIDTH, MIN_HEIGHT = 24, 6  # smaller than this the widget says it needs more room
FORM_WIDTH = {"normal": 30, "wide": 40, "cramped": 26}
WIDE_FROM_COLUMNS = 110
CRAMPED_BELOW = (80, 24)
STATUS_ROWS = {"normal": 9, "cramped": 8}
CHART_GAP_COLUMNS = 2
ROWS_AROUND_BODY = 3  # title, flag, footer


def expected_chart_size(columns: int, rows: int) -> tuple[int, int]:
    """(width, height) in cells the tuner's chart widget gets on a `columns` x `rows` terminal."""
    cramped = columns < CRAMPED_BELOW[0] or rows < CRAMPED_BELOW[1]
    form = FORM_WIDTH["cramped" if cramped else ("wide" if columns >= WIDE_FROM_COLUMNS else "normal")]
    status = STATUS_ROWS["cramped" if cramped else "normal"]
    return columns - form - CHART_GAP_COLUMNS, rows - ROWS_AROUND_BODY - status


def nice_step(top: float, count: int) -> float:
    """A round tick step (1, 2, 2.5 or 5 times a power of ten) giving about `count` ticks up to `top`."""
    raw = max(top, 1e-9) / max(count, 1)
    power = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * power >= raw:
            return m * power
    return 10.0 * power


def _line_markers(ascii_only: bool) -> tuple[str, str, str]:
    """Markers for front, rear and baseline: ASCII characters, or braille dots where fonts have them."""
    if ascii_only:
        return "*", "o", "."
    return "braille", "braille", "braille"


def load_plotext() -> None:
    """Import plotext now (start-up: when the first frame will draw the chart anyway)."""
    import plotext  # noqa: F401


def _plotext(data: ChartData, width: int, height: int, ascii_only: bool, slope_line: bool) -> str:
    """plotext's ANSI text of the chart, `width` x `height` cells, box lines not folded (colours are tags)."""
    import plotext as plt  # lazily: importing plotext is slow and the first frame does not need it

    front_m, rear_m, base_m = _line_markers(ascii_only)
    lo, hi = data.x_range
    plt.clear_data()  # every setting below is set again on each build; clf would cost 1 ms more
    plt.limit_size(False, False)  # the widget, not plotext's guess of the terminal, sets the size
    plt.plotsize(width, height)
    plt.theme("clear")
    plt.xlim(lo, hi)
    # headroom above the heaviest load for the mark letters on the top row
    y_top = data.y_top * 1.08
    y_step = nice_step(data.y_top, max(2, min(5, (height - 4) // 2)))
    plt.ylim(0, y_top)
    y_ticks = [i * y_step for i in range(math.ceil(y_top / y_step))]
    plt.yticks(y_ticks, [f"{t:g}" for t in y_ticks])
    step = 15 if hi - lo <= 90 else 30
    ticks = list(range(math.ceil(lo / step) * step, int(hi) + 1, step))
    plt.xticks(ticks, [str(t) for t in ticks])
    if data.baseline is not None and data.baseline.slope_deg:
        b = data.baseline
        plt.plot(list(b.slope_deg), list(b.front), marker=base_m, color=_TAGS["base"][0])
        plt.plot(list(b.slope_deg), list(b.rear), marker=base_m, color=_TAGS["base"][0])
    c = data.current
    if c.slope_deg:
        # the rear first, the front over it: where the lines meet the front (the overdriven axle's
        # load, the one the flag is about) stays drawn, and the rear shows on either side
        plt.plot(list(c.slope_deg), list(c.rear), marker=rear_m, color=_TAGS["rear"][0])
        plt.plot(list(c.slope_deg), list(c.front), marker=front_m, color=_TAGS["front"][0])
    if slope_line and lo <= data.slope_deg <= hi:
        plt.vline(data.slope_deg, _TAGS["slope"][0])
    for letter, angle in data.marks:
        plt.text(letter, angle, y_top, color=_TAGS["marks"][0], alignment="center")
    if c.slope_deg:
        # the axle's initial at the end of its curve, so the curves read without colour
        plt.text("F", c.slope_deg[-1], c.front[-1] + y_top * 0.06, color=_TAGS["front"][0], alignment="right")
        plt.text("R", c.slope_deg[-1], c.rear[-1] + y_top * 0.06, color=_TAGS["rear"][0], alignment="right")
    plt.xlabel("slope [deg]")
    plt.ylabel(f"normal force [{data.unit}]")
    return plt.build().rstrip("\n")


def _fold(text: str) -> str:
    """Box lines as ASCII, the rest within Latin-1, one character for one."""
    return text.translate(ASCII_FOLD).encode("latin-1", "replace").decode("latin-1")


def plot_text(data: ChartData, width: int, height: int, ascii_only: bool) -> str:
    """plotext's ANSI text of the whole chart, slope marker included (colours are tags, see _TAGS)."""
    text = _plotext(data, width, height, ascii_only, slope_line=True)
    return _fold(text) if ascii_only else text
