"""The heading chart: tip, first wheel lift and hold angle against heading, with the setup's
heading and slope marked.

plotext stays behind `load_chart`'s helpers: this widget reuses its restyling, ASCII folding,
frame finding and vertical-marker overlay. The plotext drawing is cached on (curves, slope, size,
styles); stepping the heading (the key held most on this screen) only moves the overlaid marker
and runs no plotext.
"""

from __future__ import annotations

from typing import NamedTuple, Optional

from rich.style import Style
from rich.text import Text
from textual.widget import Widget

from .load_chart import ASCII_FOLD, Layer, find_frame, nice_step, restyle, slope_overlay

# plotext draws in these standard colours; the theme's styles replace them (tags, not colours)
_TAGS = {"tip": ("red", 1), "hold": ("green", 2), "lift": ("yellow", 3), "slope": ("blue", 4),
         "here": ("magenta", 5)}
_NAME_OF_NUMBER = {number: name for name, (_colour, number) in _TAGS.items()}
MIN_WIDTH, MIN_HEIGHT = 24, 6


class HeadingChartData(NamedTuple):
    """Everything the chart shows; hashable so the plotext drawing can be cached on it."""

    heading_deg: tuple[float, ...]  # −180 .. 180, ascending
    tip_deg: tuple[float, ...]
    lift_deg: Optional[tuple[float, ...]]  # None: the same as tip (roll moment split by axle load)
    hold_deg: tuple[float, ...]
    setup_heading_deg: float  # the vertical marker, in −180 .. 180
    slope_deg: float  # the horizontal marker

    @property
    def x_range(self) -> tuple[float, float]:
        return (-180.0, 180.0)


def chart_data(hs, heading_deg: float, slope_deg: float) -> HeadingChartData:
    """Curves of a `HeadingSweep` on −180..180 (the first point repeated at +180 to close the circle)."""
    import numpy as np

    wrapped = (hs.heading_deg + 180.0) % 360.0 - 180.0
    order = np.argsort(wrapped, kind="stable")

    def closed(values):
        v = np.asarray(values, dtype=float)[order]
        return tuple(np.round(np.append(v, v[0]), 3).tolist())

    x = tuple(np.append(wrapped[order], 180.0).tolist())
    lift = np.nan_to_num(hs.wheel_lift_deg, nan=90.0)
    same = bool(np.allclose(lift, hs.tip_deg))
    here = (heading_deg + 180.0) % 360.0 - 180.0
    return HeadingChartData(x, closed(hs.tip_deg), None if same else closed(lift), closed(hs.hold_deg),
                            180.0 if here == -180.0 else here, float(abs(slope_deg)))


class _Marker(NamedTuple):
    """What `slope_overlay` needs to place a vertical marker (it reads these two names)."""

    x_range: tuple[float, float]
    slope_deg: float


class HeadingChart(Widget):
    """`show(data)` hands it new data; the heading marker moves without a plotext build."""

    COMPONENT_CLASSES = {"heading-chart--tip", "heading-chart--hold", "heading-chart--lift",
                         "heading-chart--slope", "heading-chart--here", "heading-chart--axes"}

    def __init__(self, *, ascii_only: bool = False, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self.ascii_only = ascii_only
        self.data: Optional[HeadingChartData] = None
        self._layer_key = None
        self._layer: Optional[Layer] = None
        self.builds = 0  # how many times plotext ran (tests check that the heading costs none)

    def show(self, data: HeadingChartData) -> None:
        if data != self.data:
            self.data = data
            self.refresh()

    def _styles(self) -> dict[str, Style]:
        return {name: self.get_component_rich_style(f"heading-chart--{name}", partial=True)
                for name in (*_TAGS, "axes")}

    def render(self) -> Text:
        width, height = self.size
        if self.data is None:
            return Text("Working out every heading...")
        if width < MIN_WIDTH or height < MIN_HEIGHT:
            return Text("chart needs more room", no_wrap=True, overflow="crop")
        styles = self._styles()
        data = self.data
        key = (data._replace(setup_heading_deg=0.0), width, height, self.ascii_only, tuple(styles.items()))
        if key != self._layer_key:
            self.builds += 1
            self._layer = build_layer(data, width, height - 1, self.ascii_only, styles)
            self._layer_key = key
        marker = _Marker(data.x_range, data.setup_heading_deg)
        lines = slope_overlay(self._layer, marker, self.ascii_only, styles["here"])
        out = Text("\n", no_wrap=True, overflow="crop", end="").join(lines)
        out.append("\n")
        out.append_text(legend(data, width, self.ascii_only, styles))
        return out


def _plotext(data: HeadingChartData, width: int, height: int, ascii_only: bool) -> str:
    import plotext as plt  # lazily: slow to import, and only this screen needs it

    plt.clear_data()
    plt.limit_size(False, False)
    plt.plotsize(width, height)
    plt.theme("clear")
    plt.xlim(-180.0, 180.0)
    plt.ylim(0.0, 92.0)
    step = nice_step(90.0, max(2, min(6, (height - 4) // 2)))
    ticks = [i * step for i in range(int(90.0 // step) + 1)]
    plt.yticks(ticks, [f"{t:g}" for t in ticks])
    xt = [-180, -90, 0, 90, 180]
    plt.xticks(xt, ["-180", "-90 R up", "0 up", "+90 L up", "180"] if width >= 60 else [str(t) for t in xt])
    xs = list(data.heading_deg)
    dots = "braille" if not ascii_only else None
    plt.hline(data.slope_deg, _TAGS["slope"][0])
    if data.lift_deg is not None:
        plt.plot(xs, list(data.lift_deg), marker=dots or "l", color=_TAGS["lift"][0])
    plt.plot(xs, list(data.tip_deg), marker=dots or "t", color=_TAGS["tip"][0])
    plt.plot(xs, list(data.hold_deg), marker=dots or "h", color=_TAGS["hold"][0])
    plt.xlabel("heading [deg], 0 straight up")
    plt.ylabel("steepest face [deg]")
    return plt.build().rstrip("\n")


def build_layer(data: HeadingChartData, width: int, height: int, ascii_only: bool,
                styles: dict[str, Style]) -> Layer:
    """plotext's chart without the heading marker, restyled with the theme, folded for ASCII."""
    body = _plotext(data, width, height, ascii_only)
    lines = restyle(Text.from_ansi(body, no_wrap=True, end=""), styles, _NAME_OF_NUMBER).split(
        "\n", allow_blank=True)
    frame = find_frame([line.plain for line in lines])
    if ascii_only:
        for line in lines:
            line.plain = line.plain.translate(ASCII_FOLD).encode("latin-1", "replace").decode("latin-1")
    return Layer(list(lines), frame)


def legend(data: HeadingChartData, width: int, ascii_only: bool, styles: dict[str, Style]) -> Text:
    """One line naming the curves and the markers, shorter until it fits."""
    deg = " deg" if ascii_only else "\u00b0"
    line = "-" if ascii_only else "\u2501"
    for short in (False, True):
        out = Text(no_wrap=True, overflow="crop", end="")
        out.append(f"{'t' if ascii_only else line} tip ", styles["tip"])
        if data.lift_deg is not None:
            out.append(f"{'l' if ascii_only else line} {'lift' if short else 'wheel lift'} ", styles["lift"])
        elif not short:
            out.append("(wheel lift = tip) ", styles["axes"])
        out.append(f"{'h' if ascii_only else line} hold ", styles["hold"])
        out.append(f"{'|' if ascii_only else chr(0x2502)} {'' if short else 'heading '}"
                   f"{data.setup_heading_deg:+g}{deg} ", styles["here"])
        out.append(f"{'-' if ascii_only else chr(0x2500)} {'' if short else 'slope '}{data.slope_deg:g}{deg}",
                   styles["slope"])
        if out.cell_len <= width:
            break
    return out

