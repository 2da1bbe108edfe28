"""Front/rear speed mismatch from gear stages and tyre sizes, in the ways people quote it.

References
----------
.. [1] R. G. Budynas, J. K. Nisbett, *Shigley's Mechanical Engineering Design*, ch. 13 (gear
   trains: the train value is the product of driver/driven tooth ratios).
.. [2] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 6 (low-speed turning,
   bicycle model: the front wheel runs on a path ``1/cos δ`` longer than the rear's).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional, Sequence

# Below this the mismatch is rounding noise from gear and tyre ratios, not an overdrive.
SAME_SPEED_TOL = 1e-9


def stage_reduction(stages: Sequence[Sequence[int]]) -> float:
    """Overall reduction of gear stages in series.

    Parameters
    ----------
    stages : sequence of (driver, driven)
        Tooth counts per stage. [teeth]

    Returns
    -------
    float
        ``R = Π driven/driver``: input turns per output turn. [-] 1 for no stages.

    Notes
    -----
    Train value of a simple or compound gear train [1]_.
    """
    r = 1.0
    for driver, driven in stages:
        r *= driven / driver
    return r


def gear_overdrive_pct(front_stages, rear_stages) -> float:
    """Gear overdrive ``p``: the front axle turns ``1 + p/100`` times per rear-axle turn. [%]

    ``1 + p/100 = R_rear / R_front`` with both trains fed by one input.
    """
    return (stage_reduction(rear_stages) / stage_reduction(front_stages) - 1.0) * 100.0


@dataclass(frozen=True)
class OverdriveFigures:
    """The effective front/rear ground-speed ratio, labelled every usual way."""

    gear_pct: float  # axle speed ratio − 1 [%]
    effective_pct: float  # ground speed ratio − 1, tyres included: (k − 1) [%]
    pct_of_front: float  # (k − 1)/k [%]
    pct_difference: float  # |k − 1| / ((k + 1)/2) [%]
    overdriven_axle: Optional[str]  # "front", "rear" or None
    turn_match_steer_deg: Optional[float]  # steer angle whose path ratio equals k [deg]

    @property
    def ratio(self) -> float:
        """``k``: front ground speed per unit rear ground speed. [-]"""
        return 1.0 + self.effective_pct / 100.0


def overdrive_figures(gear_pct: float, tire_dia_front_mm: float, tire_dia_rear_mm: float) -> OverdriveFigures:
    """Effective overdrive from the gear overdrive and tyre outer diameters.

    Parameters
    ----------
    gear_pct : float
        Gear overdrive ``p``. [%]
    tire_dia_front_mm, tire_dia_rear_mm : float
        Tyre outer diameters. [mm]

    Notes
    -----
    ``k = (1 + p/100) D_f/D_r``. The setup matches the front wheel's longer path in a low-speed
    turn (bicycle model [2]_) at ``δ = acos(1/k)``, defined for ``k >= 1``.
    """
    k = (1.0 + gear_pct / 100.0) * tire_dia_front_mm / tire_dia_rear_mm
    e = k - 1.0
    if abs(e) <= SAME_SPEED_TOL:
        axle, steer = None, None
    elif e > 0:
        axle, steer = "front", math.degrees(math.acos(1.0 / k))
    else:
        axle, steer = "rear", None
    return OverdriveFigures(
        gear_pct=gear_pct,
        effective_pct=e * 100.0,
        pct_of_front=e / k * 100.0,
        pct_difference=abs(e) / ((k + 1.0) / 2.0) * 100.0,
        overdriven_axle=axle,
        turn_match_steer_deg=steer,
    )


def rolling_dia_under_load_mm(level_dia_mm, loss_mm_per_100g, normal_g, level_normal_g, free_dia_mm):
    """Roll-out diameter of a tyre at another axle load (MODEL section 4).

    Parameters
    ----------
    level_dia_mm : float
        Roll-out diameter at the rig's level static load on that axle. [mm]
    loss_mm_per_100g : float
        Diameter lost per 100 g more load on that axle. [mm]
    normal_g, level_normal_g : array_like
        Axle load now and on level ground. [gf]
    free_dia_mm : float
        The tyre's free (outer) diameter, the clamp above. [mm]

    Returns
    -------
    ndarray
        ``D(N) = D − d (N − N_level)/100`` [mm], with the load change held within ±N_level (a
        roll-out measured at about the level load says little beyond twice it) and the diameter
        at most the free diameter. The effective rolling radius lies between the loaded and the
        free radius, so the free diameter bounds it (Pacejka 2012, sec. 3.2; Wong, ch. 1).
    """
    import numpy as np  # here, not at the top: loading a setup (which checks gear stages) stays numpy-free

    change = np.clip(np.asarray(normal_g, float) - level_normal_g, -level_normal_g, level_normal_g)
    return np.minimum(level_dia_mm - loss_mm_per_100g * change / 100.0, free_dia_mm)


def loaded_speed_ratio(gear_pct, front_dia_mm, rear_dia_mm):
    """``K = (1 + p/100) D_f(N_f)/D_r(N_r)``: front over rear tread speed. [-] (MODEL section 4)"""
    import numpy as np

    return (1.0 + gear_pct / 100.0) * np.asarray(front_dia_mm, float) / np.asarray(rear_dia_mm, float)
