"""Calibrate the tyres' slip stiffness per unit load ``c`` from two bench tests (MODEL section 5).

**Slip test** (preferred; one axle at a time). One driveshaft out, so the other axle alone drives
the rig up a board at a known angle ``θ``; a chalk mark counts ``n`` turns of a tyre over a taped
distance ``X``. With that axle's free roll-out diameter ``D``, its theoretical slip is
``σ = 1 − X/(n π D)`` [1]_ (``σ = 1 − 1/s``, ``s`` the tread-over-centre speed ratio), the force it
carries is the whole climb ``F = W (sin θ + c_rr cos θ)`` [2]_, its load ``N`` follows from the
grade-load equation [2]_, and the brush model inverts in closed form [1]_:

    c = 3 μ_s ψ⁻¹(F/(μ_s N)) / σ,   ψ⁻¹(u) = 1 − (1 − u)^(1/3) on [0, 1].

Several runs (two or three angles) are combined by least squares through the origin of
``c σ = 3 μ_s ψ⁻¹(u)`` (one unknown, ``c``).

**Ramp test** (a check). The onset angle where the overdriven tyres start to slip, raised a few
degrees at a time with the driveline unwound before each run, is the handover. The handover does
not rise as ``c`` rises but is flat at both ends, so one reading (±1°) fits a *range* of ``c``, or
none: `stiffness_range` finds that range from any function giving the handover for a ``c`` (the
analysis's own handover, so the range is what the report would show).

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., Butterworth-Heinemann, 2012, sec. 3.2
   (brush model, theoretical slip, parabolic pressure distribution).
.. [2] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade; force to climb with rolling resistance).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Optional

import numpy as np

from .slope_statics import axle_loads_g
from .tyre_brush import brush_psi_inverse

# ---------------------------------------------------------------------------- slip test


@dataclass(frozen=True)
class SlipTestRuns:
    """The slip test worked out, one element per run, and the combined stiffness.

    Arrays: ``sigma`` theoretical slip [-], ``force_g`` the climb the driving axle carries [gf],
    ``normal_g`` its load [gf], ``grip_used`` ``F/(μ_s N)`` [-], ``stiffness`` each run's ``c``
    [-] (NaN where a run cannot give one). ``problems`` lists ``(run index, why)`` for runs that
    cannot be used; ``stiffness_fit`` is the least-squares ``c`` over the usable runs (NaN if none).
    """

    sigma: np.ndarray
    force_g: np.ndarray
    normal_g: np.ndarray
    grip_used: np.ndarray
    stiffness: np.ndarray
    stiffness_fit: float
    floor: float
    problems: list


def slip_test(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, rolling_resistance, mu_static,
              rolling_dia_mm, slope_deg, turns, distance_mm, axle: str = "rear") -> SlipTestRuns:
    """Slip stiffness of one axle from slip-test runs (see the module docstring).

    Parameters
    ----------
    weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm : float
        The effective rig (ballast included). [gf], [mm], [mm], [mm]
    rolling_resistance : float
        ``c_rr``. [-]
    mu_static : float
        Static friction of the driving axle. [-]
    rolling_dia_mm : array_like
        Free roll-out diameter of the driving axle's tyres at the load of each run. [mm]
    slope_deg, turns, distance_mm : array_like
        Each run: board angle [deg], tyre turns counted [-], distance travelled [mm].
    axle : {"rear", "front"}
        The driving axle (the other one's driveshaft is out).

    Returns
    -------
    SlipTestRuns
    """
    theta = np.atleast_1d(np.asarray(slope_deg, dtype=float))
    n = np.atleast_1d(np.asarray(turns, dtype=float))
    x = np.atleast_1d(np.asarray(distance_mm, dtype=float))
    dia = np.atleast_1d(np.asarray(rolling_dia_mm, dtype=float))
    theta, n, x, dia = np.broadcast_arrays(theta, n, x, dia)
    front, rear = axle_loads_g(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, theta)
    normal = np.asarray(rear if axle == "rear" else front, dtype=float)
    th = np.radians(theta)
    force = weight_g * (np.sin(th) + rolling_resistance * np.cos(th))
    sigma = 1.0 - x / (n * math.pi * dia)
    with np.errstate(divide="ignore", invalid="ignore"):
        used = force / (mu_static * normal)
        lam = brush_psi_inverse(used)
        stiffness = 3.0 * mu_static * lam / sigma
    floor = 3.0 * mu_static
    problems = []
    for i in range(theta.size):
        rollout = n[i] * math.pi * dia[i]
        if not normal[i] > 0:
            problems.append((i, f"at {theta[i]:g} deg the {axle} axle is off the ground"))
        elif not force[i] > 0:
            problems.append((i, f"at {theta[i]:g} deg the climb needs no drive force: use a steeper board"))
        elif not used[i] < 1:
            problems.append((i, f"at {theta[i]:g} deg the {axle} axle alone cannot carry the climb "
                                f"({force[i]:.0f} g needed, grip {mu_static * normal[i]:.0f} g): its tyres would "
                                "spin; use a shallower board"))
        elif not sigma[i] > 0:
            problems.append((i, f"{x[i]:g} mm is not short of {n[i]:g} turns' roll-out {rollout:.0f} mm: "
                                "no slip shows; count again, or check the roll-out diameter"))
        elif not stiffness[i] > floor:
            problems.append((i, f"slip {100 * sigma[i]:.1f} % is more than a gripping tyre takes at this load "
                                f"(it gives c {stiffness[i]:.2g}, not above 3 mu_s = {floor:g}): the tyre was "
                                "spinning, or the distance is short"))
    bad = np.zeros(theta.size, bool)
    bad[[i for i, _ in problems]] = True
    stiffness = np.where(bad, np.nan, stiffness)
    good = ~bad
    if good.any():
        s, y = sigma[good], 3.0 * mu_static * lam[good]
        fit = float(np.dot(s, y) / np.dot(s, s))
    else:
        fit = float("nan")
    return SlipTestRuns(sigma=sigma, force_g=force, normal_g=normal, grip_used=used, stiffness=stiffness,
                        stiffness_fit=fit, floor=floor, problems=problems)


def board_rolling_dia_mm(setup, axle: str, slope_deg):
    """Roll-out diameter of one axle's tyres at that axle's load on the board (MODEL section 4). [mm]

    The file's level roll-out diameter (its tyre diameter when it has none) less its loss per 100 g
    more load on that axle; the slip test needs the roll-out "at the same axle load" as the run.
    """
    from .ballast import combine_ballast
    from .overdrive import rolling_dia_under_load_mm

    rig = setup.rig
    weight, b, h = combine_ballast(rig)
    level_front, level_rear = axle_loads_g(weight, rig.wheelbase_mm, b, h, 0.0)
    front, rear = axle_loads_g(weight, rig.wheelbase_mm, b, h, np.atleast_1d(np.asarray(slope_deg, float)))
    i = 0 if axle == "front" else 1
    return rolling_dia_under_load_mm(rig.rolling_dia_mm()[i], getattr(rig, f"rolling_dia_loss_{axle}_mm_per_100g"),
                                     (front, rear)[i], float((level_front, level_rear)[i]),
                                     getattr(rig, f"tire_dia_{axle}_mm"))


# ---------------------------------------------------------------------------- ramp test

# Stiffnesses searched: from just above the model's floor 3 μ_s to this, then the rigid limit.
STIFFNESS_TOP = 1e4
GRID_POINTS = 28
EDGE_STEPS = 14  # bisection steps in log c at each edge: the grid ratio 1.35 shrinks to 1.00002


@dataclass(frozen=True)
class StiffnessRange:
    """The slip stiffnesses whose handover fits a ramp reading.

    ``fits``: some ``c`` fits. ``low``/``high``: the range (``high`` is ``inf`` when every stiffer
    tyre fits, ``low`` is the floor ``3 μ_s`` when every softer one does). ``exact``: the ``c`` whose
    handover equals the reading, where one exists inside the range (None otherwise). ``words``: the
    answer in one plain sentence. ``rigid_deg``: the handover of a rigid tyre (None: never);
    ``latest_deg``: the latest handover any ``c`` gives; ``max_grade_deg``: the max grade.
    """

    fits: bool
    low: Optional[float]
    high: Optional[float]
    exact: Optional[float]
    words: str
    rigid_deg: Optional[float]
    latest_deg: Optional[float]
    max_grade_deg: Optional[float]


def _num(c: float) -> str:
    return "rigid" if math.isinf(c) else f"{c:.3g}"


def stiffness_range(handover_of: Callable[[float], tuple[Optional[float], Optional[float]]], reading_deg,
                    floor: float, tolerance_deg: float = 1.0) -> StiffnessRange:
    """The range of ``c`` whose handover lies within ``reading_deg ± tolerance_deg``.

    Parameters
    ----------
    handover_of : callable
        ``c -> (handover [deg] or None when the rig never scrubs, max grade [deg] or None)``;
        called with ``math.inf`` for the rigid tyre.
    reading_deg : float or None
        The onset angle read on the ramp [deg]; None: the rig never scrubbed up to the max grade.
    floor : float
        The lowest ``c`` the model takes (``3 μ_s`` of the stiffer-gripping axle); the search
        starts just above it. [-]
    tolerance_deg : float
        The reading's uncertainty. [deg]

    Notes
    -----
    A grid in ``log c`` finds where the reading fits, bisection in ``log c`` sharpens each edge.
    The handover never rises as ``c`` rises (MODEL section 5), so the fitting ``c`` form one range.
    """
    cache: dict[float, tuple] = {}

    def at(c: float):
        if c not in cache:
            cache[c] = handover_of(c)
        return cache[c]

    def late(c: float) -> float:  # the handover, +inf where the rig never scrubs
        h = at(c)[0]
        return math.inf if h is None else h

    if reading_deg is None:  # "never scrubs": the handover must be beyond every slope the rig holds
        early_enough = lambda c: True  # noqa: E731
        late_enough = lambda c: math.isinf(late(c))  # noqa: E731
    else:
        early_enough = lambda c: late(c) <= reading_deg + tolerance_deg + 1e-9  # noqa: E731
        late_enough = lambda c: late(c) >= reading_deg - tolerance_deg - 1e-9  # noqa: E731

    def edge(true_at: float, false_at: float, test) -> float:
        """Bisection in log c between a c where `test` holds and one where it does not."""
        a, b = math.log(true_at), math.log(false_at)
        for _ in range(EDGE_STEPS):
            mid = 0.5 * (a + b)
            if test(math.exp(mid)):
                a = mid
            else:
                b = mid
        return math.exp(a)

    start = floor * 1.0005
    grid = [*np.geomspace(start, STIFFNESS_TOP, GRID_POINTS).tolist(), math.inf]
    early = [early_enough(c) for c in grid]  # false ... false true ... true (the handover falls with c)
    lateok = [late_enough(c) for c in grid]  # true ... true false ... false
    rigid_h, max_grade = at(math.inf)
    finite = [at(c)[0] for c in grid if at(c)[0] is not None]
    latest = max(finite) if finite else None
    grades = [at(c)[1] for c in grid if at(c)[1] is not None]
    top_grade = max(grades) if grades else max_grade

    def none_fits(words: str) -> StiffnessRange:
        return StiffnessRange(False, None, None, None, words, rigid_h, latest, top_grade)

    clear_miss = reading_deg is not None and (
        (rigid_h is not None and reading_deg + tolerance_deg < rigid_h)
        or (top_grade is not None and reading_deg - tolerance_deg > top_grade))
    if clear_miss or not any(early) or not any(lateok):
        return none_fits(_no_fit(reading_deg, tolerance_deg, rigid_h, latest, top_grade))
    i = early.index(True)
    low = start if i == 0 else edge(grid[i], grid[i - 1], early_enough)
    j = len(lateok) - 1 - lateok[::-1].index(True)
    high = math.inf if math.isinf(grid[j]) else edge(grid[j], grid[j + 1], late_enough)
    if low > high * (1 + 1e-9):  # the handover jumps over the reading's window
        before = "never scrubbing" if math.isinf(late(high)) else f"{late(high):.1f} deg"
        return none_fits(f"no c fits a handover of {reading_deg:g} deg (+-{tolerance_deg:g}): the handover "
                         f"jumps from {before} (c up to {_num(high)}) to {late(low):.1f} deg (c from {_num(low)})")
    exact = None
    if reading_deg is not None and math.isfinite(high):
        above = lambda c: late(c) > reading_deg  # noqa: E731
        if above(low) and not above(high):
            exact = edge(low, high, above)
    return StiffnessRange(True, low, high, exact,
                          _fit_words(reading_deg, tolerance_deg, low, high, start, floor, rigid_h),
                          rigid_h, latest, top_grade)


def one_stiffness(setup, c: float):
    """`setup` with the slip stiffness `c` on both axles (per-axle overrides cleared)."""
    return setup.with_slip_stiffness(c)


def _finite_or_none(value) -> Optional[float]:
    return float(value) if value is not None and math.isfinite(value) else None


def handover_range(setup, reading_deg, tolerance_deg: float = 1.0) -> StiffnessRange:
    """`stiffness_range` for a setup, with the analysis's own handover and max grade at each ``c``.

    The floor is ``3 μ_s`` of the better-gripping axle (one ``c`` on both axles must exceed both).
    """
    from .analysis import analyse  # the named angles the report shows

    def handover_of(c):
        angles = analyse(one_stiffness(setup, c)).angles_deg
        return _finite_or_none(angles.get("handover")), _finite_or_none(angles.get("max_grade"))

    fs, _fk, rs, _rk = setup.grip.axle_mu()
    return stiffness_range(handover_of, reading_deg, floor=3.0 * max(fs, rs), tolerance_deg=tolerance_deg)


def _fit_words(reading, tol, low, high, start, floor, rigid_h) -> str:
    seen = "never scrubbing" if reading is None else f"a handover of {reading:g} deg (+-{tol:g})"
    if math.isinf(high) and low <= start:
        return f"every slip stiffness fits {seen}: the ramp test cannot tell c here"
    if math.isinf(high):
        return (f"every c above {_num(low)} fits {seen} (near the rigid handover "
                f"{rigid_h:.1f} deg); the slip test can tell them apart")
    if low <= start:
        return (f"every c up to {_num(high)} fits {seen} (down to the model's floor 3 mu_s = {floor:g}); "
                "the slip test can tell them apart")
    return f"c from {_num(low)} to {_num(high)} fits {seen}"


def _no_fit(reading, tol, rigid_h, latest, max_grade) -> str:
    if reading is None:
        return (f"no c fits never scrubbing: even the softest tyres scrub, from {latest:.1f} deg"
                if latest is not None else "no c fits never scrubbing")
    if rigid_h is not None and reading + tol < rigid_h:
        return (f"no c fits a handover of {reading:g} deg: it is below the rigid handover {rigid_h:.1f} deg, "
                "the earliest any tyre hands over; check the overdrive and mu in the file, and unwind the "
                "driveline (roll back a little) before each run")
    if max_grade is not None and reading - tol > max_grade:
        return (f"no c fits a handover of {reading:g} deg: it is above the max grade {max_grade:.1f} deg; "
                "check the reading and the rig's numbers")
    if latest is None:
        return f"no c fits a handover of {reading:g} deg: this setup never hands over to the overdriven axle"
    return (f"no c fits a handover of {reading:g} deg: the latest any c gives is {latest:.1f} deg, "
            "after which the rig never scrubs")


__all__ = ["SlipTestRuns", "StiffnessRange", "board_rolling_dia_mm", "handover_range", "one_stiffness", "slip_test", "stiffness_range"]
