"""The load chart: front and rear normal force against slope, the adapter around plotext.

Swap the chart library by rewriting this file and `chart_plot.py` (plotext's drawing, kept free of
Textual for the start-up child): the rest of the tuner only calls `LoadChart.show(ChartData)` and
`chart_data(...)`.

Cheap on a slow board, in three ways. plotext draws everything but the marker at the setup's
slope, cached on (data less that slope, size, styles), so stepping the slope, the value tuned most,
runs no plotext at all: the marker is laid over the cached drawing where plotext itself would put
it (under the curves and letters, a tick on each border). The widget draws line by line
(Textual's line API) from strips made once per changed line, and marks only the changed cells of
a line for repainting (Textual sends a line from its left edge to the last changed cell). And
plotext (65-110 ms) and numpy are imported on the first build, after the first frame.
"""

from __future__ import annotations

import math
from typing import NamedTuple, Optional

from rich.style import Style
from rich.text import Span, Text
from textual.geometry import Region, Size
from textual.strip import Strip
from textual.widget import Widget

from ..chart_data import ChartData, Curves, chart_data  # noqa: F401 - part of the chart's door
from ..chart_plot import (ASCII_FOLD, MIN_HEIGHT, MIN_WIDTH, _TAGS, _fold, _plotext,  # noqa: F401
                          load_plotext, nice_step, plot_text)
from .line_strips import changed_regions, text_strip
from .style_cache import StyleCache

_STYLE_OF_NUMBER = {number: name for name, (_colour, number) in _TAGS.items()}
# The marker at the setup's slope, as plotext draws a vertical line: in the canvas, and as a tick
# on the top and bottom borders.
SLOPE_MARK = {False: ("\u2502", "\u252c", "\u2534"), True: ("|", "+", "+")}
NAMED_MARKS = (("B", "balance", "bal"), ("H", "handover", "hand"), ("L", "front lift", "lift"),
               ("N", "rear lift (nose over)", "nose"), ("M", "max grade", "max"))


class Frame(NamedTuple):
    """Where plotext put the canvas in a drawing: the border rows and the canvas columns."""

    top: int  # row of the top border
    bottom: int  # row of the bottom border
    left: int  # first column of the canvas
    right: int  # column of the right border, one past the canvas

    def column(self, x: float, lo: float, hi: float) -> int:
        """The column plotext draws a vertical line at `x` in (its own rounding, from plotext 5)."""
        from plotext._utility import get_matrix_data

        return self.left + get_matrix_data([x], (lo, hi), self.right - self.left)[0]


def find_frame(lines: list[str]) -> Optional[Frame]:
    """The frame of plotext's box-drawn chart (before any ASCII folding); None if there is none."""
    for top, line in enumerate(lines):
        left = line.find("\u250c")
        if left >= 0:
            break
    else:
        return None
    right = lines[top].find("\u2510", left)
    bottom = next((y for y in range(top + 1, len(lines)) if lines[y][left:left + 1] == "\u2514"), None)
    if right < 0 or bottom is None:
        return None
    return Frame(top, bottom, left + 1, right)


class Layer(NamedTuple):
    """The chart as plotext drew it without the slope marker, line by line, restyled and folded."""

    lines: list[Text]
    frame: Optional[Frame]


class LoadChart(Widget):
    """Adapter around plotext 5: `show(data)` hands it new data; it repaints the lines that changed."""

    COMPONENT_CLASSES = {"load-chart--front", "load-chart--rear", "load-chart--marks", "load-chart--slope",
                         "load-chart--base", "load-chart--axes"}

    def __init__(self, *, ascii_only: bool = False, name=None, id=None, classes=None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.ascii_only = ascii_only
        self._data: Optional[ChartData] = None
        self._style_cache = StyleCache(self, "load-chart", (*_TAGS, "axes"), partial=True)
        self._base = Style()  # the widget's own style, under every line
        self._layer_key = None
        self._layer: Optional[Layer] = None
        self._lines_key = None  # (data, size, styles version) that `_lines` were drawn for
        self._lines: list[Text] = []
        self._strips: list[Optional[Strip]] = []
        self.builds = 0  # how many times plotext ran: lets tests check the coalescing
        # plotext's text of the first chart, drawn elsewhere (the start-up child) for a size:
        # ((data, width, height, ascii_only), text); used while nothing else is asked for
        self._drawn = None

    def refresh(self, *regions: Region, **kwargs) -> Widget:
        if not regions and hasattr(self, "_style_cache"):
            self._style_cache.invalidate()  # a full refresh: perhaps restyled (see StyleCache)
        return super().refresh(*regions, **kwargs)

    @property
    def data(self) -> Optional[ChartData]:
        return self._data

    def preset(self, data: ChartData, width: int, height: int, text: str) -> None:
        """plotext's whole chart (slope marker included, `plot_text` of `data` at `width` x `height`
        cells, legend row not counted) drawn by someone else: shown while the data and the size
        match, so a first frame needs no plotext here."""
        self._drawn = ((data, width, height, self.ascii_only), text)

    def warm_up(self) -> None:
        """Import plotext now (after the first frame), so the first key does not wait for it."""
        load_plotext()

    def show(self, data: ChartData) -> None:
        """New data: repaint only the chart lines that differ from what is on screen."""
        if data == self._data:
            return
        self._data = data
        size = self.size
        if not self.is_mounted or not size.width or self._lines_key is None:
            self.refresh()
            return
        old = self._lines
        self._draw(size)  # once per frame at most, a few times a second while a key is held (see the app)
        if len(old) != len(self._lines):
            self.refresh()
            return
        regions = changed_regions(old, self._lines)
        if regions:
            self.refresh(*regions)

    def _draw(self, size: Size) -> None:
        """Make `_lines` for the current data and `size` (the widget's: Textual works it out anew
        on each ask); strips are made again only for lines that changed."""
        width, height = size
        styles, self._base = self._style_cache.styles()
        key = (self._data, width, height, self._style_cache.version)
        if key == self._lines_key:
            return
        old, old_strips = self._lines, self._strips
        if self._data is None:
            lines = []
        elif width < MIN_WIDTH or height < MIN_HEIGHT:
            lines = [Text("chart needs more room", no_wrap=True, overflow="crop", end="")]
        else:
            lines = self._chart_lines(self._data, width, height, styles)
        keep = len(old) == len(lines) and self._lines_key is not None and self._lines_key[1:] == key[1:]
        self._strips = [old_strips[y] if keep and old[y] == line else None for y, line in enumerate(lines)]
        self._lines, self._lines_key = lines, key

    def _chart_lines(self, data: ChartData, width: int, height: int, styles: dict[str, Style]) -> list[Text]:
        if self._drawn is not None and self._drawn[0] == (data, width, height - 1, self.ascii_only):
            text = self._drawn[1]  # already folded for ASCII by `plot_text`
            lines = restyle(Text.from_ansi(text, no_wrap=True, end=""), styles).split("\n", allow_blank=True)
            return [*lines, legend(data, width, self.ascii_only, styles)]
        self._drawn = None  # the data or the size moved on: from here plotext draws here
        layer = self._layer_for(data, width, height - 1, styles)
        lines = slope_overlay(layer, data, self.ascii_only, styles["slope"])
        return [*lines, legend(data, width, self.ascii_only, styles)]

    def _layer_for(self, data: ChartData, width: int, height: int, styles: dict[str, Style]) -> Layer:
        """plotext's drawing without the slope marker: built again only when more than the slope changed
        (or for every slope when there are no curves, as plotext then draws the marker itself)."""
        shown = data._replace(slope_deg=0.0) if data.current.slope_deg else data
        key = (shown, width, height, self.ascii_only, self._style_cache.version)
        if key != self._layer_key:
            self.builds += 1
            self._layer = build_layer(data, width, height, self.ascii_only, styles)
            self._layer_key = key
        return self._layer

    def render_line(self, y: int) -> Strip:
        size = self.size
        self._draw(size)
        width = size.width
        if y >= len(self._lines):
            return Strip.blank(width, self._base)
        strip = self._strips[y]
        if strip is None:
            strip = text_strip(self._lines[y], width, self._base, self.app.console)
            self._strips[y] = strip
        return strip

    def render(self) -> Text:
        """The whole chart as one text (what `render_line` draws, line by line)."""
        self._draw(self.size)
        return Text("\n").join(self._lines)


def build_layer(data: ChartData, width: int, height: int, ascii_only: bool, styles: dict[str, Style]) -> Layer:
    """The chart without its slope marker: plotext draws when the curves have something to span
    (an x axis without them would come out otherwise); else the marker is drawn by plotext too."""
    on_curves = bool(data.current.slope_deg)
    body = _plotext(data, width, height, ascii_only, slope_line=not on_curves)
    lines = restyle(Text.from_ansi(body, no_wrap=True, end=""), styles).split("\n", allow_blank=True)
    frame = find_frame([line.plain for line in lines]) if on_curves else None
    if ascii_only:
        for line in lines:
            line.plain = _fold(line.plain)
    return Layer(list(lines), frame)


def slope_overlay(layer: Layer, data: ChartData, ascii_only: bool, style: Style) -> list[Text]:
    """The layer with the marker at the setup's slope where plotext would draw it: on the empty
    cells of its column (curves and letters stay on top) and as a tick on the top and bottom border."""
    lines = layer.lines
    frame = layer.frame
    lo, hi = data.x_range
    if frame is None or not lo <= data.slope_deg <= hi:
        return list(lines)
    x = frame.column(data.slope_deg, lo, hi)
    bar, top_tick, bottom_tick = SLOPE_MARK[ascii_only]
    out = list(lines)
    for y in range(frame.top, frame.bottom + 1):
        line = lines[y]
        plain = line.plain
        if x >= len(plain):
            continue
        if y == frame.top or y == frame.bottom:
            mark, spans = (top_tick if y == frame.top else bottom_tick), line.spans
        elif plain[x] == " ":
            mark, spans = bar, [*line.spans, Span(x, x + 1, style)]
        else:
            continue
        out[y] = Text(plain[:x] + mark + plain[x + 1:], style=line.style, spans=spans, no_wrap=True,
                      overflow="crop", end="")
    return out


def restyle(text: Text, styles: dict[str, Style], name_of_number=None) -> Text:
    """Swap plotext's tag colours (by colour number) for the theme's styles; the rest in "axes"."""
    names = _STYLE_OF_NUMBER if name_of_number is None else name_of_number
    spans = []
    for span in text.spans:
        style = span.style if isinstance(span.style, Style) else Style.parse(str(span.style))
        number = style.color.number if style.color is not None else None
        spans.append(Span(span.start, span.end, styles[names.get(number, "axes")]))
    text.spans = spans
    text.style = styles["axes"]
    return text


def legend(data: ChartData, width: int, ascii_only: bool, styles: dict[str, Style]) -> Text:
    """One line naming the curves and the marks, in fewer words until it fits `width`."""
    deg = " deg" if ascii_only else "\u00b0"
    here = f"{data.slope_deg:g}{deg}"
    front_mark, rear_mark = ("*", "o") if ascii_only else ("\u2501", "\u2501")
    base_mark = "." if ascii_only else "\u2508"  # the baseline's own mark
    bar = "|" if ascii_only else "\u2502"
    letters = {letter for letter, _ in data.marks}
    out = Text()
    # 0: words, 1: short words, 2: short words without the slope (the form shows it), 3: letters
    for level in range(4):
        gap = " " if level == 0 else ""
        out = Text(no_wrap=True, overflow="crop", end="")
        out.append(f"{front_mark}{gap}F front ", styles["front"])
        out.append(f"{rear_mark}{gap}R rear ", styles["rear"])
        if data.baseline is not None:
            out.append(f"{base_mark}{gap}{'baseline' if level == 0 else 'base'} ", styles["base"])
        if level < 2:
            out.append(f"{bar}{gap}{'slope ' if level == 0 else ''}{here} ", styles["slope"])
        for letter, words, short in NAMED_MARKS:
            if letter in letters:
                out.append(f"{letter} {words} " if level == 0 else f"{letter} {short} " if level < 3
                           else f"{letter} ", styles["marks"])
        out.rstrip()
        if out.cell_len <= width:
            break
    return out
