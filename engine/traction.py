"""Which axle lets go: the load the tyres carry and Coulomb friction under driveline wind-up.

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
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

STATES = ("none", "front", "rear", "both", "lifted")
NONE, FRONT, REAR, BOTH, LIFTED = range(5)
HOLDING = (NONE, FRONT, REAR)


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
