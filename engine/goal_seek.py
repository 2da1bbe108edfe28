"""Goal seek: the smallest change of one lever that brings a named angle to a target.

A target is one named angle of `analyse` (``handover``, ``handover_no_load``, ``balance``,
``max_grade``, ``front_lift``) with ``>=`` or ``<=`` a value in degrees. A lever is one scalar
the builder can change, with limits:

- `AddBallast`: a new ballast item of mass ``m`` at a chosen place ``(x, z)``; the lever is ``m``. [g]
- `MoveBallast`: an existing ballast item moved along the rig; the lever is its ``x``. [mm]
- `CgHeight`: the measured CG raised or lowered; the lever is the change. [mm]
- `Overdrive`: the gear overdrive; the lever is the new ``p``. [%]
- `Compound`: a tyre compound change that scales every static and kinetic mu by one factor; the
  lever is the new common ``mu_static``. [-]

`plan` returns the lever value with the smallest change from the setup as it is (for
`AddBallast`: the smallest added mass) that meets the target, the setup with it applied and the
named angles before and after; or, when no value within the limits meets it, the value that
comes closest.

How the root is bracketed
-------------------------
Write ``g(v)`` for the target's margin at lever value ``v`` (angle − target for ``>=``,
target − angle for ``<=``; ``g >= 0`` where the target is met).

*Monotone cases* are bracketed directly between the current value and each limit, then solved
by Brent's method [3]_. They are monotone because the margin moves one way at every slope:

- `MoveBallast` with any target but ``max_grade``: the item's ``x`` moves the CG ``b`` linearly
  with ``h`` fixed, and every normal force ``N_f = W (b cos θ − h (sin θ + a_x))/L`` [1]_ grows
  with ``b`` at every slope below 90°, so each first zero (balance, lift, handover) moves one way.
- `AddBallast` with ``balance``, ``front_lift`` or ``handover_no_load``: each angle solves
  ``r = (sin θ + a_x)/cos θ`` for a CG ratio ``r`` (``(b − L/2)/h``, ``b/h``, or ``(b − ρL)/h``
  with ``ρ = μ_r/(μ_f + μ_r)`` for the no-load handover, where ``a_x = 0``), and the right side
  grows with θ for ``|a_x| < 1 g``. Each ratio is linear-fractional in ``m``
  (``b = (W b₀ + m x)/(W + m)``, ``h = (W h₀ + m z)/(W + m)`` [2]_), so it moves monotonically
  toward the item's own ratio and never crosses it.
- `CgHeight` with the same three angles: the same ratios with ``b`` fixed are monotone in
  ``h > 0``; with ``handover`` too when ``a_x >= 0`` (then ``∂N_f/∂h = −W (sin θ + a_x)/L <= 0``
  on every climbing slope).

*Every other case* (``max_grade`` with any lever, ``handover`` with added ballast whose mass
changes the climbing load, overdrive, whose handover depends only on which axle is overdriven, and
tyre mu, which scales grip but not the load) is first scanned at `SCAN_SAMPLES` evenly spaced
values plus the current one (and, for overdrive, the one value where the tyres' mismatch is
cancelled and nothing winds up); the feasible sample nearest the current value and its infeasible
neighbour toward it make the bracket, on each side of the current value, and the root with the
smaller change wins. A feasible window narrower than the scan step can be missed; the best value
reported when nothing is feasible is the best sample.

Lever values that give a setup the file loader would refuse (CG off the wheelbase or below the
ground, mu out of range) count as not meeting the target.

Brent's method keeps a sign change at every step, so at a jump (an angle that appears or steps,
e.g. handover when the overdriven axle changes, or a max grade whose limiting state changes) it
converges onto the jump; the feasible end of the final bracket is returned, so the answer always
meets the target, and `Plan.margin_deg` says by how much it overshoots there. The result is
rounded to the lever's display step (away from the infeasible side), or a finer one, when that
keeps the target met and adds at most `REACH_TOL_DEG` to the margin.

The scan is a loop over lever values, not an array: each value is a different setup whose named
angles `analyse` finds in closed form (about 1 ms each).

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a grade).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (mass centre
   as the mass-weighted mean of the parts).
.. [3] R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973, ch. 4
   (a root finder combining bisection, secant and inverse quadratic interpolation that keeps a
   bracket).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Callable, ClassVar, Optional, Union

import numpy as np

from .analysis import Analysis, analyse, setup_overdrive
from .setup_model import BallastItem, Driveline, Setup, cross_field_problems, rule_for

TARGET_ANGLES = ("handover", "handover_no_load", "balance", "max_grade", "front_lift")
OPS = (">=", "<=")
SCAN_SAMPLES = 49
# Reach targets to 0.01° or better: the rounded answer may exceed the raw root's margin by this.
REACH_TOL_DEG = 0.005
# Stand-in margin for an angle that does not exist (NaN) or lies beyond 90° (inf), so the root
# finder sees a sign and a jump instead of a non-number.
_BIG_DEG = 1000.0


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

    ``handover`` and ``handover_no_load`` are +inf when an axle is overdriven but never lets go
    first below 90° (the handover lies beyond the climbs), NaN when no axle is overdriven (the
    angle does not exist). Other missing angles are NaN.
    """
    v = analysis.angles_deg.get(name)
    if v is not None:
        return float(v)
    if name.startswith("handover") and analysis.overdrive.overdriven_axle is not None:
        return math.inf
    return math.nan


def _climb_accel_g(setup: Setup) -> float:
    """The throttle acceleration `analyse` uses for this setup's angles. [g]"""
    return setup.terrain.accel_g if setup.terrain.load == "climb" else 0.0


def _limits_problem(what: str, lo: float, hi: float) -> Optional[str]:
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return f"{what} limits must be finite numbers"
    if lo > hi:
        return f"{what} limits: min {lo:g} is above max {hi:g}"
    return None


@dataclass(frozen=True)
class AddBallast:
    """A new ballast item at a fixed place; the lever is its mass.

    Parameters
    ----------
    x_mm : float
        Ahead of the rear axle. [mm]
    z_mm : float
        Above the ground. [mm]
    min_g, max_g : float
        Mass limits; a negative mass removes weight at that place. [g]
    name : str
        Name of the item written to the setup.
    """

    x_mm: float
    z_mm: float
    min_g: float = 0.0
    max_g: float = 500.0
    name: str = "planned ballast"

    kind: ClassVar[str] = "ballast"
    unit: ClassVar[str] = "g"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        for key, v in (("x_mm", self.x_mm), ("z_mm", self.z_mm)):
            p = rule_for("rig.ballast.0." + key).problem(v)
            if p:
                return f"ballast {key[0]}={v:g}: {p} [mm]"
        return _limits_problem("ballast mass", self.min_g, self.max_g)

    def start(self, setup: Setup) -> float:
        return 0.0

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (self.min_g, self.max_g)

    def apply(self, setup: Setup, value: float) -> Setup:
        item = BallastItem(self.name, float(value), float(self.x_mm), float(self.z_mm))
        return replace(setup, rig=replace(setup.rig, ballast=setup.rig.ballast + (item,)))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return float(value)

    def monotone(self, angle: str, setup: Setup) -> bool:
        if angle == "handover_no_load":
            return True
        return angle in ("balance", "front_lift") and abs(_climb_accel_g(setup)) < 1.0


@dataclass(frozen=True)
class MoveBallast:
    """An existing ballast item moved along the rig; the lever is its x.

    Parameters
    ----------
    index : int
        Position of the item in ``setup.rig.ballast`` (from 0).
    min_mm, max_mm : float, optional
        Limits of x ahead of the rear axle; default 0 and the wheelbase. [mm]
    """

    index: int
    min_mm: Optional[float] = None
    max_mm: Optional[float] = None

    kind: ClassVar[str] = "move"
    unit: ClassVar[str] = "mm"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        n = len(setup.rig.ballast)
        if not 0 <= self.index < n:
            return (f"ballast item {self.index + 1}: the setup has "
                    + (f"{n} ballast item{'s' if n != 1 else ''} (1 to {n})" if n else "no ballast items"))
        lo, hi = self.limits(setup)
        return _limits_problem("move x", lo, hi)

    def start(self, setup: Setup) -> float:
        return float(setup.rig.ballast[self.index].x_mm)

    def limits(self, setup: Setup) -> tuple[float, float]:
        lo = 0.0 if self.min_mm is None else float(self.min_mm)
        hi = float(setup.rig.wheelbase_mm) if self.max_mm is None else float(self.max_mm)
        return (lo, hi)

    def apply(self, setup: Setup, value: float) -> Setup:
        return setup.with_value(f"rig.ballast.{self.index}.x_mm", float(value))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return angle != "max_grade"


@dataclass(frozen=True)
class CgHeight:
    """The measured CG height raised (> 0) or lowered (< 0); the lever is the change. [mm]

    Default limits ±30 mm: about what a battery, body or link-mount change moves the CG of a 1/10
    crawler (common practice, no source).
    """

    min_mm: float = -30.0
    max_mm: float = 30.0

    kind: ClassVar[str] = "cg-height"
    unit: ClassVar[str] = "mm"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        return _limits_problem("CG height change", self.min_mm, self.max_mm)

    def start(self, setup: Setup) -> float:
        return 0.0

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_mm), float(self.max_mm))

    def apply(self, setup: Setup, value: float) -> Setup:
        return setup.with_value("rig.cg_height_mm", setup.rig.cg_height_mm + float(value))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        accel = _climb_accel_g(setup)
        if angle == "handover_no_load":
            return True
        if angle in ("balance", "front_lift"):
            return abs(accel) < 1.0
        return angle == "handover" and accel >= 0


@dataclass(frozen=True)
class Overdrive:
    """The gear overdrive set to a new value; the lever is ``p``. [%]

    A setup with gear stages gets a plain ``overdrive_pct`` instead (the builder picks gears that
    give it). Default limits −10 % to +20 %: the span of front overdrives crawler builders run
    (common practice, no source).
    """

    min_pct: float = -10.0
    max_pct: float = 20.0

    kind: ClassVar[str] = "overdrive"
    unit: ClassVar[str] = "%"
    step: ClassVar[float] = 0.01

    def problem(self, setup: Setup) -> Optional[str]:
        return _limits_problem("overdrive", self.min_pct, self.max_pct)

    def start(self, setup: Setup) -> float:
        return float(setup_overdrive(setup).gear_pct)

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_pct), float(self.max_pct))

    def apply(self, setup: Setup, value: float) -> Setup:
        return replace(setup, driveline=Driveline(overdrive_pct=float(value)))

    def extra_samples(self, setup: Setup) -> tuple[float, ...]:
        """The gear overdrive whose front/rear ground speeds match (no wind-up): a single point
        ``p = 100 (D_r/D_f − 1)`` [%] that an even scan would step over."""
        r = setup.rig
        return (100.0 * (r.tire_dia_rear_mm / r.tire_dia_front_mm - 1.0),)

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return False


@dataclass(frozen=True)
class Compound:
    """A tyre compound change: every static and kinetic mu scaled by one factor.

    The lever is the new common ``mu_static``; ``mu_kinetic`` and any per-axle overrides scale by
    the same ratio. Default limits 0.3 to 1.5: slick plastic to soft rubber on grippy rock
    (value recalled from memory; Serway & Beichner table 5.2 gives 1.0 for rubber on dry concrete).
    """

    min_mu: float = 0.3
    max_mu: float = 1.5

    kind: ClassVar[str] = "mu"
    unit: ClassVar[str] = ""
    step: ClassVar[float] = 0.001

    def problem(self, setup: Setup) -> Optional[str]:
        if not self.min_mu > 0:
            return f"mu limits: min {self.min_mu:g} must be > 0"
        return _limits_problem("mu", self.min_mu, self.max_mu)

    def start(self, setup: Setup) -> float:
        return float(setup.grip.mu_static)

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_mu), float(self.max_mu))

    def apply(self, setup: Setup, value: float) -> Setup:
        g = setup.grip
        k = float(value) / g.mu_static
        scaled = {
            name: (None if getattr(g, name) is None else getattr(g, name) * k)
            for name in ("mu_kinetic", "front_mu_static", "front_mu_kinetic", "rear_mu_static", "rear_mu_kinetic")
        }
        return replace(setup, grip=replace(g, mu_static=float(value), **scaled))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return False


Lever = Union[AddBallast, MoveBallast, CgHeight, Overdrive, Compound]


@dataclass(frozen=True)
class Plan:
    """What `plan` found.

    ``reached`` is True when ``value`` meets the target (``already_met`` when no change was
    needed); otherwise ``value`` is the best the lever can do within ``limits`` and ``setup``/
    ``after`` show it. ``margin_deg`` is the target's margin at ``value`` (>= 0: met; +inf when
    the angle moved beyond 90°). ``insensitive`` is True when the angle does not change with this
    lever at all. ``method`` is "bracket" (monotone case) or "scan".
    """

    target: Target
    lever: Lever
    reached: bool
    already_met: bool
    start_value: float
    value: float
    limits: tuple[float, float]
    setup: Setup
    before: Analysis
    after: Analysis
    margin_deg: float
    added_mass_g: float
    insensitive: bool
    method: str
    evaluations: int

    @property
    def change(self) -> float:
        """Lever value minus its value in the setup as given. [lever unit]"""
        return self.value - self.start_value

    @property
    def angle_before_deg(self) -> float:
        return angle_value_deg(self.before, self.target.angle)

    @property
    def angle_after_deg(self) -> float:
        return angle_value_deg(self.after, self.target.angle)

    def moved_deg(self) -> dict:
        """Each named angle's change, after − before. [deg] None where either side is missing."""
        out = {}
        for name, a in self.before.angles_deg.items():
            b = self.after.angles_deg.get(name)
            out[name] = None if a is None or b is None else float(b) - float(a)
        return out


def brent_root(fn: Callable[[float], float], a: float, b: float, fa: float, fb: float,
               xtol: float, rtol: float = 4 * np.finfo(float).eps, maxiter: int = 100):
    """Brent's bracketing root finder for a scalar function with ``fa`` and ``fb`` of opposite sign.

    Parameters
    ----------
    fn : callable
        ``float -> float``; may jump (Brent falls back to bisection there).
    a, b : float
        Bracket ends. [lever unit]
    fa, fb : float
        ``fn(a)``, ``fn(b)``; must differ in sign (or one be zero).
    xtol, rtol : float
        Stop when the bracket is narrower than ``xtol + rtol |x|``.

    Returns
    -------
    x, fx, other, f_other, calls : float, float, float, float, int
        The best point, the opposite end of the final bracket (where ``fn`` has the other sign),
        and the number of calls to ``fn``.

    Notes
    -----
    Brent-Dekker: each step tries inverse quadratic interpolation or the secant and accepts it
    only when it shrinks the bracket fast enough, else bisects, so the bracket is kept and
    convergence is guaranteed [3]_.
    """
    if fa == 0:
        return a, fa, a, fa, 0
    if fb == 0:
        return b, fb, b, fb, 0
    if (fa > 0) == (fb > 0):
        raise ValueError("brent_root: fn(a) and fn(b) must differ in sign")
    x_pre, f_pre, x_cur, f_cur = a, fa, b, fb
    x_blk, f_blk = x_pre, f_pre
    s_pre = s_cur = x_cur - x_pre
    calls = 0
    for _ in range(maxiter):
        if f_pre != 0 and f_cur != 0 and (f_pre > 0) != (f_cur > 0):
            x_blk, f_blk = x_pre, f_pre
            s_pre = s_cur = x_cur - x_pre
        if abs(f_blk) < abs(f_cur):
            # keep the better point as x_cur
            x_pre, x_cur, x_blk = x_cur, x_blk, x_cur
            f_pre, f_cur, f_blk = f_cur, f_blk, f_cur
        delta = (xtol + rtol * abs(x_cur)) / 2.0
        s_bis = (x_blk - x_cur) / 2.0
        if f_cur == 0 or abs(s_bis) < delta:
            break
        if abs(s_pre) > delta and abs(f_cur) < abs(f_pre):
            if x_pre == x_blk:  # secant
                s_try = -f_cur * (x_cur - x_pre) / (f_cur - f_pre)
            else:  # inverse quadratic interpolation
                d_pre = (f_pre - f_cur) / (x_pre - x_cur)
                d_blk = (f_blk - f_cur) / (x_blk - x_cur)
                s_try = -f_cur * (f_blk * d_blk - f_pre * d_pre) / (d_blk * d_pre * (f_blk - f_pre))
            if 2 * abs(s_try) < min(abs(s_pre), 3 * abs(s_bis) - delta):
                s_pre, s_cur = s_cur, s_try
            else:
                s_pre = s_cur = s_bis
        else:
            s_pre = s_cur = s_bis
        x_pre, f_pre = x_cur, f_cur
        x_cur += s_cur if abs(s_cur) > delta else math.copysign(delta, s_bis)
        f_cur = fn(x_cur)
        calls += 1
    return x_cur, f_cur, x_blk, f_blk, calls


# Every numeric key a lever can touch, checked with the loader's own rules (`FIELDS`).
_CHECKED_KEYS = (
    "rig.mass_g", "rig.cg_height_mm", "driveline.overdrive_pct", "grip.mu_static", "grip.mu_kinetic",
    "grip.front_mu_static", "grip.front_mu_kinetic", "grip.rear_mu_static", "grip.rear_mu_kinetic",
)


def setup_is_valid(setup: Setup) -> bool:
    """True when the loader would accept `setup` (ranges of the keys levers change, cross-field rules)."""
    for key in _CHECKED_KEYS:
        v = setup.value(key)
        if v is not None and rule_for(key).problem(v):
            return False
    for item in setup.rig.ballast:
        for key in ("mass_g", "x_mm", "z_mm"):
            if rule_for("rig.ballast.0." + key).problem(getattr(item, key)):
                return False
    return not cross_field_problems(setup)


class _Evaluator:
    """Margin of the target at lever values, cached, counting `analyse` calls."""

    def __init__(self, setup: Setup, target: Target, lever: Lever):
        self.setup, self.target, self.lever = setup, target, lever
        self.cache: dict[float, tuple[float, Optional[Setup], Optional[Analysis]]] = {}

    def result(self, value: float):
        value = float(value)
        if value not in self.cache:
            candidate = self.lever.apply(self.setup, value)
            if not setup_is_valid(candidate):
                # e.g. ballast that moves the CG off the wheelbase, a CG below the ground, mu > 5:
                # not a setup the file could hold
                self.cache[value] = (-_BIG_DEG, None, None)
            else:
                a = analyse(candidate, np.array([candidate.terrain.slope_deg]))
                angle = angle_value_deg(a, self.target.angle)
                m = self.target.margin_deg(angle)
                self.cache[value] = (float(np.clip(m, -_BIG_DEG, _BIG_DEG)), candidate, a)
        return self.cache[value]

    def margin(self, value: float) -> float:
        return self.result(value)[0]

    @property
    def calls(self) -> int:
        return len(self.cache)


def _decimals(step: float) -> int:
    return max(0, -int(math.floor(math.log10(step) + 1e-9)))


def _tidy(ev: _Evaluator, value: float, away_from: float, lo: float, hi: float) -> float:
    """`value` rounded to the lever's display step, away from the infeasible side, if still met."""
    raw_margin = ev.margin(value)
    direction = 1.0 if value >= away_from else -1.0
    for extra in range(6):
        step = ev.lever.step * 10.0 ** (-extra)
        q = value / step
        r = (math.ceil(q - 1e-9) if direction > 0 else math.floor(q + 1e-9)) * step
        r = round(min(max(r, lo), hi), _decimals(step))
        m = ev.margin(r)
        if m >= 0 and m <= max(raw_margin, 0.0) + REACH_TOL_DEG:
            return r
    return value


def plan(setup: Setup, target: Target, lever: Lever, *, samples: int = SCAN_SAMPLES) -> Plan:
    """The smallest lever change that meets `target`, or the best the lever can do.

    Parameters
    ----------
    setup : Setup
        The setup as it is; its terrain (load mode, throttle) is used for every angle.
    target : Target
        Named angle, ``>=``/``<=`` and value. [deg]
    lever : AddBallast, MoveBallast, CgHeight, Overdrive or Compound
        What may change, within its limits.
    samples : int
        Scan size for the non-monotone cases (see the module docstring).

    Returns
    -------
    Plan

    Raises
    ------
    LeverError
        When the lever does not fit the setup (no such ballast item, limits reversed, ...).
    """
    problem = lever.problem(setup)
    if problem:
        raise LeverError(problem)
    lo, hi = lever.limits(setup)
    v0 = lever.start(setup)
    before = analyse(setup, np.array([setup.terrain.slope_deg]))
    m_before = target.margin_deg(angle_value_deg(before, target.angle))
    ev = _Evaluator(setup, target, lever)

    def finish(value, reached, already, method, insensitive=False):
        new_setup, after = setup, before
        if not already:
            _, candidate, analysis = ev.result(value)
            if candidate is not None:  # None only when no value in the limits is a valid setup
                new_setup, after = candidate, analysis
        margin = target.margin_deg(angle_value_deg(after, target.angle))
        added = 0.0 if new_setup is setup else lever.added_mass_g(setup, value)
        return Plan(target, lever, reached, already, v0, float(value), (lo, hi), new_setup, before, after,
                    float(margin), added, insensitive, method, ev.calls + 1)

    monotone = lever.monotone(target.angle, setup)
    method = "bracket" if monotone else "scan"
    if m_before >= 0:
        return finish(v0, True, True, method)

    start = min(max(v0, lo), hi)
    if monotone:
        pts = np.unique(np.array([lo, start, hi], dtype=float))
    else:
        extra = [v for v in getattr(lever, "extra_samples", lambda _s: ())(setup) if lo <= v <= hi]
        pts = np.unique(np.concatenate((np.linspace(lo, hi, max(int(samples), 2)), [start], extra)))
    g = np.array([ev.margin(p) for p in pts])
    feasible = g >= 0

    if not feasible.any():
        defined = g > -_BIG_DEG
        insensitive = bool(defined.all() and np.ptp(g) < 1e-9)
        # best margin (equal to 1e-9°: rounding noise); among equals the smallest change
        order = np.lexsort((np.abs(pts - v0), -np.round(g, 9)))
        best = float(pts[order[0]])
        return finish(best, False, False, method, insensitive)

    # The nearest feasible sample on each side of the current value, bracketed with its
    # infeasible neighbour toward it; the root with the smaller change wins.
    xtol = max(abs(hi - lo), lever.step) * 1e-10
    candidates = []
    for side in (pts < v0, pts > v0):
        idx = np.flatnonzero(feasible & side)
        if idx.size == 0:
            continue
        i = int(idx[np.argmin(np.abs(pts[idx] - v0))])
        p = float(pts[i])
        if p == start:
            # the current value lies outside the limits and the nearest limit already meets it
            candidates.append(p)
            continue
        j = i - 1 if p > v0 else i + 1
        q = float(pts[j])
        x, fx, other, _, _ = brent_root(ev.margin, q, p, float(g[j]), float(g[i]), xtol)
        candidates.append(_tidy(ev, x if fx >= 0 else other, q, lo, hi))
    best = min(candidates, key=lambda v: abs(v - v0))
    return finish(best, True, False, method)

__all__ = [
    "TARGET_ANGLES", "OPS", "SCAN_SAMPLES", "REACH_TOL_DEG", "LeverError", "Target", "angle_value_deg",
    "AddBallast", "MoveBallast", "CgHeight", "Overdrive", "Compound", "Lever", "Plan", "brent_root", "plan",
    "setup_is_valid",
]
