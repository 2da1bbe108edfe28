"""Goal-seek root finding: scan the lever, then bracket and solve, whatever shape the margin has.

Write ``g(v)`` for the target's margin at lever value ``v`` (``g >= 0`` where the target is met).
Nothing here assumes ``g`` is monotone, continuous or a step: the traction model with tyre slip
makes the handover and the max grade move continuously with the overdrive, the rigid rule makes
them step, and a lever value the setup file would refuse counts as a large negative margin.

`scan_points` samples the lever evenly within one `scale` of the current value (the same points
whatever the limits are) and then at distances growing by half each time out to the limits, so a
limit wider than needed adds a few far samples and never moves the near ones. `nearest_roots`
takes, on each side of the current value, the feasible sample nearest to it and its infeasible
neighbour toward it as a bracket, and solves it with Brent's method [1]_. A feasible window
narrower than the scan step can be missed.

References
----------
.. [1] R. P. Brent, *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973, ch. 4
   (a root finder combining bisection, secant and inverse quadratic interpolation that keeps a
   bracket).
"""

from __future__ import annotations

import math
from typing import Callable, Iterable

import numpy as np

# Beyond one scale from the current value the scan steps grow by this factor each time.
GROWTH = 1.5
# Reach targets to 0.01° or better: the rounded answer may exceed the raw root's margin by this.
REACH_TOL_DEG = 0.005


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
    convergence is guaranteed [1]_.
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


def scan_points(v0: float, lo: float, hi: float, scale: float, samples: int,
                extra: Iterable[float] = ()) -> np.ndarray:
    """Lever values to scan: sorted, unique, within ``[lo, hi]``.

    Parameters
    ----------
    v0 : float
        The current value (clipped into the limits it is a sample too). [lever unit]
    lo, hi : float
        Limits, already cut to the lever's domain. [lever unit]
    scale : float
        The span a builder usually works in; ``samples`` points cover it, anchored on ``v0``.
    samples : int
        Points per `scale`.
    extra : iterable of float
        Points an even scan would step over (kept when inside the limits).
    """
    step = scale / max(int(samples) - 1, 1)
    k = np.arange(-(samples - 1), samples)
    near = v0 + step * k
    far = []
    d = scale * GROWTH
    reach = max(hi - v0, v0 - lo, 0.0)
    while d < reach:
        far += [v0 - d, v0 + d]
        d *= GROWTH
    pts = np.concatenate((near, far, [lo, hi, min(max(v0, lo), hi)], [e for e in extra if lo <= e <= hi]))
    pts = pts[np.isfinite(pts) & (pts >= lo) & (pts <= hi)]
    return sorted_unique(pts)


def sorted_unique(values) -> np.ndarray:
    """The distinct values, ascending: `np.unique` for plain floats without its import of `numpy.ma`
    (7 ms and a megabyte the tuner's suggestion worker would otherwise load)."""
    pts = np.sort(np.asarray(values, dtype=float).ravel())
    return pts[np.concatenate(([True], pts[1:] != pts[:-1]))] if pts.size else pts


def outward_margins(margin: Callable[[float], float], pts: np.ndarray, v0: float) -> np.ndarray:
    """Margins at `pts`, evaluated outward from `v0` on each side and stopping at the first
    feasible sample there (NaN where not needed): the cost grows with the distance to the answer,
    not with how wide the limits are. Points at `v0` itself are evaluated too."""
    g = np.full(pts.shape, np.nan)
    for i in np.flatnonzero(pts == v0):
        g[i] = margin(float(pts[i]))
    for side in (np.flatnonzero(pts < v0)[::-1], np.flatnonzero(pts > v0)):
        for i in side:
            g[i] = margin(float(pts[i]))
            if g[i] >= 0:
                break
    return g


def nearest_roots(margin: Callable[[float], float], pts: np.ndarray, g: np.ndarray, v0: float,
                  start: float, xtol: float) -> list[float]:
    """On each side of `v0`, the root between the nearest feasible sample and its infeasible
    neighbour toward `v0` (or the sample itself when it is the clipped current value).

    Returns the feasible end of each final bracket: a value that meets the target.
    """
    with np.errstate(invalid="ignore"):
        feasible = g >= 0  # NaN (not evaluated) is not feasible
    out = []
    for side in (pts < v0, pts > v0):
        idx = np.flatnonzero(feasible & side)
        if idx.size == 0:
            continue
        i = int(idx[np.argmin(np.abs(pts[idx] - v0))])
        p = float(pts[i])
        if p == start:
            # the current value lies outside the limits and the nearest limit already meets it
            out.append(p)
            continue
        j = i - 1 if p > v0 else i + 1
        q = float(pts[j])
        x, fx, other, _, _ = brent_root(margin, q, p, float(g[j]), float(g[i]), xtol)
        out.append(x if fx >= 0 else other)
    return out


def decimals(step: float) -> int:
    return max(0, -int(math.floor(math.log10(step) + 1e-9)))


def tidy(margin: Callable[[float], float], value: float, away_from: float, lo: float, hi: float,
         step: float) -> float:
    """`value` rounded to the lever's display `step` (or a finer one), away from the infeasible
    side, when that keeps the target met and adds at most `REACH_TOL_DEG` to the margin."""
    raw_margin = margin(value)
    direction = 1.0 if value >= away_from else -1.0
    for extra in range(6):
        fine = step * 10.0 ** (-extra)
        q = value / fine
        r = (math.ceil(q - 1e-9) if direction > 0 else math.floor(q + 1e-9)) * fine
        r = round(min(max(r, lo), hi), decimals(fine))
        m = margin(r)
        if m >= 0 and m <= max(raw_margin, 0.0) + REACH_TOL_DEG:
            return r
    return value


__all__ = ["GROWTH", "REACH_TOL_DEG", "brent_root", "scan_points", "outward_margins", "nearest_roots", "tidy", "decimals"]
