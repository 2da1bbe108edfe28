"""Turn scale readings and tilt-board angles into the numbers a setup file needs.

References
----------
.. [1] ISO 10392:2011, *Road vehicles — Determination of centre of gravity* (axle-lift method).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (CG height
   by lifting one axle).
.. [3] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (static friction
   on an incline at the point of sliding: ``μ_s = tan α``).
.. [4] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a grade).

Plausibility checks (`bias_checks`, `lift_checks`, `slide_angle_checks`) say which reading looks
wrong before a value reaches a setup: a refusal where the reading cannot be right, a warning where
it is possible but more likely a slip of the hand. During an axle lift the wheels must roll freely
(driveline disengaged) and the suspension be locked [1]_: a wound-up driveline puts a horizontal
couple on the scales and biases the height; the axle height (loaded tyre radius) passes one for one
into it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

import numpy as np

from .setup_model import FIELDS
from .slope_statics import axle_loads_g

# Decimals a measured value is stored and shown with: about what the readings resolve (a kitchen
# scale to 1 g of a 2 kg rig is 0.05 %; a phone inclinometer to 0.5 deg moves mu by about 0.02).
DIGITS = {"rig.front_bias_pct": 1, "rig.cg_height_mm": 1, "grip.mu_static": 2,
          "grip.front_mu_static": 2, "grip.rear_mu_static": 2}

# The highest static friction a setup file takes (one place: the file's own rule).
MU_STATIC_MAX = FIELDS["grip.mu_static"].hi

# One axle on the board: which axle is blocked on it, and which way the rig's nose points.
AXLES = ("front", "rear")
FACINGS = ("up", "down")
# The setup key a slide angle gives: all four wheels on the board, or one axle alone.
# An axle load below this share of the weight is no load: at the exact tip angle rounding leaves
# ±1e-17 W on the lifting axle, which would read as a μ of 1e16 on one side of a mirror and as
# "off the board" on the other.
LOAD_FLOOR = 1e-9
MU_KEYS = {"both": "grip.mu_static", "front": "grip.front_mu_static", "rear": "grip.rear_mu_static"}


@dataclass(frozen=True)
class ReadingCheck:
    """One reading that looks wrong: which (`reading`, `index` of a lift), how bad, and why.

    `reading` is one of "total", "front", "level", "lift", "axle", "wheelbase", "angle", "rig" (the
    caller names it in its own words: an option on the command line, a field on the screen);
    `index` is the lift's position as given (None for the others). `why` is one line without the
    reading's name.
    """

    reading: str
    index: Optional[int]
    refuse: bool
    why: str


def _g(x: float) -> str:
    return f"{x:.6g}"


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


def _check_facing(facing: str) -> None:
    if facing not in FACINGS:
        raise ValueError(f"facing must be one of {', '.join(FACINGS)}, not {facing!r}")


def _one_axle_case(axle: str, facing: str) -> None:
    if axle not in AXLES:
        raise ValueError(f"axle must be one of {', '.join(AXLES)}, not {axle!r}")
    _check_facing(facing)


def _is_rig(wheelbase, b, h):
    """Where ``L``, ``b``, ``h`` describe a rig: ``L`` and ``h`` above 0, ``b`` inside (0, L)."""
    return (wheelbase > 0) & (h > 0) & (b > 0) & (b < wheelbase)


def mu_one_axle_from_slide_angle(slide_angle_deg, wheelbase_mm, cg_from_rear_mm, cg_height_mm, axle, facing):
    """Static friction of ONE axle from the tilt angle at which the rig slides, the other axle
    standing on a low-friction sheet.

    Parameters
    ----------
    slide_angle_deg : array_like
        Board angle at the first slide, ``α``. [deg]
    wheelbase_mm : array_like
        ``L``. [mm]
    cg_from_rear_mm : array_like
        CG ahead of the rear axle, ``b``, of the rig as it stood on the board (ballast included). [mm]
    cg_height_mm : array_like
        CG height above the board, tyres included, ``h``. [mm]
    axle : {"front", "rear"}
        The axle whose blocked wheels stand on the board's surface.
    facing : {"up", "down"}
        The rig's nose up the board (it stands as on a climb, slope ``+α``) or down it (``−α``).

    Returns
    -------
    ndarray or float
        ``μ_s`` of that axle. [-] NaN where the case cannot happen: an angle outside (0°, 90°), a
        geometry that is no rig (``L`` or ``h`` not above 0, ``b`` outside (0, L)), the measured
        axle off the board (no load: it cannot hold anything), or the other axle off the board
        (the rig tips over before it can slide). `slide_angle_checks` says which.

    Notes
    -----
    The other axle's friction is taken as **zero**: a smooth plastic sheet on glass under it is far
    below a tyre on the board, and what it does carry would make this μ read high. Along the board
    the blocked axle then holds the whole ``W sin α``. Ground forces act in the board's plane, so
    taking moments about a contact gives the normal forces whoever carries the friction: the
    grade-load equation [4]_ (`slope_statics.axle_loads_g`) at ``θ = +α`` facing up, ``−α`` down::

        N_f = W (b cos θ − h sin θ)/L,   N_r = W cos θ − N_f
        μ_axle = W sin α / N_axle

    The weight cancels. In closed form, with ``d`` the CG's distance from the *other* axle (``b``
    for the front, ``L − b`` for the rear) and ``s = +1`` when the measured axle is the uphill one
    (front facing up, rear facing down), ``−1`` when it is downhill::

        μ = L tan α / (d − s h tan α)

    The two axles' loads add up to ``W cos α``, so at one angle and facing
    ``1/μ_front + 1/μ_rear = 1/tan α``: both axles blocked give back ``μ_s = tan α`` [3]_.
    """
    _one_axle_case(axle, facing)
    alpha = np.asarray(slide_angle_deg, dtype=float)
    wheelbase = np.asarray(wheelbase_mm, dtype=float)
    b = np.asarray(cg_from_rear_mm, dtype=float)
    h = np.asarray(cg_height_mm, dtype=float)
    slope = alpha if facing == "up" else -alpha
    # per unit weight: W cancels from W sin α / N
    front, rear = axle_loads_g(1.0, wheelbase, b, h, slope)
    n_axle, n_other = (front, rear) if axle == "front" else (rear, front)
    with np.errstate(divide="ignore", invalid="ignore"):
        mu = np.sin(np.radians(alpha)) / n_axle
        ok = ((alpha > 0) & (alpha < 90) & _is_rig(wheelbase, b, h)
              & (n_axle > LOAD_FLOOR) & (n_other > LOAD_FLOOR))
    out = np.where(ok, mu, np.nan)
    return float(out) if out.ndim == 0 else out


def one_axle_top_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, axle, facing, mu_max=MU_STATIC_MAX):
    """The steepest slide angle that gives a one-axle mu a setup takes, and what sets it.

    Parameters
    ----------
    wheelbase_mm, cg_from_rear_mm, cg_height_mm : float
        ``L``, ``b``, ``h`` of the rig as it stood on the board. [mm]
    axle, facing : str
        As `mu_one_axle_from_slide_angle`.
    mu_max : float
        Highest mu allowed. [-]

    Returns
    -------
    top_deg : float
        [deg] Angles above 0 and up to it (``"mu"``), or below it (``"tip"``), are possible.
    limit : str
        ``"mu"``: the angle where that axle's mu reaches `mu_max`; ``"tip"``: the angle where the
        other axle lifts (the rig tips over the measured axle, so no slide is seen beyond it).

    Notes
    -----
    ``μ = L t/(d − s h t)`` (``t = tan α``; see `mu_one_axle_from_slide_angle`) rises with ``t``.
    Measured axle uphill (``s = +1``): ``μ = μ_max`` at ``t = μ_max d/(L + μ_max h)``, always below
    the angle ``t = d/h`` where that axle itself lifts; the other axle never lifts. Measured axle
    downhill (``s = −1``): the uphill axle lifts at ``t = (L − d)/h`` (the front- or rear-lift
    angle of the grade-load equation [4]_); ``μ`` stays below ``L/h`` whatever the angle, so it
    reaches ``μ_max`` first only where ``L > μ_max h``, at ``t = μ_max d/(L − μ_max h)``. Not
    ``atan(μ_max)``: with one axle blocked, the uphill one reaches a high mu at a gentle angle and
    the downhill one needs a steep board for a modest mu.
    """
    _one_axle_case(axle, facing)
    wheelbase, h = float(wheelbase_mm), float(cg_height_mm)
    d = float(cg_from_rear_mm) if axle == "front" else wheelbase - float(cg_from_rear_mm)
    uphill = (axle == "front") == (facing == "up")
    if uphill:
        return math.degrees(math.atan(mu_max * d / (wheelbase + mu_max * h))), "mu"
    tip = math.degrees(math.atan2(wheelbase - d, h))
    if wheelbase > mu_max * h:
        at_max = math.degrees(math.atan(mu_max * d / (wheelbase - mu_max * h)))
        if at_max < tip:
            return at_max, "mu"
    return tip, "tip"


def blocked_tip_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, facing):
    """Board angle past which a rig with ALL its wheels blocked tips over instead of sliding.

    Parameters
    ----------
    wheelbase_mm : array_like
        ``L``. [mm]
    cg_from_rear_mm : array_like
        CG ahead of the rear axle, ``b``, of the rig as it stood on the board (ballast included). [mm]
    cg_height_mm : array_like
        CG height above the board, tyres included, ``h``. [mm]
    facing : {"up", "down"}
        The rig's nose up the board (slope ``+α``) or down it (``−α``).

    Returns
    -------
    ndarray or float
        ``atan(b/h)`` facing up, ``atan((L − b)/h)`` facing down. [deg] NaN for a geometry that
        is no rig (``L`` or ``h`` not above 0, ``b`` outside (0, L)).

    Notes
    -----
    Ground forces act in the board's plane, so moments about the downhill contact give the
    uphill axle's load whatever the friction is and however the two axles share it: the
    grade-load equation [4]_ at ``θ = +α`` facing up, ``−α`` facing down::

        facing up:    N_f = W (b cos α − h sin α)/L
        facing down:  N_r = W ((L − b) cos α − h sin α)/L

    The uphill axle's load reaches zero at ``tan α = b/h`` facing up and ``tan α = (L − b)/h``
    facing down (Gillespie's front-lift and rear-lift angles). Steeper than that the weight's
    line of action passes behind the downhill contact and the rig pivots over that axle
    (backwards facing up, over its nose facing down) before the blocked wheels can slide: a
    slide seen there is not this rig's, the reading or the rig's ``b`` and ``h`` are wrong. It
    also bounds the method: all wheels blocked, a board measures ``μ = tan α`` [3]_ only up to
    ``b/h`` facing up and ``(L − b)/h`` facing down, so a front-heavy rig (``b > L/2``) reads
    grippy tyres best facing up.
    """
    _check_facing(facing)
    wheelbase = np.asarray(wheelbase_mm, dtype=float)
    b = np.asarray(cg_from_rear_mm, dtype=float)
    h = np.asarray(cg_height_mm, dtype=float)
    lever = b if facing == "up" else wheelbase - b
    with np.errstate(invalid="ignore"):
        ok = _is_rig(wheelbase, b, h)
        out = np.where(ok, np.degrees(np.arctan2(lever, h)), np.nan)
    return float(out) if out.ndim == 0 else out


def both_axles_top_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, facing=None, mu_max=MU_STATIC_MAX):
    """The steepest slide angle, all wheels blocked, that gives a mu a setup takes, and what sets it.

    Parameters
    ----------
    wheelbase_mm, cg_from_rear_mm, cg_height_mm : float
        ``L``, ``b``, ``h`` of the rig as it stood on the board. [mm]
    facing : {"up", "down"} or None
        Which way the rig's nose pointed; None when not known: then the steeper of the two tip
        angles (a slide past it is impossible whichever way the rig faced).
    mu_max : float
        Highest mu allowed. [-]

    Returns
    -------
    top_deg : float
        [deg] Angles above 0 and up to it are possible.
    limit : str
        ``"mu"``: ``atan(mu_max)`` (``μ = tan α`` [3]_); ``"tip"``: `blocked_tip_angle_deg`, lower.
    """
    top_mu = math.degrees(math.atan(mu_max))
    facings = FACINGS if facing is None else (facing,)
    tip = max(blocked_tip_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, f) for f in facings)
    return (tip, "tip") if tip < top_mu else (top_mu, "mu")


def bias_checks(front_reading_g: float, total_g: float) -> list[ReadingCheck]:
    """Why a front-axle reading cannot give a front bias (empty: it can)."""
    if not front_reading_g > 0:
        return [ReadingCheck("front", None, True, f"{_g(front_reading_g)} g: must be above 0 g")]
    if front_reading_g >= total_g:
        return [ReadingCheck("front", None, True, f"{_g(front_reading_g)} g is not below the total weight "
                                                  f"{_g(total_g)} g (one axle carries part of the whole rig)")]
    return []


def lift_checks(weight_g, wheelbase_mm, axle_height_mm, level_front_g, lift_mm, lifted_front_g) -> list[ReadingCheck]:
    """Readings of an axle lift that look wrong, refusals first (empty: all plausible).

    Refused: a reading at or above the total weight or not above 0, a lift outside (0, L), a fit that
    puts the CG below the axle (it must sit above the axle line for the front reading to grow as the
    rear rises [1]_, [2]_; a crawler's CG is above its axles: a fit below them comes from a reading,
    not the rig). Warned: a front reading that falls as the rear rises (below the level reading, or
    below the reading at a smaller lift), while the fit as a whole stays above the axle.
    """
    lifts = [float(x) for x in np.atleast_1d(lift_mm)]
    readings = [float(x) for x in np.atleast_1d(lifted_front_g)]
    out: list[ReadingCheck] = []
    if not axle_height_mm > 0:
        out.append(ReadingCheck("axle", None, True, f"{_g(axle_height_mm)} mm: must be above 0 mm"))
    elif axle_height_mm >= wheelbase_mm:
        out.append(ReadingCheck("axle", None, True, f"{_g(axle_height_mm)} mm: must be below the wheelbase "
                                                     f"{_g(wheelbase_mm)} mm (it is the loaded tyre radius)"))
    if not level_front_g > 0:
        out.append(ReadingCheck("level", None, True, f"{_g(level_front_g)} g: must be above 0 g"))
    elif level_front_g >= weight_g:
        out.append(ReadingCheck("level", None, True, f"{_g(level_front_g)} g is not below the total weight "
                                                      f"{_g(weight_g)} g"))
    if len(lifts) != len(readings):
        out.append(ReadingCheck("lift", None, True, "one front reading is needed for every lift height"))
        return out
    for i, (h, g) in enumerate(zip(lifts, readings)):
        if not 0 < h < wheelbase_mm:
            out.append(ReadingCheck("lift", i, True, f"lift {_g(h)} mm: must be above 0 and below the "
                                                      f"wheelbase {_g(wheelbase_mm)} mm"))
        elif not g > 0:
            out.append(ReadingCheck("lift", i, True, f"front reading {_g(g)} g: must be above 0 g"))
        elif g >= weight_g:
            out.append(ReadingCheck("lift", i, True, f"front reading {_g(g)} g is not below the total weight "
                                                      f"{_g(weight_g)} g"))
    if out:
        return out
    height = cg_height_from_lift_mm(weight_g, wheelbase_mm, axle_height_mm, level_front_g, lifts, readings)
    if not height > axle_height_mm:
        which = None if len(lifts) > 1 else 0
        out.append(ReadingCheck("lift", which, True,
                                f"the front reading{'s fall' if len(lifts) > 1 else ' falls'} as the rear rises: "
                                f"that puts the CG at {height:.1f} mm, not above the axle height "
                                f"{_g(axle_height_mm)} mm; is the scale under the front and the rear raised?"))
        return out
    order = sorted(range(len(lifts)), key=lambda i: lifts[i])
    before_g, before = float(level_front_g), "the level reading"
    for i in order:
        if readings[i] < before_g:
            out.append(ReadingCheck("lift", i, False,
                                    f"front reading {_g(readings[i])} g at {_g(lifts[i])} mm is below "
                                    f"{before} {_g(before_g)} g: it should grow as the rear rises"))
        before_g, before = readings[i], f"the reading at {_g(lifts[i])} mm"
    return out


def slide_angle_checks(slide_angle_deg: float, mu_max: float = MU_STATIC_MAX, *, axle: str = "both",
                       facing: Optional[str] = None, wheelbase_mm: Optional[float] = None,
                       cg_from_rear_mm: Optional[float] = None,
                       cg_height_mm: Optional[float] = None) -> list[ReadingCheck]:
    """Why a slide angle cannot give a static mu a setup takes (mu above 0 and at most `mu_max`).

    Both axles blocked (`axle` "both"): ``μ = tan α`` [3]_, so the angle must lie in
    (0, atan(mu_max)]. Given the rig (all three of `wheelbase_mm`, `cg_from_rear_mm`,
    `cg_height_mm`), the angle must also be at most the one where the rig tips over backwards
    (facing up, ``tan α = b/h``) or over its nose (facing down, ``tan α = (L − b)/h``) before it
    slides (`blocked_tip_angle_deg`, Gillespie's lift angles [4]_). With `facing` None the
    steeper of the two bounds it, and an angle past the other is warned about (possible only
    facing the other way). Without the rig, only the mu limit applies.

    One axle (`axle` "front" or "rear", the other on a low-friction sheet; give `facing` and the
    rig): the bound is `one_axle_top_angle_deg`, the mu limit or the angle where the rig tips
    over the measured axle, whichever comes first. A geometry that is no rig is refused as
    reading "rig".
    """
    rig = (wheelbase_mm, cg_from_rear_mm, cg_height_mm)
    if axle == "both" and None in rig:
        top = math.degrees(math.atan(mu_max))
        if not 0 < slide_angle_deg <= top:
            return [ReadingCheck("angle", None, True,
                                 f"{_g(slide_angle_deg)} deg: must be above 0 and at most {top:.1f} deg "
                                 f"(mu_static at most {mu_max:g}, the setup file's limit)")]
        return []
    if axle != "both":
        _one_axle_case(axle, facing or "")
    elif facing is not None:
        _check_facing(facing)
    wb, b, h = (float("nan") if v is None else float(v) for v in rig)
    if not _is_rig(wb, b, h):
        return [ReadingCheck("rig", None, True,
                             f"wheelbase {_g(wb)} mm, CG {_g(b)} mm ahead of the rear axle and {_g(h)} mm high: "
                             "needs a wheelbase and CG height above 0 and the CG between the axles")]
    if axle == "both":
        return _both_axles_checks(slide_angle_deg, mu_max, facing, wb, b, h)
    top, limit = one_axle_top_angle_deg(wb, b, h, axle, facing, mu_max)
    where = "uphill" if (axle == "front") == (facing == "up") else "downhill"
    if limit == "mu" and not 0 < slide_angle_deg <= top:
        return [ReadingCheck("angle", None, True,
                             f"{_g(slide_angle_deg)} deg: must be above 0 and at most {top:.1f} deg (there "
                             f"the {axle} axle alone, blocked {where}, reaches mu_static {mu_max:g}, the "
                             "setup file's limit)")]
    if limit == "tip" and not 0 < slide_angle_deg < top:
        other = "rear" if axle == "front" else "front"
        over = "its nose" if facing == "down" else "backwards"
        return [ReadingCheck("angle", None, True,
                             f"{_g(slide_angle_deg)} deg: must be above 0 and below {top:.1f} deg (there "
                             f"the {other} axle lifts and the rig tips over {over} before it can slide)")]
    return []


# How the rig goes over, and which axle lifts, with its nose up or down the board.
_TIPS = {"up": ("backwards", "front"), "down": ("its nose", "rear")}


def _both_axles_checks(angle_deg: float, mu_max: float, facing: Optional[str], wb: float, b: float,
                       h: float) -> list[ReadingCheck]:
    top, limit = both_axles_top_angle_deg(wb, b, h, facing, mu_max)
    if not 0 < angle_deg <= top:
        if limit == "mu":
            why = f"mu_static at most {mu_max:g}, the setup file's limit"
        elif facing is not None:
            over, lifts = _TIPS[facing]
            why = (f"nose {facing} the board, the {lifts} axle lifts there: the rig tips over {over} "
                   "before its blocked wheels slide")
        else:
            up, down = (blocked_tip_angle_deg(wb, b, h, f) for f in FACINGS)
            why = (f"past it the rig tips over before its blocked wheels slide, whichever way it faced: "
                   f"backwards past {up:.1f} deg nose up the board, over its nose past {down:.1f} deg nose down")
        return [ReadingCheck("angle", None, True,
                             f"{_g(angle_deg)} deg: must be above 0 and at most {top:.1f} deg ({why})")]
    if facing is None:
        low, first = min((blocked_tip_angle_deg(wb, b, h, f), f) for f in FACINGS)
        if angle_deg > low:
            over, _lifts = _TIPS[first]
            other = "down" if first == "up" else "up"
            return [ReadingCheck("angle", None, False,
                                 f"{_g(angle_deg)} deg: nose {first} the board, the rig tips over {over} "
                                 f"past {low:.1f} deg before it slides; right only if it faced nose {other} "
                                 "(say which way to check)")]
    return []
