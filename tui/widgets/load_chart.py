"""The load chart: front and rear normal force against slope. The only module that knows plotext.

Swap the chart library by rewriting this file: the rest of the tuner only calls
`LoadChart.show(ChartData)` and `chart_data(...)`.

The chart is built from the latest data only, cached on (data, size, styles): in `show()` (which
the app calls at most once per frame, and only a few times a second while a key is held) to find
the lines that changed and repaint only those, or in `render()` after a resize. plotext is
imported on the first build, not at start-up (it costs 65-110 ms to import).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np
from rich.style import Style
from rich.text import Span, Text
from textual.geometry import Region
from textual.widget import Widget

from engine import Analysis

from ..units import Units

# plotext draws in these standard colours; `render` swaps them for the theme's styles, so the
# numbers are tags, not colours.
_TAGS = {"front": ("red", 1), "rear": ("green", 2), "marks": ("yellow", 3), "slope": ("blue", 4),
         "base": ("magenta", 5)}
_STYLE_OF_NUMBER = {number: name for name, (_colour, number) in _TAGS.items()}

# Box-drawing characters plotext uses for its frame and lines, as ASCII for --ascii / TERM=linux.
ASCII_FOLD = str.maketrans({
    "\u2500": "-", "\u2502": "|", "\u250c": "+", "\u2510": "+", "\u2514": "+", "\u2518": "+",
    "\u251c": "+", "\u2524": "+", "\u252c": "+", "\u2534": "+", "\u253c": "+", "\u2022": "*",
    "\u00b7": ".",
})
MIN_WIDTH, MIN_HEIGHT = 24, 6
NAMED_MARKS = (("B", "balance", "bal"), ("H", "handover", "hand"), ("L", "front lift", "lift"),
               ("N", "rear lift (nose over)", "nose"))


@dataclass(frozen=True)
class Curves:
    """Front and rear normal force over the slopes where both axles touch. [display units]"""

    slope_deg: tuple[float, ...]
    front: tuple[float, ...]
    rear: tuple[float, ...]


@dataclass(frozen=True)
class ChartData:
    """Everything one chart shows; hashable so the built chart can be cached on it."""

    current: Curves
    baseline: Optional[Curves]
    slope_deg: float  # the setup's slope: the vertical marker
    marks: tuple[tuple[str, float], ...]  # (letter, angle) inside the range
    unit: str  # "g" or "oz"
    x_range: tuple[float, float]
    y_top: float


def _curves(analysis: Analysis, units: Units) -> tuple[Curves, float]:
    sweep = analysis.sweep
    touching = (sweep.front_normal_g > 0) & (sweep.rear_normal_g > 0)
    scale = units.factor("mass")
    force = lambda a: tuple(np.round(a[touching] / scale, 3).tolist())  # noqa: E731
    slopes = tuple(sweep.slope_deg[touching].tolist())
    return Curves(slopes, force(sweep.front_normal_g), force(sweep.rear_normal_g)), analysis.rig.mass_g / scale


def chart_data(analysis: Analysis, units: Units, baseline: Optional[Analysis] = None) -> ChartData:
    """What the chart shows for `analysis` (its sweep sets the slope range) and an optional baseline."""
    current, top = _curves(analysis, units)
    base = None
    if baseline is not None:
        base, base_top = _curves(baseline, units)
        top = max(top, base_top)
    slopes = analysis.sweep.slope_deg
    lo, hi = float(slopes.min()), float(slopes.max())
    a = analysis.angles_deg
    key = "handover" if analysis.load == "climb" else "handover_no_load"
    named = {"B": a.get("balance"), "H": a.get(key), "L": a.get("front_lift"), "N": a.get("rear_lift")}
    marks = tuple((letter, round(v, 2)) for letter, v in named.items() if v is not None and lo <= v <= hi)
    return ChartData(current, base, float(analysis.setup.terrain.slope_deg), marks, units.unit("mass"),
                     (lo, hi), float(top))


def nice_step(top: float, count: int) -> float:
    """A round tick step (1, 2, 2.5 or 5 times a power of ten) giving about `count` ticks up to `top`."""
    raw = max(top, 1e-9) / max(count, 1)
    power = 10.0 ** np.floor(np.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if m * power >= raw:
            return m * power
    return 10.0 * power


class LoadChart(Widget):
    """Adapter around plotext 5: `show(data)` stores the data; `render()` builds when it changed."""

    COMPONENT_CLASSES = {"load-chart--front", "load-chart--rear", "load-chart--marks", "load-chart--slope",
                         "load-chart--base", "load-chart--axes"}

    def __init__(self, *, ascii_only: bool = False, name=None, id=None, classes=None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.ascii_only = ascii_only
        self._data: Optional[ChartData] = None
        self._cache_key = None
        self._cache: Optional[Text] = None
        self._lines: Optional[list[Text]] = None  # the built chart, line by line, to find what changed
        self.builds = 0  # how many times plotext ran: lets tests check the coalescing

    @property
    def data(self) -> Optional[ChartData]:
        return self._data

    def show(self, data: ChartData) -> None:
        """New data: repaint only the chart lines that differ from what is on screen."""
        if data == self._data:
            return
        self._data = data
        old = self._lines
        width = self.size.width
        if not self.is_mounted or not width or old is None:
            self.refresh()
            return
        self.render()  # builds now: this is already once per frame at most (see the app)
        new = self._lines
        if new is None or len(new) != len(old):
            self.refresh()
            return
        for y, (was, now) in enumerate(zip(old, new)):
            if was != now:
                self.refresh(Region(0, y, width, 1))

    def _styles(self) -> dict[str, Style]:
        return {name: self.get_component_rich_style(f"load-chart--{name}", partial=True)
                for name in (*_TAGS, "axes")}

    def render(self) -> Text:
        width, height = self.size
        if self._data is None:
            return Text("")
        if width < MIN_WIDTH or height < MIN_HEIGHT:
            self._lines = None
            return Text("chart needs more room", no_wrap=True, overflow="crop")
        styles = self._styles()
        key = (self._data, width, height, self.ascii_only, tuple(styles.items()))
        if key != self._cache_key:
            self._cache = self._build(self._data, width, height, styles)
            self._cache_key = key
            self._lines = list(self._cache.split("\n", allow_blank=True))
        return self._cache

    def _build(self, data: ChartData, width: int, height: int, styles: dict[str, Style]) -> Text:
        self.builds += 1
        body = plot_text(data, width, height - 1, self.ascii_only)
        chart = _restyle(Text.from_ansi(body, no_wrap=True, end=""), styles)
        chart.append("\n")
        chart.append_text(legend(data, width, self.ascii_only, styles))
        return chart


def _line_markers(ascii_only: bool) -> tuple[str, str, str]:
    """Markers for front, rear and baseline: ASCII characters, or braille dots where fonts have them."""
    if ascii_only:
        return "*", "o", "."
    return "braille", "braille", "braille"


def plot_text(data: ChartData, width: int, height: int, ascii_only: bool) -> str:
    """plotext's ANSI text of the chart, `width` x `height` cells (colours are tags, see _TAGS)."""
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
    y_ticks = list(np.arange(0.0, y_top, y_step))
    plt.yticks(y_ticks, [f"{t:g}" for t in y_ticks])
    step = 15 if hi - lo <= 90 else 30
    ticks = list(range(int(np.ceil(lo / step) * step), int(hi) + 1, step))
    plt.xticks(ticks, [str(t) for t in ticks])
    if data.baseline is not None and data.baseline.slope_deg:
        b = data.baseline
        plt.plot(list(b.slope_deg), list(b.front), marker=base_m, color=_TAGS["base"][0])
        plt.plot(list(b.slope_deg), list(b.rear), marker=base_m, color=_TAGS["base"][0])
    c = data.current
    if c.slope_deg:
        plt.plot(list(c.slope_deg), list(c.front), marker=front_m, color=_TAGS["front"][0])
        plt.plot(list(c.slope_deg), list(c.rear), marker=rear_m, color=_TAGS["rear"][0])
    if lo <= data.slope_deg <= hi:
        plt.vline(data.slope_deg, _TAGS["slope"][0])
    for letter, angle in data.marks:
        plt.text(letter, angle, y_top, color=_TAGS["marks"][0], alignment="center")
    if c.slope_deg:
        # the axle's initial at the end of its curve, so the curves read without colour
        plt.text("F", c.slope_deg[-1], c.front[-1] + y_top * 0.06, color=_TAGS["front"][0], alignment="right")
        plt.text("R", c.slope_deg[-1], c.rear[-1] + y_top * 0.06, color=_TAGS["rear"][0], alignment="right")
    plt.xlabel("slope [deg]")
    plt.ylabel(f"normal force [{data.unit}]")
    text = plt.build().rstrip("\n")
    if ascii_only:
        text = text.translate(ASCII_FOLD).encode("latin-1", "replace").decode("latin-1")
    return text


def _restyle(text: Text, styles: dict[str, Style]) -> Text:
    """Swap plotext's tag colours for the theme's styles; leave the axes in the axes style."""
    spans = []
    for span in text.spans:
        style = span.style if isinstance(span.style, Style) else Style.parse(str(span.style))
        number = style.color.number if style.color is not None else None
        name = _STYLE_OF_NUMBER.get(number, "axes")
        spans.append(Span(span.start, span.end, styles[name]))
    text.spans = spans
    text.style = styles["axes"]
    return text


def legend(data: ChartData, width: int, ascii_only: bool, styles: dict[str, Style]) -> Text:
    """One line naming the curves and the marks, in fewer words until it fits `width`."""
    deg = " deg" if ascii_only else "\u00b0"
    here = f"{data.slope_deg:g}{deg}"
    front_mark, rear_mark = ("*", "o") if ascii_only else ("\u2501", "\u2501")
    base_mark = "..." if ascii_only else "\u2508"
    bar = "|" if ascii_only else "\u2502"
    letters = {letter for letter, _ in data.marks}
    out = Text()
    for level in range(3):  # 0: words, 1: short words, 2: letters only for the marks
        gap = " " if level == 0 else ""
        out = Text(no_wrap=True, overflow="crop", end="")
        out.append(f"{front_mark}{gap}F front ", styles["front"])
        out.append(f"{rear_mark}{gap}R rear ", styles["rear"])
        if data.baseline is not None:
            out.append(f"{base_mark}{gap}{'baseline' if level == 0 else 'base'} ", styles["base"])
        out.append(f"{bar}{gap}{'slope ' if level == 0 else ''}{here} ", styles["slope"])
        for letter, words, short in NAMED_MARKS:
            if letter in letters:
                out.append(f"{letter} {words} " if level == 0 else f"{letter} {short} " if level == 1
                           else f"{letter} ", styles["marks"])
        out.rstrip()
        if out.cell_len <= width:
            break
    return out
