"""An independent, deliberately plain implementation of the off-camber model (MODEL section 8).

Scalar `math`, one (slope, heading) at a time, shares no code with `engine/` (never import it).
It works differently from the engine on purpose:

- wheel loads: the four-wheel split, then, if a wheel is negative, the 3x3 linear system of the
  three remaining wheels (total, pitch moment, roll moment) solved by Cramer's rule;
- tip: the foot of the gravity line tested against the rectangle, the tip angle found by scanning
  slopes and refining with `scipy.optimize.brentq` on the distance to the nearest edge;
- first wheel lift: a scan of the four-wheel split loads plus brentq;
- hold angle: a scan up the slopes one heading at a time with a scalar traction rule (rigid
  Coulomb rule written afresh here, or any per-slope callable handed in), refined by halving.

Sources: Gillespie, *Fundamentals of Vehicle Dynamics*, SAE 1992, ch. 2 (grade loads); Milliken &
Milliken, *Race Car Vehicle Dynamics*, SAE 1995, ch. 18 (roll-moment split), ch. 2 (friction
circle); Papadopoulos & Rey, *Vehicle System Dynamics* 33(1), 2000 (support polygon).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Optional

from scipy.optimize import brentq


@dataclass(frozen=True)
class PlaneRig:
    weight_g: float
    wheelbase_mm: float
    cg_from_rear_mm: float
    cg_height_mm: float
    track_mm: float
    mu_front: tuple = (1.0, 0.8)
    mu_rear: tuple = (1.0, 0.8)
    rolling_resistance: float = 0.0
    overdriven: Optional[str] = None  # rigid rule: "front", "rear" or None
    front_share: Optional[float] = None  # None: by axle load


def _loads_and_moments(rig: PlaneRig, slope_deg: float, heading_deg: float):
    b_, p_ = math.radians(slope_deg), math.radians(heading_deg)
    W, L, b, h = rig.weight_g, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm
    nz = W * math.cos(b_)
    nf = W * (b * math.cos(b_) - h * math.sin(b_) * math.cos(p_)) / L
    m = W * h * math.sin(b_) * math.sin(p_)
    return nz, nf, nz - nf, m


def split_loads(rig: PlaneRig, slope_deg: float, heading_deg: float) -> list[float]:
    """FL, FR, RL, RR by the roll-moment split (may be negative)."""
    nz, nf, nr, m = _loads_and_moments(rig, slope_deg, heading_deg)
    xi = nf / nz if rig.front_share is None else rig.front_share
    d = m / rig.track_mm
    return [nf / 2 - xi * d, nf / 2 + xi * d, nr / 2 - (1 - xi) * d, nr / 2 + (1 - xi) * d]


def _det3(a):
    return (a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
            - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
            + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0]))


def wheel_loads(rig: PlaneRig, slope_deg: float, heading_deg: float) -> Optional[list[float]]:
    """FL, FR, RL, RR; None when no non-negative set exists (tipped)."""
    loads = split_loads(rig, slope_deg, heading_deg)
    if min(loads) >= 0:
        return loads
    nz, nf, _nr, m = _loads_and_moments(rig, slope_deg, heading_deg)
    L, half = rig.wheelbase_mm, rig.track_mm / 2
    # wheel positions (x ahead of the rear axle, y left); equations: sum N = nz,
    # sum N x = nf L (moments about the rear axle), sum N (−y) = m (roll moment to the right)
    pos = [(L, half), (L, -half), (0.0, half), (0.0, -half)]
    rhs = [nz, nf * L, m]
    lifted = loads.index(min(loads))
    keep = [i for i in range(4) if i != lifted]
    a = [[1.0] * 3, [pos[i][0] for i in keep], [-pos[i][1] for i in keep]]
    det = _det3(a)
    out = [0.0] * 4
    for k, i in enumerate(keep):
        ak = [row[:] for row in a]
        for r in range(3):
            ak[r][k] = rhs[r]
        out[i] = _det3(ak) / det
    if min(out) < -1e-9:
        return None
    return out


def foot(rig: PlaneRig, slope_deg: float, heading_deg: float) -> tuple[float, float]:
    b_, p_ = math.radians(slope_deg), math.radians(heading_deg)
    t = math.tan(b_)
    return rig.cg_from_rear_mm - rig.cg_height_mm * t * math.cos(p_), -rig.cg_height_mm * t * math.sin(p_)


def edge_room(rig: PlaneRig, slope_deg: float, heading_deg: float) -> float:
    """Distance from the foot to the nearest edge of the support rectangle; negative outside."""
    x, y = foot(rig, slope_deg, heading_deg)
    return min(x, rig.wheelbase_mm - x, rig.track_mm / 2 - y, rig.track_mm / 2 + y)


def _first_root(fn: Callable[[float], float], step=0.25, top=89.99) -> Optional[float]:
    """First slope from 0 where `fn` (positive at 0) reaches zero, by scan and brentq."""
    prev, fprev = 0.0, fn(0.0)
    s = step
    while s <= top + 1e-12:
        f = fn(s)
        if f <= 0:
            return brentq(fn, prev, s, xtol=1e-10) if fprev > 0 else prev
        prev, fprev = s, f
        s += step
    return None


def tip_deg(rig: PlaneRig, heading_deg: float) -> float:
    return _first_root(lambda s: edge_room(rig, s, heading_deg))


def wheel_lift_deg(rig: PlaneRig, heading_deg: float) -> Optional[float]:
    return _first_root(lambda s: min(split_loads(rig, s, heading_deg)))


def rigid_axles(rig: PlaneRig, nf, nr, f_req, mu_f, mu_r) -> str:
    """Which axle lets go under the rigid Coulomb rule: "none", "front", "rear" or "both".

    Under wind-up the pair grows until one contact reaches its static limit; the overdriven axle
    gets there first when ``μ_fast N_fast − μ_slow N_slow < F_req``, and the other must then carry
    the rest within its own static limit.
    """
    (fs, fk), (rs, rk) = mu_f, mu_r
    if rig.overdriven is None:
        return "none" if abs(f_req) <= fs * nf + rs * nr else "both"
    if rig.overdriven == "front":
        fast_n, slow_n, fast_s, fast_k, slow_s, slow_k, fast, slow = nf, nr, fs, fk, rs, rk, "front", "rear"
    else:
        fast_n, slow_n, fast_s, fast_k, slow_s, slow_k, fast, slow = nr, nf, rs, rk, fs, fk, "rear", "front"
    if fast_s * fast_n - slow_s * slow_n < f_req:  # fast axle lets go, driving forward
        return fast if abs(f_req - fast_k * fast_n) <= slow_s * slow_n else "both"
    return slow if abs(f_req + slow_k * slow_n) <= fast_s * fast_n else "both"  # slow axle dragged back


def plane_state(rig: PlaneRig, slope_deg: float, heading_deg: float, axles: Callable = None) -> str:
    """"hold", "slip", "slide", "crab" or "tip" at one (slope, heading).

    `axles(nf, nr, f_req, (μ's,f, μ'k,f), (μ's,r, μ'k,r))` names the axle that lets go (default
    the rigid rule above); friction is what the friction circle leaves.
    """
    if edge_room(rig, slope_deg, heading_deg) <= 0:
        return "tip"
    b_, p_ = math.radians(slope_deg), math.radians(heading_deg)
    _nz, nf, nr, _m = _loads_and_moments(rig, slope_deg, heading_deg)
    f_req = rig.weight_g * (math.sin(b_) * math.cos(p_) + rig.rolling_resistance * math.cos(b_))
    t = abs(math.tan(b_) * math.sin(p_))
    (fs, fk), (rs, rk) = rig.mu_front, rig.mu_rear
    if t >= min(fs, rs) - 1e-9:
        return "slide"
    circle = lambda mu: max(math.sqrt(max(mu * mu - t * t, 0.0)), 1e-6)  # noqa: E731
    mu_f = (circle(fs), min(circle(fk), circle(fs)))
    mu_r = (circle(rs), min(circle(rk), circle(rs)))
    if axles is None:
        state = rigid_axles(rig, nf, nr, f_req, mu_f, mu_r)
    else:
        state = axles(nf, nr, f_req, mu_f, mu_r)
    if state == "both":
        return "slip"
    if (state == "front" and t >= fk) or (state == "rear" and t >= rk):
        return "crab"
    return "hold"


def hold_deg(rig: PlaneRig, heading_deg: float, state: Callable = None, step=0.25) -> tuple[float, str]:
    """Top of the contiguous held range from 0 at one heading, and what ends it (halving to 1e-4 deg)."""
    state = state or plane_state
    s = 0.0
    if state(rig, 0.0, heading_deg) != "hold":
        return 0.0, state(rig, 0.0, heading_deg)
    while s + step < 90.0:
        nxt = s + step
        what = state(rig, nxt, heading_deg)
        if what != "hold":
            lo, hi = s, nxt
            while hi - lo > 1e-4:
                mid = (lo + hi) / 2
                w = state(rig, mid, heading_deg)
                if w == "hold":
                    lo = mid
                else:
                    hi, what = mid, w
            return (lo + hi) / 2, what
        s = nxt
    return 90.0, "none"
