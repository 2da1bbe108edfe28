"""Which axle lets go: the load the tyres carry, tyre slip and friction under driveline wind-up.

Two models share this module. `slip_traction_state` is the tyre-slip model (brush tyres, MODEL
section 5): the driveline fixes the ratio of the two tyres' tread speeds, the mismatch is carried
as slip, and an axle lets go only where its slip saturates the contact patch. Its rigid limit
(``c = inf`` on both axles) is `traction_state`, the Coulomb rule below.

Front and rear are locked together through the driveline. With any front/rear ground-speed
mismatch both cannot roll without slip, so the driveline winds up: an internal force pair pushes
the overdriven ("fast") axle forward and drags the other ("slow") axle back, on top of the split
that carries the load. Growing that pair from any starting split, the first contact to reach its
static limit ``μ_s N`` lets go, and then carries kinetic friction ``μ_k N``.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (grade resistance,
   rolling resistance, traction-limited performance of a four-wheel drive).
.. [2] J. Y. Wong, *Theory of Ground Vehicles*, 3rd ed., Wiley, 2001 (rolling resistance);
   J. Y. Wong, SAE 700723, 1970 (four-wheel-drive efficiency is best with equal front and rear
   slip: a speed mismatch is carried as internal wind-up).
.. [3] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (Coulomb static
   and kinetic friction).
.. [4] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., Butterworth-Heinemann, 2012, sec. 3.2
   (brush model; force against theoretical slip; full sliding at saturation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .overdrive import SAME_SPEED_TOL
from .tyre_brush import brush_psi, brush_psi_slope, slip_for_force, slip_from_theoretical

STATES = ("none", "front", "rear", "both", "lifted", "binds")
NONE, FRONT, REAR, BOTH, LIFTED, BINDS = range(6)
HOLDING = (NONE, FRONT, REAR)
# One rigid axle beside a compliant one is solved as a very stiff tyre: the rigid rule is this
# model's limit (MODEL section 5), and 1e6 per unit load puts the rigid axle's slip below 1e-5.
RIGID_STAND_IN = 1e6
# Most slip solves converge in under 10 safeguarded Newton steps; very stiff tyres fall back to
# bisection, which needs about 50 to reach 1e-12 of the bracket.
_SOLVE_STEPS = 60
_SOLVE_TOL = 1e-10  # share of the combined static grip


def required_force_g(weight_g, slope_deg, rolling_resistance=0.0, accel_g=0.0):
    """Force along the ground the tyres must supply in a steady climb.

    Parameters
    ----------
    weight_g : float
        Rig weight. [gf]
    slope_deg : array_like
        Slope, nose up positive. [deg]
    rolling_resistance : float, default 0
        Rolling-resistance coefficient ``c_rr``. [-]
    accel_g : float, default 0
        Acceleration along the slope on top of the steady climb. [g]

    Returns
    -------
    ndarray
        ``F_req = W (sin θ + c_rr cos θ + a_x)`` [1]_, [2]_. [gf] Negative on steep descents:
        the tyres must brake.
    """
    th = np.radians(np.asarray(slope_deg, dtype=float))
    return weight_g * (np.sin(th) + rolling_resistance * np.cos(th) + accel_g)


@dataclass(frozen=True)
class TractionState:
    """Per-slope traction result; every field is an array of the sweep's shape."""

    state: np.ndarray  # codes into STATES
    front_force_g: np.ndarray  # along the ground, up-slope positive [gf]; NaN when lifted
    rear_force_g: np.ndarray
    windup_g: np.ndarray  # internal pair on top of the grip-proportional split [gf]
    reserve_g: np.ndarray  # μ_s N − |F| of the gripping axle(s); negative: short by that much
    front_slip_pct: np.ndarray = field(default=None)  # κ [%]; NaN on a sliding or lifted axle
    rear_slip_pct: np.ndarray = field(default=None)
    front_grip_used: np.ndarray = field(default=None)  # |F|/(μ_s N); 1 when sliding, NaN lifted
    rear_grip_used: np.ndarray = field(default=None)


def fast_slips_first(n_fast_g, n_slow_g, required_g, mu_fast_static, mu_slow_static):
    """True where the overdriven axle reaches its static limit before the other one.

    Notes
    -----
    With fast-axle force ``F_fast0 + P`` and slow-axle force ``F_slow0 − P`` (``F_fast0 + F_slow0
    = F_req``), the fast axle hits ``+μ_s N_fast`` first when
    ``μ_s,fast N_fast − μ_s,slow N_slow < F_req``; the starting split drops out [2]_, [3]_.
    """
    return mu_fast_static * n_fast_g - mu_slow_static * n_slow_g < required_g


def traction_state(front_normal_g, rear_normal_g, required_g, mu_front, mu_rear, overdriven):
    """Slip state and axle forces of a driveline-locked two-axle rig.

    Parameters
    ----------
    front_normal_g, rear_normal_g : array_like
        Normal forces. [gf]
    required_g : array_like
        Force the tyres must supply along the ground (see `required_force_g`). [gf]
    mu_front, mu_rear : tuple of float
        ``(μ_static, μ_kinetic)`` of each axle. [-]
    overdriven : {"front", "rear", None}
        The axle whose tyres want to run faster over the ground.

    Returns
    -------
    TractionState
        ``lifted`` where either normal force is <= 0 (outranks the rest). With no overdrive the rig
        holds while ``|F_req| <= μ_s,f N_f + μ_s,r N_r`` (state ``none``), the load split in
        proportion to each axle's static grip. Otherwise the axle that reaches its static limit
        first under wind-up slips with ``μ_k N`` and the other must carry the rest within
        ``μ_s N``; if it cannot, ``both`` slip and each carries ``μ_k N`` in the direction it was
        pushed.
    """
    nf, nr, f_req = np.broadcast_arrays(
        np.asarray(front_normal_g, float), np.asarray(rear_normal_g, float), np.asarray(required_g, float)
    )
    (msf, mkf), (msr, mkr) = mu_front, mu_rear
    cap = msf * nf + msr * nr
    with np.errstate(invalid="ignore", divide="ignore"):
        grip_share_f = np.where(cap > 0, msf * nf / cap, 0.5)
    ref_f = f_req * grip_share_f  # the split with no wind-up

    if overdriven is None:
        holds = np.abs(f_req) <= cap
        sgn = np.sign(f_req)
        front = np.where(holds, ref_f, sgn * mkf * nf)
        rear = np.where(holds, f_req - ref_f, sgn * mkr * nr)
        state = np.where(holds, NONE, BOTH)
        windup = np.zeros_like(f_req)
        reserve = cap - np.abs(f_req)
    else:
        if overdriven == "front":
            n_fa, n_sl, ms_fa, mk_fa, ms_sl, mk_sl, code_fa, code_sl = nf, nr, msf, mkf, msr, mkr, FRONT, REAR
        elif overdriven == "rear":
            n_fa, n_sl, ms_fa, mk_fa, ms_sl, mk_sl, code_fa, code_sl = nr, nf, msr, mkr, msf, mkf, REAR, FRONT
        else:
            raise ValueError(f"overdriven must be 'front', 'rear' or None, not {overdriven!r}")
        fast_first = fast_slips_first(n_fa, n_sl, f_req, ms_fa, ms_sl)
        # fast axle spins forward at its kinetic limit; the slow one carries the rest
        slow_if_fast = f_req - mk_fa * n_fa
        # slow axle is dragged back at its kinetic limit; the fast one carries the rest
        fast_if_slow = f_req + mk_sl * n_sl
        reserve = np.where(
            fast_first, ms_sl * n_sl - np.abs(slow_if_fast), ms_fa * n_fa - np.abs(fast_if_slow)
        )
        holds = reserve >= 0
        f_fast = np.where(
            fast_first,
            mk_fa * n_fa,
            np.where(holds, fast_if_slow, np.sign(fast_if_slow) * mk_fa * n_fa),
        )
        f_slow = np.where(
            fast_first,
            np.where(holds, slow_if_fast, np.sign(slow_if_fast) * mk_sl * n_sl),
            -mk_sl * n_sl,
        )
        state = np.where(holds, np.where(fast_first, code_fa, code_sl), BOTH)
        front, rear = (f_fast, f_slow) if overdriven == "front" else (f_slow, f_fast)
        windup = (f_fast - ref_f) if overdriven == "front" else (f_fast - (f_req - ref_f))

    lifted = (nf <= 0) | (nr <= 0)
    nan = np.full_like(f_req, np.nan)
    return TractionState(
        state=np.where(lifted, LIFTED, state).astype(np.int8),
        front_force_g=np.where(lifted, nan, front),
        rear_force_g=np.where(lifted, nan, rear),
        windup_g=np.where(lifted, nan, windup),
        reserve_g=np.where(lifted, nan, reserve),
    )


def _grip_used(force, normal, mu_static, sliding):
    with np.errstate(invalid="ignore", divide="ignore"):
        used = np.abs(force) / (mu_static * normal)
    return np.where(sliding, 1.0, used)


def _rigid_slip_state(nf, nr, f_req, mu_front, mu_rear, speed_ratio):
    """The Coulomb rule per element (``c = inf`` on both axles), slips 0 on gripping axles."""
    (msf, _mkf), (msr, _mkr) = mu_front, mu_rear  # scalars or arrays: `traction_state` broadcasts
    ratio = np.broadcast_to(np.asarray(speed_ratio, float), f_req.shape)
    tol = SAME_SPEED_TOL  # below it the mismatch is rounding noise, not an overdrive
    pick = {None: np.abs(ratio - 1.0) <= tol, "front": ratio - 1.0 > tol, "rear": ratio - 1.0 < -tol}
    parts = {k: traction_state(nf, nr, f_req, mu_front, mu_rear, k) for k, m in pick.items() if m.any()}
    out = {}
    for name in ("state", "front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        value = np.zeros(f_req.shape)
        for k, ts in parts.items():
            value = np.where(pick[k], getattr(ts, name), value)
        out[name] = value
    state = out["state"]
    slide_f = (state == FRONT) | (state == BOTH)
    slide_r = (state == REAR) | (state == BOTH)
    lifted = state == LIFTED
    nan = np.full(f_req.shape, np.nan)
    return TractionState(
        state=state.astype(np.int8), front_force_g=out["front_force_g"], rear_force_g=out["rear_force_g"],
        windup_g=out["windup_g"], reserve_g=out["reserve_g"],
        front_slip_pct=np.where(slide_f | lifted, nan, 0.0), rear_slip_pct=np.where(slide_r | lifted, nan, 0.0),
        front_grip_used=np.where(lifted, nan, _grip_used(out["front_force_g"], nf, msf, slide_f)),
        rear_grip_used=np.where(lifted, nan, _grip_used(out["rear_force_g"], nr, msr, slide_r)),
    )


def slip_traction_state(front_normal_g, rear_normal_g, required_g, mu_front, mu_rear,
                        stiffness_front, stiffness_rear, speed_ratio):
    """Onset slip state of a driveline-locked rig with brush-model tyres (MODEL section 5).

    Parameters
    ----------
    front_normal_g, rear_normal_g : array_like
        Normal forces. [gf]
    required_g : array_like
        Force the tyres must supply along the ground (see `required_force_g`). [gf]
    mu_front, mu_rear : tuple
        ``(μ_static, μ_kinetic)`` of each axle; scalars or arrays that broadcast. [-]
    stiffness_front, stiffness_rear : float
        Slip stiffness per unit load ``c`` (> 3 μ_s), or ``math.inf`` for a rigid tyre. [-]
    speed_ratio : array_like
        ``K/ρ``: the driveline keeps the front tread speed ratio at this multiple of the rear's,
        ``s_f = (K/ρ) s_r`` (on a uniform slope ``ρ = 1``). [-] Must be > 0.

    Returns
    -------
    TractionState
        ``lifted`` where either normal force is <= 0. Otherwise the rig set down unwound and
        starting to creep: ``F_f(s_f) + F_r(s_r) = F_req`` is solved for ``s_r`` (the left side
        never decreases in ``s_r``); no solution below ``μ_s,f N_f + μ_s,r N_r`` in size is
        ``both``. An axle at ``|λ| >= 1`` at the solution lets go and carries ``±μ_k N``; the other
        must then carry the rest within ``μ_s N`` on its brush curve, else ``both``. Slips are κ
        [%] (NaN on a sliding axle), grip used ``|F|/(μ_s N)`` (1 on a sliding axle), the wind-up
        pair is the fast axle's force less its grip-proportional share of ``F_req``.

    Notes
    -----
    Brush model with parabolic pressure [4]_; the mismatch is carried as slip and wind-up [2]_.
    With ``c = inf`` on both axles this is exactly `traction_state` (the Coulomb rule).
    """
    nf, nr, f_req, ratio = np.broadcast_arrays(
        np.asarray(front_normal_g, float), np.asarray(rear_normal_g, float),
        np.asarray(required_g, float), np.asarray(speed_ratio, float))
    if math.isinf(stiffness_front) and math.isinf(stiffness_rear):
        return _rigid_slip_state(nf, nr, f_req, mu_front, mu_rear, ratio)
    cf = RIGID_STAND_IN if math.isinf(stiffness_front) else float(stiffness_front)
    cr = RIGID_STAND_IN if math.isinf(stiffness_rear) else float(stiffness_rear)
    (msf, mkf), (msr, mkr) = mu_front, mu_rear
    msf, mkf, msr, mkr = (np.broadcast_to(np.asarray(m, float), f_req.shape) for m in (msf, mkf, msr, mkr))
    lifted = (nf <= 0) | (nr <= 0)
    nf_s, nr_s = np.where(lifted, 1.0, nf), np.where(lifted, 1.0, nr)  # keep the solve finite
    grip_f, grip_r = msf * nf_s, msr * nr_s
    cap = grip_f + grip_r
    a_f, a_r = 3.0 * msf / cf, 3.0 * msr / cr  # theoretical slip at which each patch saturates

    # Unknown: the rear's theoretical slip σ_r; the driveline gives σ_f = 1 − (1 − σ_r)/ratio.
    def forces(sig_r):
        lam_f = (1.0 - (1.0 - sig_r) / ratio) / a_f
        lam_r = sig_r / a_r
        return lam_f, lam_r, grip_f * brush_psi(lam_f), grip_r * brush_psi(lam_r)

    lo = np.minimum(-a_r, 1.0 - ratio * (1.0 + a_f))  # both patches sliding backwards
    hi = np.maximum(a_r, 1.0 - ratio * (1.0 - a_f))  # both sliding forwards
    target = np.clip(f_req, -cap, cap)
    # start from the linearised split (both patches in their linear range), inside the bracket
    lin = (target - cf * nf_s * (1.0 - 1.0 / ratio)) / (cf * nf_s / ratio + cr * nr_s)
    sig = np.clip(lin, lo + 0.01 * (hi - lo), hi - 0.01 * (hi - lo))
    short = np.abs(f_req) >= cap  # no solution below the combined static grip
    settled = short | lifted  # nothing to solve: both patches slide, or an axle is off the ground
    sig = np.where(short, np.where(f_req > 0, hi, lo), sig)
    for _ in range(_SOLVE_STEPS):
        lam_f, lam_r, ff, fr = forces(sig)
        resid = ff + fr - target
        done = (np.abs(resid) <= _SOLVE_TOL * cap) | settled
        if done.all():
            break
        lo = np.where(resid < 0, sig, lo)
        hi = np.where(resid > 0, sig, hi)
        slope = grip_f * brush_psi_slope(lam_f) / (a_f * ratio) + grip_r * brush_psi_slope(lam_r) / a_r
        with np.errstate(divide="ignore", invalid="ignore"):
            step = sig - resid / slope
        inside = (slope > 0) & (step >= lo) & (step <= hi)
        sig = np.where(done, sig, np.where(inside, step, 0.5 * (lo + hi)))
    lam_f, lam_r, ff, fr = forces(sig)
    sat_f, sat_r = np.abs(lam_f) >= 1.0, np.abs(lam_r) >= 1.0

    # One axle lets go: kinetic friction in its direction of slip, the other carries the rest.
    kin_f, kin_r = np.sign(lam_f) * mkf * nf_s, np.sign(lam_r) * mkr * nr_s
    rest_r, rest_f = f_req - kin_f, f_req - kin_r
    only_f = sat_f & ~sat_r & ~short
    only_r = sat_r & ~sat_f & ~short
    holds_r = np.abs(rest_r) <= grip_r
    holds_f = np.abs(rest_f) <= grip_f
    state = np.full(f_req.shape, NONE, dtype=np.int8)
    state = np.where(only_f, np.where(holds_r, FRONT, BOTH), state)
    state = np.where(only_r, np.where(holds_f, REAR, BOTH), state)
    state = np.where((sat_f & sat_r) | short, BOTH, state)

    sgn = np.sign(f_req)
    front = np.select([short, only_f, only_r & holds_f, only_r, sat_f & sat_r],
                      [sgn * mkf * nf_s, kin_f, rest_f, np.sign(rest_f) * mkf * nf_s, kin_f], ff)
    rear = np.select([short, only_r, only_f & holds_r, only_f, sat_f & sat_r],
                     [sgn * mkr * nr_s, kin_r, rest_r, np.sign(rest_r) * mkr * nr_s, kin_r], f_req - ff)
    slide_f = (state == FRONT) | (state == BOTH)
    slide_r = (state == REAR) | (state == BOTH)
    # slips: at the solution, or on the gripping axle's own curve once the other has let go
    sig_f_none = 1.0 - (1.0 - sig) / ratio
    sig_f = np.where(state == REAR, slip_for_force(front, nf_s, msf, cf), sig_f_none)
    sig_r = np.where(state == FRONT, slip_for_force(rear, nr_s, msr, cr), sig)
    fast_front = ratio >= 1.0
    share_f = grip_f / cap
    windup = np.where(fast_front, front - f_req * share_f, rear - f_req * (1.0 - share_f))
    reserve = np.select(
        [state == NONE, state == FRONT, state == REAR, short],
        [np.minimum(grip_f - np.abs(front), grip_r - np.abs(rear)), grip_r - np.abs(rest_r),
         grip_f - np.abs(rest_f), cap - np.abs(f_req)],
        np.where(only_f, grip_r - np.abs(rest_r), np.where(only_r, grip_f - np.abs(rest_f),
                                                           cap - np.abs(f_req))))
    nan = np.full(f_req.shape, np.nan)
    gone = lambda x: np.where(lifted, nan, x)  # noqa: E731
    return TractionState(
        state=np.where(lifted, LIFTED, state).astype(np.int8),
        front_force_g=gone(front), rear_force_g=gone(rear), windup_g=gone(windup), reserve_g=gone(reserve),
        front_slip_pct=gone(np.where(slide_f, nan, 100.0 * slip_from_theoretical(sig_f))),
        rear_slip_pct=gone(np.where(slide_r, nan, 100.0 * slip_from_theoretical(sig_r))),
        front_grip_used=gone(_grip_used(front, nf_s, msf, slide_f)),
        rear_grip_used=gone(_grip_used(rear, nr_s, msr, slide_r)),
    )
