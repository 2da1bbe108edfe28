"""An independent, deliberately plain implementation of the slope and traction model.

Scalar `math` only, one slope at a time, named angles found by scanning at 0.01 degrees and
refining with `scipy.optimize.brentq`. It shares no code with `engine/` (and must never import
it): the tests compare the two, so a mistake has to be made twice, in two different styles, to
pass unnoticed.

The equations are the textbook ones, written out again here from the sources:

- axle loads on a grade, moments about the rear contact: Gillespie, *Fundamentals of Vehicle
  Dynamics*, SAE 1992, ch. 2 (eq. 2-7 form ``W_f = W (b cos θ − h sin θ − h a_x)/L``);
- sidehill roll: NHTSA static stability factor ``T/(2h)`` (68 FR 59250, 2003);
- traction force for a steady climb ``W (sin θ + c_rr cos θ + a_x)``: Gillespie ch. 2, Wong,
  *Theory of Ground Vehicles*, 3rd ed.;
- Coulomb static/kinetic friction at each axle: Serway & Beichner, 5th ed., ch. 5;
- gear train value as the product of driven/driver: Shigley's *Mechanical Engineering Design*,
  ch. 13;
- driveline wind-up: the internal pair grows until one contact reaches ``μ_s N`` (the rule is
  derived afresh in `first_to_let_go`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

from scipy.optimize import brentq

SCAN_STEP_DEG = 0.01
SAME_SPEED = 1e-9  # |k - 1| below this is "no overdrive"


@dataclass(frozen=True)
class RefRig:
    """Everything the model needs, as plain numbers. Lengths mm, weight gf, angles deg."""

    weight_g: float
    wheelbase_mm: float
    cg_from_rear_mm: float  # b
    cg_height_mm: float  # h
    track_mm: float
    speed_ratio: float  # k: front ground speed per rear ground speed
    mu_front: tuple = (1.0, 0.8)  # (static, kinetic)
    mu_rear: tuple = (1.0, 0.8)
    rolling_resistance: float = 0.0
    accel_g: float = 0.0
    load: str = "climb"

    @property
    def overdriven(self) -> Optional[str]:
        e = self.speed_ratio - 1.0
        if abs(e) <= SAME_SPEED:
            return None
        return "front" if e > 0 else "rear"


def train_value(stages) -> float:
    """Input turns per output turn of gears in series: product of driven/driver (Shigley ch. 13)."""
    out = 1.0
    for driver, driven in stages:
        out = out * driven / driver
    return out


def ref_rig_from_setup(setup, *, load: Optional[str] = None, accel_g: Optional[float] = None) -> RefRig:
    """Read a `Setup` by attribute only (no engine code) and combine its ballast by hand."""
    r = setup.rig
    mass = r.mass_g
    moment_x = r.mass_g * r.front_bias_pct / 100.0 * r.wheelbase_mm
    moment_z = r.mass_g * r.cg_height_mm
    for item in r.ballast:
        mass += item.mass_g
        moment_x += item.mass_g * item.x_mm
        moment_z += item.mass_g * item.z_mm
    d = setup.driveline
    if d.front_stages is not None and d.rear_stages is not None:
        axle_ratio = train_value(d.rear_stages) / train_value(d.front_stages)
    else:
        axle_ratio = 1.0 + (d.overdrive_pct or 0.0) / 100.0
    g = setup.grip
    pick = lambda own, common: common if own is None else own  # noqa: E731
    load = "climb" if load is None else load
    accel = setup.terrain.accel_g if accel_g is None else accel_g
    return RefRig(
        weight_g=mass,
        wheelbase_mm=r.wheelbase_mm,
        cg_from_rear_mm=moment_x / mass,
        cg_height_mm=moment_z / mass,
        track_mm=r.track_mm,
        speed_ratio=axle_ratio * r.tire_dia_front_mm / r.tire_dia_rear_mm,
        mu_front=(pick(g.front_mu_static, g.mu_static), pick(g.front_mu_kinetic, g.mu_kinetic)),
        mu_rear=(pick(g.rear_mu_static, g.mu_static), pick(g.rear_mu_kinetic, g.mu_kinetic)),
        rolling_resistance=g.rolling_resistance,
        accel_g=accel if load == "climb" else 0.0,
        load=load,
    )


# --- statics (Gillespie ch. 2) -----------------------------------------------------------------

def axle_loads(rig: RefRig, slope_deg: float) -> tuple[float, float]:
    """(N_front, N_rear) [gf] from moments about the rear contact point."""
    t = math.radians(slope_deg)
    W, L, b, h = rig.weight_g, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm
    # Moments about the rear contact: N_f L = W cos t * b - W sin t * h - W a_x * h
    n_front = (W * math.cos(t) * b - W * math.sin(t) * h - W * rig.accel_g * h) / L
    # Forces normal to the slope: N_f + N_r = W cos t
    n_rear = W * math.cos(t) - n_front
    return n_front, n_rear


def required_force(rig: RefRig, slope_deg: float) -> float:
    """Force the tyres must supply along the ground [gf]; 0 with no load."""
    if rig.load != "climb":
        return 0.0
    t = math.radians(slope_deg)
    return rig.weight_g * (math.sin(t) + rig.rolling_resistance * math.cos(t) + rig.accel_g)


# --- which axle lets go (Coulomb friction + wind-up) -------------------------------------------

def first_to_let_go(n_fast, n_slow, f_req, mu_fast_s, mu_slow_s, start_fast=None) -> str:
    """"fast" or "slow": which contact reaches its static limit first as the wind-up pair grows.

    The fast axle carries ``F0 + P``, the slow one ``F_req − F0 − P``; P grows from 0. The fast
    one reaches ``+μ N_fast`` at ``P_fast = μ N_fast − F0``, the slow one reaches ``−μ N_slow`` at
    ``P_slow = μ N_slow + F_req − F0``. Compare the two (F0 cancels; it is kept to show that).
    """
    f0 = 0.0 if start_fast is None else start_fast
    p_fast = mu_fast_s * n_fast - f0
    p_slow = mu_slow_s * n_slow + (f_req - f0)
    return "fast" if p_fast < p_slow else "slow"


@dataclass
class RefState:
    name: str  # none / front / rear / both / lifted
    front_force: float = math.nan
    rear_force: float = math.nan
    reserve: float = math.nan


def state_at(rig: RefRig, slope_deg: float) -> RefState:
    n_f, n_r = axle_loads(rig, slope_deg)
    if n_f <= 0 or n_r <= 0:
        return RefState("lifted")
    f_req = required_force(rig, slope_deg)
    (s_f, k_f), (s_r, k_r) = rig.mu_front, rig.mu_rear
    od = rig.overdriven
    if od is None:
        grip = s_f * n_f + s_r * n_r
        if abs(f_req) <= grip:
            return RefState("none", reserve=grip - abs(f_req))
        return RefState("both", reserve=grip - abs(f_req))
    if od == "front":
        n_fast, n_slow, s_fast, k_fast, s_slow, k_slow = n_f, n_r, s_f, k_f, s_r, k_r
    else:
        n_fast, n_slow, s_fast, k_fast, s_slow, k_slow = n_r, n_f, s_r, k_r, s_f, k_f
    if first_to_let_go(n_fast, n_slow, f_req, s_fast, s_slow) == "fast":
        fast = k_fast * n_fast  # spinning forward
        slow = f_req - fast
        reserve = s_slow * n_slow - abs(slow)
        name = od if reserve >= 0 else "both"
    else:
        slow = -k_slow * n_slow  # dragged backwards
        fast = f_req - slow
        reserve = s_fast * n_fast - abs(fast)
        name = ("rear" if od == "front" else "front") if reserve >= 0 else "both"
    front, rear = (fast, slow) if od == "front" else (slow, fast)
    return RefState(name, front, rear, reserve)


def fast_first_margin(rig: RefRig, slope_deg: float) -> float:
    """``μ_s,fast N_fast − μ_s,slow N_slow − F_req`` [gf]: negative where the fast axle goes first."""
    n_f, n_r = axle_loads(rig, slope_deg)
    f_req = required_force(rig, slope_deg)
    s_f, s_r = rig.mu_front[0], rig.mu_rear[0]
    if rig.overdriven == "rear":
        return s_r * n_r - s_f * n_f - f_req
    return s_f * n_f - s_r * n_r - f_req


def holding_margin(rig: RefRig, slope_deg: float) -> float:
    """Positive while the rig holds the slope, negative once it lifts or both axles slip."""
    n_f, n_r = axle_loads(rig, slope_deg)
    if n_f <= 0 or n_r <= 0:
        return min(n_f, n_r) - 1e-9 * rig.weight_g
    s = state_at(rig, slope_deg)
    return s.reserve if s.name != "both" else min(s.reserve, -1e-9 * rig.weight_g)


# --- named angles: scan at 0.01 degrees, refine with brentq ------------------------------------

def _scan_roots(fn, lo_deg, hi_deg, step=SCAN_STEP_DEG):
    """Every sign change of `fn` on [lo, hi], refined with brentq, ascending: [(angle, rising)]."""
    n = int(round((hi_deg - lo_deg) / step))
    out = []
    prev_t, prev_v = lo_deg, fn(lo_deg)
    for i in range(1, n + 1):
        t = lo_deg + i * step
        v = fn(t)
        if (prev_v > 0) != (v > 0):
            root = brentq(fn, prev_t, t, xtol=1e-10) if prev_v != 0 and v != 0 else (prev_t if prev_v == 0 else t)
            out.append((root, v > 0))
        prev_t, prev_v = t, v
    return out


def _crossing(fn, lo_deg, hi_deg, rising: bool) -> Optional[float]:
    roots = [r for r, up in _scan_roots(fn, lo_deg, hi_deg) if up == rising]
    return roots[0] if roots else None


def balance_deg(rig: RefRig) -> Optional[float]:
    """Slope where N_f = N_r (front share falls through one half as the slope rises)."""
    return _crossing(lambda t: (lambda nf, nr: (nf - nr) / rig.weight_g)(*axle_loads(rig, t)),
                     -89.99, 89.99, rising=False)


def front_lift_deg(rig: RefRig) -> Optional[float]:
    return _crossing(lambda t: axle_loads(rig, t)[0] / rig.weight_g, -89.99, 89.99, rising=False)


def rear_lift_deg(rig: RefRig) -> Optional[float]:
    return _crossing(lambda t: axle_loads(rig, t)[1] / rig.weight_g, -89.99, 89.99, rising=True)


def sidehill_roll_deg(rig: RefRig) -> float:
    """Side slope where the uphill wheels carry nothing (moments about the downhill contact)."""
    W, T, h = rig.weight_g, rig.track_mm, rig.cg_height_mm
    uphill = lambda t: W * (math.cos(math.radians(t)) * T / 2 - math.sin(math.radians(t)) * h) / T  # noqa: E731
    return _crossing(uphill, 0.0, 89.99, rising=False)


def sidehill_slide_deg(rig: RefRig) -> float:
    """Side slope where the first axle slides sideways (driveline unwound).

    Each axle's static share of the weight, ``W b/L`` front and ``W (L − b)/L`` rear, stands
    on the side slope like a block on an incline (Serway & Beichner ch. 5): it needs a sideways
    force of that share times ``sin φ`` and can give at most ``μ_s`` times that share times
    ``cos φ``. The first of the two spare-grip curves to cross zero is the slide.
    """
    W, L, b = rig.weight_g, rig.wheelbase_mm, rig.cg_from_rear_mm
    slides = []
    for share, mu in ((W * b / L, rig.mu_front[0]), (W * (L - b) / L, rig.mu_rear[0])):
        def spare(t, share=share, mu=mu):
            c, s = math.cos(math.radians(t)), math.sin(math.radians(t))
            return (mu * share * c - share * s) / W

        slides.append(_crossing(spare, 0.0, 89.99, rising=False))
    return min(t for t in slides if t is not None)


def handover_deg(rig: RefRig) -> Optional[float]:
    """Smallest slope >= 0 where the overdriven axle is the first to let go; None if never < 90.

    Only where both axles touch the ground: once one is off it, nothing is slipping.
    """
    if rig.overdriven is None:
        return None

    def fn(t):
        n_f, n_r = axle_loads(rig, t)
        if n_f <= 0 or n_r <= 0:  # lifted: not a handover, whatever the margin says
            return max(-min(n_f, n_r), 1e-9 * rig.weight_g) / rig.weight_g
        return fast_first_margin(rig, t) / rig.weight_g

    # an exact tie at 0 deg (margin 0) that falls at once hands over at 0 deg
    if fn(0.0) < 0 or (fn(0.0) <= 1e-12 and fn(SCAN_STEP_DEG) < 0):
        return 0.0
    return _crossing(fn, 0.0, 89.99, rising=False)


def max_grade_deg(rig: RefRig) -> tuple[float, str]:
    """Top of the holding range from 0 and what ends it ("slip" or "lift")."""
    fn = lambda t: holding_margin(rig, t) / rig.weight_g  # noqa: E731
    # a margin of exactly 0 at 0 deg that falls at once (e.g. throttle a_x = mu) holds 0 deg only
    if fn(0.0) < 0 or (fn(0.0) <= 1e-12 and fn(SCAN_STEP_DEG) < 0):
        end = 0.0
    else:
        end = _crossing(fn, 0.0, 89.99, rising=False)
        if end is None:
            return 90.0, "lift"
    after = state_at(rig, end + 1e-6)
    return end, ("lift" if after.name == "lifted" else "slip")


def state_grid(rig: RefRig, lo_deg=-90.0, hi_deg=90.0, step=SCAN_STEP_DEG):
    """(angles, state names) on a fine grid, for finding where the state changes."""
    n = int(round((hi_deg - lo_deg) / step))
    angles = [lo_deg + i * step for i in range(n + 1)]
    return angles, [state_at(rig, t).name for t in angles]


def transitions(angles, names) -> list[float]:
    """Mid-points between neighbouring grid angles whose states differ."""
    return [(a0 + a1) / 2 for a0, a1, s0, s1 in zip(angles, angles[1:], names, names[1:]) if s0 != s1]
