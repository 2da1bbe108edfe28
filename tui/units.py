"""Display units for the tuner: the file is always metric, the screen may show imperial.

Conversion factors are exact by definition: 1 in = 25.4 mm and 1 oz (avoirdupois) = 28.349523125 g
(International Yard and Pound Agreement, 1959).
"""

from __future__ import annotations

import math
from typing import NamedTuple

MM_PER_IN = 25.4
G_PER_OZ = 28.349523125

# quantity -> (metric unit, imperial unit, metric per imperial unit, decimals metric, decimals imperial)
_QUANTITIES = {
    "mass": ("g", "oz", G_PER_OZ, 0, 2),
    "length": ("mm", "in", MM_PER_IN, 0, 2),
    "pct": ("%", "%", 1.0, 1, 1),
    "deg": ("deg", "deg", 1.0, 1, 1),
    "heading": ("deg", "deg", 1.0, 0, 0),
    "mu": ("", "", 1.0, 2, 2),
    "rr": ("", "", 1.0, 3, 3),
    "teeth": ("t", "t", 1.0, 0, 0),
    "accel": ("g", "g", 1.0, 2, 2),
    "stiff": ("", "", 1.0, 1, 1),  # slip stiffness per unit load
    "loss": ("mm", "in", MM_PER_IN, 2, 3),  # roll-out diameter lost per 100 g of axle load
}


class Units(NamedTuple):
    """How values are shown: `imperial` for oz and inches, `ascii_only` for 'deg' instead of the sign."""

    imperial: bool = False
    ascii_only: bool = False

    @property
    def name(self) -> str:
        return "imperial" if self.imperial else "metric"

    @property
    def deg(self) -> str:
        return " deg" if self.ascii_only else "\u00b0"

    def unit(self, quantity: str) -> str:
        if quantity not in _QUANTITIES:
            return ""
        metric, imperial, _, _, _ = _QUANTITIES[quantity]
        unit = imperial if self.imperial else metric
        if unit == "deg" and not self.ascii_only:
            return "\u00b0"
        return unit

    def factor(self, quantity: str) -> float:
        """Metric value per displayed unit (1 for quantities that do not change)."""
        if not self.imperial or quantity not in _QUANTITIES:
            return 1.0
        return _QUANTITIES[quantity][2]

    def to_display(self, quantity: str, metric_value: float) -> float:
        return metric_value / self.factor(quantity)

    def to_metric(self, quantity: str, shown_value: float) -> float:
        return shown_value * self.factor(quantity)

    def decimals(self, quantity: str) -> int:
        if quantity not in _QUANTITIES:
            return 2
        return _QUANTITIES[quantity][4 if self.imperial else 3]

    def number(self, quantity: str, metric_value: float) -> str:
        """The value as shown, in display units, with no unit label."""
        shown = self.to_display(quantity, metric_value)
        if self.factor(quantity) != 1.0:  # converted: the metric digits mean nothing here
            return fmt_number(round(shown, self.decimals(quantity)), self.decimals(quantity))
        return fmt_number(shown, self.decimals(quantity))

    def with_unit(self, quantity: str, metric_value: float) -> str:
        unit = self.unit(quantity)
        text = self.number(quantity, metric_value)
        if not unit:
            return text
        return f"{text}{unit}" if unit == "\u00b0" else f"{text} {unit}"

    def angle(self, deg: float, signed: bool = False) -> str:
        """An angle in degrees, one decimal, with the sign when asked."""
        deg = round(deg, 1) + 0.0  # + 0.0: a change that rounds to nothing never reads -0.0
        text = f"{deg:+.1f}" if signed else f"{deg:.1f}"
        return text + self.deg

    def slope(self, deg: float) -> str:
        """A slope as people say it: 30 deg, 30.5 deg (one decimal at most)."""
        return f"{round(deg, 1) + 0.0:g}{self.deg}"

    def force(self, grams: float) -> str:
        """A force in grams-force (whole grams), or ounces-force in imperial (one decimal)."""
        return f"{self.to_display('mass', grams):.{1 if self.imperial else 0}f} {self.unit('mass')}"


def fmt_number(value: float, decimals: int) -> str:
    """`value` with `decimals` places, or up to 4 when that would hide a typed digit."""
    if not math.isfinite(value):
        return str(value)
    text = f"{value:.{decimals}f}"
    if abs(float(text) - value) > 1e-9 * max(1.0, abs(value)):
        text = f"{value:.4f}".rstrip("0").rstrip(".")
    if text in ("-0", "-0.0", "-0.00", "-0.000"):
        text = text[1:]
    return text


def plain_scrollbars() -> None:
    """Scrollbars drawn with spaces and colour only: Textual's eighth-block thumbs exist in no Linux
    console font, so an ASCII display would show them as junk (TUI notes: console fonts)."""
    from textual.scrollbar import ScrollBarRender

    ScrollBarRender.VERTICAL_BARS = [" "] * len(ScrollBarRender.VERTICAL_BARS)
    ScrollBarRender.HORIZONTAL_BARS = [" "] * len(ScrollBarRender.HORIZONTAL_BARS)
