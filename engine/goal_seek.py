"""Goal seek: the smallest change of one lever that brings a named angle to a target.

A target (`goal_targets`) is one named angle of `analyse` (``handover``, ``handover_weight_only``,
``balance``, ``max_grade``, ``front_lift``) kept ``>=`` or ``<=`` a value in degrees. A lever
(`goal_levers`) is one scalar the builder can change, with limits: added ballast mass, a ballast
item's place, the CG height, the gear overdrive or the tyre compound.

`plan` returns the lever value with the smallest change from the setup as it is (for
`AddBallast`: the smallest added mass) that meets the target, the setup with it applied and the
named angles before and after; or, when no value within the limits meets it, the value that
comes closest.

How the root is found
---------------------
The limits are first cut to the lever's domain (the values the setup file allows), so a limit
of 1e9 g or ±1e9 mm means "no limit", and the answer never depends on limits wider than needed.

*Monotone cases* (below) are bracketed directly between the current value and each limit, then
solved by Brent's method (`goal_roots`); when a limit gives a setup the loader refuses (ballast
that moves the CG off the wheelbase, say) the case falls back to the scan. They are monotone
because the margin moves one way at every slope:

- `MoveBallast` with any target but ``max_grade``: the item's ``x`` moves the CG ``b`` linearly
  with ``h`` fixed, and every normal force ``N_f = W (b cos θ − h (sin θ + a_x))/L`` [1]_ grows
  with ``b`` at every slope below 90°, so each first zero (balance, lift, handover) moves one way.
- `AddBallast` with ``balance``, ``front_lift`` or ``handover_weight_only``: each angle solves
  ``r = (sin θ + a_x)/cos θ`` for a CG ratio ``r`` (``(b − L/2)/h``, ``b/h``, or ``(b − ρL)/h``
  with ``ρ = μ_r/(μ_f + μ_r)`` for the no-load handover, where ``a_x = 0``), and the right side
  grows with θ for ``|a_x| < 1 g``. Each ratio is linear-fractional in ``m``
  (``b = (W b₀ + m x)/(W + m)``, ``h = (W h₀ + m z)/(W + m)`` [2]_), so it moves monotonically
  toward the item's own ratio and never crosses it.
- `CgHeight` with the same three angles: the same ratios with ``b`` fixed are monotone in
  ``h > 0``; with ``handover`` too when ``a_x >= 0`` (then ``∂N_f/∂h = −W (sin θ + a_x)/L <= 0``
  on every climbing slope).

*Every other case* is scanned, then bracketed (`goal_roots.scan_points`, `nearest_roots`):
``max_grade`` with any lever, ``handover`` with added ballast whose mass changes the climbing
load, tyre mu (which scales grip but not the load) and the overdrive. The overdrive's effect is
not assumed to be a step: with tyre slip the handover and the max grade move continuously with
the amount, with the rigid rule they step where the overdriven axle changes; the scan also holds
the one value where the tyres' mismatch is cancelled and nothing winds up. The root nearest the
current value on each side is solved and the smaller change wins; the best value reported when
nothing is feasible is the best sample.

Brent's method keeps a sign change at every step, so at a jump it converges onto the jump; the
feasible end of the final bracket is returned, so the answer always meets the target, and
`Plan.margin_deg` says by how much it overshoots there. The result is rounded to the lever's
display step (away from the infeasible side), or a finer one, when that keeps the target met and
adds at most `REACH_TOL_DEG` to the margin.

The scan is a loop over lever values, not an array: each value is a different setup whose named
angles `analyse` finds (about 1 ms each).

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a grade).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (mass centre
   as the mass-weighted mean of the parts).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np

from .analysis import Analysis, analyse
from .goal_levers import AddBallast, CgHeight, Compound, Lever, MoveBallast, Overdrive, setup_is_valid
from .goal_roots import (REACH_TOL_DEG, brent_root, nearest_roots, outward_margins, scan_points,
                         sorted_unique, tidy)
from .goal_targets import OPS, TARGET_ANGLES, LeverError, Target, angle_value_deg
from .setup_model import Setup

SCAN_SAMPLES = 49
# Stand-in margin for an angle that does not exist (NaN) or lies beyond 90° (inf), so the root
# finder sees a sign and a jump instead of a non-number.
_BIG_DEG = 1000.0


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
                with np.errstate(all="ignore"):
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


def search_limits(lever: Lever, setup: Setup) -> tuple[float, float]:
    """The lever's limits cut to its domain (the values the setup file allows); the limits as
    given when they lie wholly outside it (then no value is valid and the plan says so)."""
    lo, hi = lever.limits(setup)
    dlo, dhi = lever.domain(setup)
    clo, chi = max(lo, dlo), min(hi, dhi)
    return (clo, chi) if clo <= chi else (lo, hi)


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
        Scan points per lever scale for the non-monotone cases (see the module docstring).

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
    limits = lever.limits(setup)
    lo, hi = search_limits(lever, setup)
    v0 = lever.start(setup)
    with np.errstate(all="ignore"):
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
        return Plan(target, lever, reached, already, v0, float(value), limits, new_setup, before, after,
                    float(margin), added, insensitive, method, ev.calls + 1)

    monotone = lever.monotone(target.angle, setup)
    if m_before >= 0:
        return finish(v0, True, True, "bracket" if monotone else "scan")

    start = min(max(v0, lo), hi)
    scale = max(lever.scale(setup), lever.step)
    xtol = scale * 1e-10
    method = "bracket"
    pts = sorted_unique([lo, start, hi]) if monotone else None
    g = None if pts is None else np.array([ev.margin(p) for p in pts])
    if pts is None or (not (g >= 0).any() and (g <= -_BIG_DEG).any()):
        # not monotone, or a limit the loader refuses: scan
        method = "scan"
        extra = getattr(lever, "extra_samples", lambda _s: ())(setup)
        pts = scan_points(v0, lo, hi, scale, samples, extra)
        g = outward_margins(ev.margin, pts, v0)

    if not (np.nan_to_num(g, nan=-np.inf) >= 0).any():  # then every sample was evaluated
        defined = g > -_BIG_DEG
        insensitive = bool(defined.all() and np.ptp(g) < 1e-9)
        # best margin (equal to 1e-9°: rounding noise); among equals the smallest change
        order = np.lexsort((np.abs(pts - v0), -np.round(g, 9)))
        return finish(float(pts[order[0]]), False, False, method, insensitive)

    roots = nearest_roots(ev.margin, pts, g, v0, start, xtol)
    candidates = [r if r == start else tidy(ev.margin, r, v0, lo, hi, lever.step) for r in roots]
    best = min(candidates, key=lambda v: abs(v - v0))
    return finish(best, True, False, method)


__all__ = [
    "TARGET_ANGLES", "OPS", "SCAN_SAMPLES", "REACH_TOL_DEG", "LeverError", "Target", "angle_value_deg",
    "AddBallast", "MoveBallast", "CgHeight", "Overdrive", "Compound", "Lever", "Plan", "brent_root", "plan",
    "search_limits", "setup_is_valid",
]
