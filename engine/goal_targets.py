"""Goal-seek targets: a named angle of `analyse` kept ``>=`` or ``<=`` a value, and its margin.

The names are those of `Analysis.angles_deg`; see `goal_seek` for how a lever is searched.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .analysis import Analysis

TARGET_ANGLES = ("handover", "handover_weight_only", "balance", "max_grade", "front_lift")
OPS = (">=", "<=")


class LeverError(ValueError):
    """A lever or target that cannot be used on this setup; `str()` is one line."""


@dataclass(frozen=True)
class Target:
    """A named angle kept ``>=`` or ``<=`` a value.

    Parameters
    ----------
    angle : str
        One of `TARGET_ANGLES`.
    op : {">=", "<="}
    value_deg : float
        [deg]
    """

    angle: str
    op: str
    value_deg: float

    def __post_init__(self):
        if self.angle not in TARGET_ANGLES:
            raise LeverError(f"target angle {self.angle!r}: must be one of {', '.join(TARGET_ANGLES)}")
        if self.op not in OPS:
            raise LeverError(f"target {self.angle}{self.op}: the comparison must be >= or <=")
        if not math.isfinite(self.value_deg):
            raise LeverError(f"target {self.angle}{self.op}{self.value_deg}: the angle must be a finite number")

    def margin_deg(self, angle_deg: float) -> float:
        """How far `angle_deg` is inside the target (>= 0: met). [deg] NaN in, -inf out."""
        if math.isnan(angle_deg):
            return -math.inf
        return angle_deg - self.value_deg if self.op == ">=" else self.value_deg - angle_deg


def angle_value_deg(analysis: Analysis, name: str) -> float:
    """A named angle as a number for comparison. [deg]

    ``handover`` and ``handover_weight_only`` are +inf when an axle is overdriven but never lets go
    first below 90° (the handover lies beyond the climbs), NaN when no axle is overdriven (the
    angle does not exist). Other missing angles are NaN.
    """
    v = analysis.angles_deg.get(name)
    if v is not None:
        return float(v)
    if name.startswith("handover") and analysis.overdrive.overdriven_axle is not None:
        return math.inf
    return math.nan


__all__ = ["TARGET_ANGLES", "OPS", "LeverError", "Target", "angle_value_deg"]
