"""A small top view of the rig: the four wheel loads at the corners, the light wheel in words.

Latin-1 only, so it reads the same on a plain console. Nose up the page; the uphill direction is
named in words under the drawing.
"""

from __future__ import annotations

import math
from typing import NamedTuple, Optional

from rich.text import Text
from textual.widget import Widget

from ..units import Units

BOX_INNER = 9  # columns between the wheel marks


class WheelViewData(NamedTuple):
    """What the top view shows (hashable: it repaints only when this changes)."""

    loads_g: tuple[float, float, float, float]  # FL, FR, RL, RR; NaN when tipped
    light: str  # the light-wheel line
    uphill: str  # where uphill is, seen from the driver's seat
    units: Units


def uphill_words(slope_deg: float, heading_deg: float) -> str:
    """Where the uphill side is relative to the rig, in words."""
    if slope_deg == 0:
        return "Level: no uphill side"
    psi = math.radians(heading_deg if slope_deg > 0 else heading_deg + 180.0)
    ahead, left = math.cos(psi), math.sin(psi)
    fore = "ahead" if ahead > 0.38 else "behind" if ahead < -0.38 else ""
    side = "left" if left > 0.38 else "right" if left < -0.38 else ""
    where = " and to the ".join(p for p in (fore, side) if p) if fore and side else (fore or f"to the {side}")
    return f"Uphill: {where}"


class WheelView(Widget):
    """`show(data)`; draws on its own, about 26 x 8 cells."""

    COMPONENT_CLASSES = {"wheel-view--rig", "wheel-view--light", "wheel-view--load"}

    def __init__(self, *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self.data: Optional[WheelViewData] = None

    def show(self, data: WheelViewData) -> None:
        if data != self.data:
            self.data = data
            self.refresh()

    def render(self) -> Text:
        if self.data is None:
            return Text("")
        d = self.data
        rig = self.get_component_rich_style("wheel-view--rig", partial=True)
        load = self.get_component_rich_style("wheel-view--load", partial=True)
        light = self.get_component_rich_style("wheel-view--light", partial=True)
        values = [v for v in d.loads_g if not math.isnan(v)]
        low = min(values) if len(values) == 4 else None

        def cell(v: float) -> tuple[str, object]:
            if math.isnan(v):
                return "-", load
            text = d.units.force(v)
            return text, light if low is not None and v - low < 0.5 else load

        fl, fr, rl, rr = (cell(v) for v in d.loads_g)
        out = Text(no_wrap=True, overflow="crop", end="")
        out.append(f"{'nose':^25}\n", rig)
        out.append(f"{fl[0]:>7} ", fl[1])
        out.append("o" + "-" * BOX_INNER + "o", rig)
        out.append(f" {fr[0]}\n", fr[1])
        for mid in ("|    ^    |", "|  (top)  |", "|         |"):
            out.append(f"{'':>8}{mid}\n", rig)
        out.append(f"{rl[0]:>7} ", rl[1])
        out.append("o" + "-" * BOX_INNER + "o", rig)
        out.append(f" {rr[0]}\n", rr[1])
        out.append(f"{d.light}\n", light)
        out.append(d.uphill, rig)
        return out
