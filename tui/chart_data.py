"""What the load chart shows, as plain data: no Textual, no plotext, no numpy of its own.

Kept apart from the chart widget so a process that only works out the first screen (the start-up
child in `prefetch.py`) can make it without importing the terminal framework.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, NamedTuple, Optional

from .units import Units

if TYPE_CHECKING:
    from slopetune.engine import Analysis


class Curves(NamedTuple):
    """Front and rear normal force over the slopes where both axles touch. [display units]"""

    slope_deg: tuple[float, ...]
    front: tuple[float, ...]
    rear: tuple[float, ...]


class ChartData(NamedTuple):
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
    force = lambda a: tuple((a[touching] / scale).round(3).tolist())  # noqa: E731
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
    named = {"B": a.get("balance"), "H": a.get("handover"), "L": a.get("front_lift"), "N": a.get("rear_lift"),
             "M": a.get("max_grade") if (a.get("max_grade") or 90.0) < 90.0 else None}  # 90: never ends
    # the marks are the angles of a straight climb: on another heading the curves are not theirs
    straight = float(analysis.setup.terrain.heading_deg) % 360.0 == 0.0
    marks = tuple((letter, round(v, 2)) for letter, v in named.items()
                  if straight and v is not None and lo <= v <= hi)
    return ChartData(current, base, float(analysis.setup.terrain.slope_deg), marks, units.unit("mass"),
                     (lo, hi), float(top))
