"""Axle loads of a two-axle rig on a uniform slope, and the angles where they change character.

Planar, quasi-static, rigid body; both contacts on one plane. Slope > 0 is nose up.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (loads on axles,
   grades).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (vehicle
   on an inclined road, tilting angle).
.. [3] NHTSA, static stability factor ``SSF = T/(2h)``, 68 FR 59250, 2003.
.. [4] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (static
   friction on an incline: ``μ_s = tan α``).
"""

from __future__ import annotations

import math

import numpy as np


def axle_loads_g(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, slope_deg, accel_g=0.0):
    """Front and rear normal force on a uniform slope.

    Parameters
    ----------
    weight_g : float
        Rig weight. [gf]
    wheelbase_mm : float
        Front to rear axle. [mm]
    cg_from_rear_mm : float
        CG distance ahead of the rear axle, ``b``. [mm]
    cg_height_mm : float
        CG height above the ground plane, ``h``. [mm]
    slope_deg : array_like
        Slope, nose up positive. [deg]
    accel_g : float or array_like, default 0
        Acceleration along the slope (throttle punch). [g]

    Returns
    -------
    front_g, rear_g : ndarray
        Normal forces. [gf] Values past a lift angle are the statics values (negative: that axle
        would have to be pulled down); the caller decides what a lift means.

    Notes
    -----
    Moments about the rear contact [1]_, [2]_::

        N_f = W (b cos θ − h sin θ − h a_x) / L
        N_r = W cos θ − N_f
    """
    th = np.radians(np.asarray(slope_deg, dtype=float))
    cos_t, sin_t = np.cos(th), np.sin(th)
    front = weight_g * (cg_from_rear_mm * cos_t - cg_height_mm * (sin_t + accel_g)) / wheelbase_mm
    return front, weight_g * cos_t - front


def solve_cos_sin(p, q, c):
    """All angles in (−90°, 90°) where ``p cos θ + q sin θ + c = 0``.

    Parameters
    ----------
    p, q, c : float
        Coefficients (any consistent unit).

    Returns
    -------
    list of float
        Roots, ascending. [deg] Empty when there is none in the open interval or ``p = q = 0``.

    Notes
    -----
    ``p cos θ + q sin θ = R cos(θ − ψ)`` with ``R = hypot(p, q)``, ``ψ = atan2(q, p)``; so
    ``θ = ψ ± acos(−c/R)``. Exact: no small-angle form, no iteration.
    """
    r = float(np.hypot(p, q))
    if r == 0.0 or abs(c) > r:
        return []
    psi = np.arctan2(q, p)
    d = np.arccos(np.clip(-c / r, -1.0, 1.0))
    out = []
    for t in (psi - d, psi + d):
        t = (t + np.pi) % (2 * np.pi) - np.pi
        deg = float(np.degrees(t))
        if -90.0 < deg < 90.0 and all(abs(deg - o) > 1e-12 for o in out):
            out.append(deg)
    return sorted(out)


def crossing_deg(p, q, c, falling):
    """Where ``p cos θ + q sin θ + c`` changes sign in [−90°, 90°], in the given direction.

    Parameters
    ----------
    p, q, c : float
        Coefficients. [any one unit]
    falling : bool
        True for the zero where the function goes from positive to negative as θ grows.

    Returns
    -------
    float
        [deg] NaN when there is no such zero strictly between −90° and 90°.

    Notes
    -----
    ``p cos θ + q sin θ = R cos(θ − φ)`` with ``R = hypot(p, q)``, ``φ = atan2(q, p)``; its slope
    ``−R sin(θ − φ)`` is negative on the falling zero, so ``θ = φ + acos(−c/R)`` there and
    ``θ = φ − acos(−c/R)`` on the rising one. Choosing the branch by direction (not by nearness
    to the unaccelerated root) keeps a hard brake or punch beyond 1 g on the right side.
    """
    r = math.hypot(p, q)
    if r == 0 or abs(c) > r:
        return float("nan")
    phi = math.atan2(q, p)
    turn = math.acos(max(-1.0, min(1.0, -c / r)))
    theta = math.degrees(phi + turn if falling else phi - turn)
    theta = (theta + 180.0) % 360.0 - 180.0
    return theta if -90.0 < theta < 90.0 else float("nan")


def balance_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, accel_g=0.0):
    """Slope where front and rear normal forces are equal (front heavier below it).

    Returns
    -------
    float
        [deg] Negative when the rig is rear-biased; NaN when none lies in [−90°, 90°].

    Notes
    -----
    ``tan θ = (b − L/2)/h`` for ``a_x = 0`` [1]_; in general the falling zero of
    ``(2b − L) cos θ − 2h sin θ − 2h a_x``.
    """
    b, h, half = cg_from_rear_mm, cg_height_mm, wheelbase_mm / 2.0
    if accel_g == 0:
        return float(np.degrees(np.arctan2(b - half, h)))
    return crossing_deg(2 * (b - half), -2 * h, -2 * h * accel_g, falling=True)


def front_lift_angle_deg(cg_from_rear_mm, cg_height_mm, accel_g=0.0):
    """Climbing slope where the front normal force reaches zero (the rig tips over backwards).

    Returns
    -------
    float
        [deg] NaN when none lies in [−90°, 90°].

    Notes
    -----
    ``tan θ = b/h`` for ``a_x = 0`` [1]_, [2]_; in general the falling zero of
    ``b cos θ − h sin θ − h a_x`` (the front unloads as the slope grows).
    """
    b, h = cg_from_rear_mm, cg_height_mm
    if accel_g == 0:
        return float(np.degrees(np.arctan2(b, h)))
    return crossing_deg(b, -h, -h * accel_g, falling=True)


def rear_lift_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, accel_g=0.0):
    """Descending slope where the rear normal force reaches zero (the rig tips over its nose).

    Returns
    -------
    float
        [deg], usually negative. NaN when none lies in [−90°, 90°].

    Notes
    -----
    ``tan θ = −a/h`` with ``a = L − b`` for ``a_x = 0`` [1]_; in general the rising zero of
    ``a cos θ + h sin θ + h a_x`` (the rear unloads as the slope falls).
    """
    a, h = wheelbase_mm - cg_from_rear_mm, cg_height_mm
    if accel_g == 0:
        return float(np.degrees(np.arctan2(-a, h)))
    return crossing_deg(a, h, h * accel_g, falling=False)


def sidehill_roll_angle_deg(track_mm, cg_height_mm):
    """Side slope where the uphill wheels unload (static rollover threshold).

    Notes
    -----
    ``tan φ = (T/2)/h``, the static stability factor ``SSF = T/(2h)`` [3]_.
    """
    return float(np.degrees(np.arctan2(track_mm / 2.0, cg_height_mm)))


def sidehill_slide_angle_deg(mu_static_front, mu_static_rear=None):
    """Side slope where the first axle starts to slide sideways, driveline unwound.

    Parameters
    ----------
    mu_static_front, mu_static_rear : float
        Static friction of each axle. [-] The rear defaults to the front's.

    Returns
    -------
    float
        ``atan(min(μ_s,f, μ_s,r))``. [deg]

    Notes
    -----
    Across a side slope φ each axle must hold its share of the weight's downhill component; with
    no yaw moment that share is in proportion to its own load, ``F_y,i = N_i tan φ``, so axle i
    slides once ``tan φ > μ_s,i`` whatever its load: the axle with the lower mu goes first, not a
    load-weighted mean of the two (block on an incline, ``μ_s = tan α`` [4]_). An axle already
    scrubbing under driveline wind-up has no sideways grip to spare and goes earlier.
    """
    rear = mu_static_front if mu_static_rear is None else mu_static_rear
    return float(np.degrees(np.arctan(min(mu_static_front, rear))))


def static_stability_factor(track_mm, cg_height_mm):
    """NHTSA static stability factor ``T/(2h)`` [3]_. [-]"""
    return track_mm / (2.0 * cg_height_mm)
