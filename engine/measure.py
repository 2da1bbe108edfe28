"""Turn scale readings and tilt-board angles into the numbers a setup file needs.

References
----------
.. [1] ISO 10392:2011, *Road vehicles — Determination of centre of gravity* (axle-lift method).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (CG height
   by lifting one axle).
.. [3] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (static friction
   on an incline at the point of sliding: ``μ_s = tan α``).
"""

from __future__ import annotations

import numpy as np


def front_bias_pct(front_reading_g, total_g):
    """Share of the weight on the front axle, rig level.

    Parameters
    ----------
    front_reading_g : array_like
        Scale reading under the front axle. [g]
    total_g : array_like
        All-up weight. [g]

    Returns
    -------
    ndarray or float
        ``100 W_f / W``. [%]
    """
    return 100.0 * np.asarray(front_reading_g, dtype=float) / np.asarray(total_g, dtype=float)


def cg_height_from_lift_mm(weight_g, wheelbase_mm, axle_height_mm, level_front_g, lift_mm, lifted_front_g):
    """CG height from front-axle scale readings with the rear raised (axle-lift method).

    Parameters
    ----------
    weight_g : float
        All-up weight. [g]
    wheelbase_mm : float
        [mm]
    axle_height_mm : float
        Axle height above the ground: the loaded tyre radius. [mm]
    level_front_g : float
        Front reading with the rig level, ``W_f0``. [g]
    lift_mm : array_like
        Height the rear axle was raised, one or more lifts, ``H``. [mm]
    lifted_front_g : array_like
        Front reading at each lift, ``W_f1``. [g]

    Returns
    -------
    float
        CG height above flat ground. [mm]

    Notes
    -----
    ``θ = asin(H/L)``, ``h = r + L (W_f1 − W_f0)/(W tan θ)`` [1]_, [2]_ (exact; no small-angle
    form). With several lifts the offset ``h − r`` is the least-squares slope through the origin
    of ``ΔW_f`` against ``W tan θ / L``.
    """
    lift = np.atleast_1d(np.asarray(lift_mm, dtype=float))
    delta = np.atleast_1d(np.asarray(lifted_front_g, dtype=float)) - float(level_front_g)
    if lift.shape != delta.shape:
        raise ValueError("one front reading is needed for every lift height")
    if np.any(lift <= 0) or np.any(lift >= wheelbase_mm):
        raise ValueError("each lift must be above 0 and below the wheelbase")
    x = weight_g * np.tan(np.arcsin(lift / wheelbase_mm)) / wheelbase_mm
    return float(axle_height_mm + np.dot(x, delta) / np.dot(x, x))


def mu_from_slide_angle(slide_angle_deg):
    """Static friction from the tilt angle at which a blocked-wheel rig starts to slide.

    Parameters
    ----------
    slide_angle_deg : array_like
        Board angle at the first slide. [deg]

    Returns
    -------
    ndarray or float
        ``μ_s = tan α`` [3]_. [-]
    """
    return np.tan(np.radians(np.asarray(slide_angle_deg, dtype=float)))
