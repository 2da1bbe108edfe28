"""Two-contact statics: front and rear tyres on ground of different angles (crests, ledges, edges).

Planar, quasi-static rigid body. Each axle is one contact ``i`` with surface angle ``α_i``,
normal ``n_i = (−sin α_i, cos α_i)`` and tangent ``t_i = (cos α_i, sin α_i)`` (x forward, z up).
The ground pushes on contact ``i`` with ``N_i n_i + F_i t_i``; rolling resistance adds
``−c_rr N_i t_i`` (it opposes travel, like the ``c_rr cos θ`` term of a uniform climb). Weight
``W`` acts down at the CG and the inertia force ``W a_x`` acts at the CG against the chassis
direction ``(cos φ, sin φ)``.

Four unknowns ``N_f, F_f, N_r, F_r`` and three equilibrium equations (Σx, Σz, Σ moments about
the CG); the slip state of the driveline supplies the fourth (``F = ±μ N`` on one axle), so each
candidate state is a 3×3 linear system. All candidates lie on one line of equilibrium solutions,
so one 3×3 system per position (with two right-hand sides: a point on the line and its
direction, solved for every position at once with ``numpy.linalg.solve`` on stacked matrices)
gives every candidate in closed form.

Which candidate holds (Coulomb wind-up): the equilibrium solutions form a line, and moving along
it with the fast-axle force ``P = F_fast`` is the wind-up pair growing. The fast axle meets its
static limit at ``P_A = F_fast(A)`` (candidate A: ``F_fast = +μ_s N_fast``), the slow axle at
``P_B = F_fast(B)`` (candidate B: ``F_slow = −μ_s N_slow``); the smaller one lets go first. On a
uniform slope ``P_A = μ_s,fast N_fast`` and ``P_B = F_req + μ_s,slow N_slow``, which is exactly
`engine.traction.fast_slips_first`. On ground of two angles the pair also changes the normal
forces (a tyre pushed into a step edge presses harder on it), so an axle whose margin to its
limit grows with the pair never reaches it; the direction of the line says which margins
shrink. If neither does, the rig is wedged: the driveline binds, nothing slips, and the
equal-share split below is reported. The axle that lets go then carries ``μ_k N``
(candidates C, D) and the other must stay within ``μ_s N``; otherwise both slip.

With no overdrive there is no wind-up: the split is the one where both axles use the same share
``s`` of their static grip (``F_i = s μ_s,i N_i``; on a uniform slope the grip-proportional split
of `engine.traction.traction_state`). ``s`` is the root of a quadratic along the line, and the
rig holds while ``|s| <= 1``. That same split is the "no wind-up" reference for ``windup_g``.

References
----------
.. [1] J. L. Meriam, L. G. Kraige, *Engineering Mechanics: Statics*, Wiley, ch. 3 (equilibrium
   of a rigid body in two dimensions: three independent equations).
.. [2] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade, rolling resistance, traction-limited climbing).
.. [3] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (Coulomb static
   and kinetic friction).
.. [4] J. Y. Wong, SAE 700723, 1970 (a front/rear speed mismatch is carried as driveline
   wind-up).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np

from .traction import BOTH, FRONT, LIFTED, NONE, REAR, TractionState

# A 3×3 system whose determinant is below this share of its column scale has no unique solution.
_SINGULAR_REL = 1e-12


@dataclass(frozen=True)
class ContactLoads:
    """Per-position result; every array has the shape of the positions."""

    front_normal_g: np.ndarray  # [gf]; <= 0 where the front is off the ground
    rear_normal_g: np.ndarray
    traction: TractionState  # state codes into engine.traction.STATES and ground forces [gf]


def _cross(r, f):
    """z-component of the planar cross product ``r × f`` (moment of `f` applied at `r`)."""
    return r[..., 0] * f[..., 1] - r[..., 1] * f[..., 0]


def contact_columns(front_arm_mm, rear_arm_mm, front_angle_deg, rear_angle_deg, rolling_resistance=0.0):
    """Columns of the equilibrium equations for the unknowns ``N_f, F_f, N_r, F_r``.

    Parameters
    ----------
    front_arm_mm, rear_arm_mm : array_like, shape (..., 2)
        Contact point minus CG, (x forward, z up). [mm]
    front_angle_deg, rear_angle_deg : array_like, shape (...)
        Surface angle at each contact, nose-up positive. [deg]
    rolling_resistance : float, default 0
        Rolling-resistance coefficient ``c_rr``. [-]

    Returns
    -------
    ndarray, shape (..., 4, 3)
        Rows ``N_f, F_f, N_r, F_r``; each row is (Σx, Σz, Σ moment about the CG) per unit of that
        unknown [1]_. [-, -, mm]
    """
    cols = []
    for arm, ang in ((front_arm_mm, front_angle_deg), (rear_arm_mm, rear_angle_deg)):
        arm = np.asarray(arm, dtype=float)
        a = np.radians(np.asarray(ang, dtype=float))
        t = np.stack((np.cos(a), np.sin(a)), axis=-1)
        n = np.stack((-np.sin(a), np.cos(a)), axis=-1) - rolling_resistance * t
        for v in (n, t):
            cols.append(np.concatenate((v, _cross(arm, v)[..., None]), axis=-1))
    return np.stack(cols, axis=-2)


def load_vector(weight_g, pitch_deg, accel_g=0.0):
    """Right-hand side: what the contact forces must balance. [gf, gf, gf·mm]

    ``(W a_x cos φ, W (1 + a_x sin φ), 0)``: weight and the inertia of a throttle acceleration
    along the chassis; neither has a moment about the CG.
    """
    phi = np.radians(np.asarray(pitch_deg, dtype=float))
    return np.stack(
        (weight_g * accel_g * np.cos(phi), weight_g * (1.0 + accel_g * np.sin(phi)), np.zeros_like(phi)),
        axis=-1,
    )


def _det3(a, b, c):
    """Determinant of the 3×3 matrices with columns a, b, c (each shape (..., 3))."""
    return (a[..., 0] * (b[..., 1] * c[..., 2] - b[..., 2] * c[..., 1])
            - a[..., 1] * (b[..., 0] * c[..., 2] - b[..., 2] * c[..., 0])
            + a[..., 2] * (b[..., 0] * c[..., 1] - b[..., 1] * c[..., 0]))


def _order(fast, k_vals, o_vals):
    """(N_f, F_f, N_r, F_r) from the fast axle's (N, F) and the slow axle's (N, F)."""
    return np.stack((*k_vals, *o_vals) if fast == "front" else (*o_vals, *k_vals), axis=-1)


def equilibrium_line(columns, rhs, fast="front"):
    """Every force set that keeps the rig in equilibrium: ``x(P) = base + P · direction``.

    Parameters
    ----------
    columns : ndarray, shape (..., 4, 3)
        From `contact_columns`.
    rhs : ndarray, shape (..., 3)
        From `load_vector`.
    fast : {"front", "rear"}
        The axle whose ground force is the parameter ``P`` (the overdriven one).

    Returns
    -------
    base, direction : ndarray, shape (..., 4)
        ``(N_f, F_f, N_r, F_r)`` at ``P = 0`` [gf] and per unit of ``P`` [-]. NaN where the
        three equations do not fix the other three unknowns (the fast axle's normal force acts
        straight through the other contact).

    Notes
    -----
    One 3×3 system per position with two right-hand sides, solved with `numpy.linalg.solve` on
    the stacked matrices: unknowns ``(N_fast, N_slow, F_slow)``; the right-hand sides are the
    loads (``P = 0``) and minus the fast axle's tangential column (one unit of ``P``) [1]_.
    """
    k, o = (0, 2) if fast == "front" else (2, 0)
    a, b, c = columns[..., k, :], columns[..., o, :], columns[..., o + 1, :]
    m = np.stack((a, b, c), axis=-1)
    det = _det3(a, b, c)
    scale = np.sqrt((a * a).sum(-1) * (b * b).sum(-1) * (c * c).sum(-1))
    bad = ~(np.abs(det) > _SINGULAR_REL * scale)
    if bad.any():
        m = np.where(bad[..., None, None], np.eye(3), m)
    sol = np.linalg.solve(m, np.stack((rhs, -columns[..., k + 1, :]), axis=-1))
    sol = np.where(bad[..., None, None], np.nan, sol)
    zero, one = np.zeros(det.shape), np.ones(det.shape)
    base = _order(fast, (sol[..., 0, 0], zero), (sol[..., 1, 0], sol[..., 2, 0]))
    direction = _order(fast, (sol[..., 0, 1], one), (sol[..., 1, 1], sol[..., 2, 1]))
    return base, direction


def _where_ratio(base, direction, axle, coef):
    """``P`` at which ``F_axle = coef · N_axle`` on the equilibrium line (inf/NaN: never)."""
    i = 0 if axle == "front" else 2
    n0, f0, dn, df = base[..., i], base[..., i + 1], direction[..., i], direction[..., i + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        return (coef * n0 - f0) / (df - coef * dn)


def _at(base, direction, p):
    return base + np.asarray(p)[..., None] * direction


def equal_share(base, direction, mu_front_static, mu_rear_static):
    """The no-wind-up split: both axles at the same share ``s`` of their static grip.

    Parameters
    ----------
    base, direction : ndarray, shape (..., 4)
        The equilibrium line (`equilibrium_line`).
    mu_front_static, mu_rear_static : float
        Static friction of each axle. [-]

    Returns
    -------
    s : ndarray
        Share of static grip in use (``|s| > 1``: the rig cannot hold). [-] NaN where no such
        split exists.
    forces : ndarray, shape (..., 4)
        ``(N_f, F_f, N_r, F_r)`` at that split. [gf]

    Notes
    -----
    ``F_f/(μ_f N_f) = F_r/(μ_r N_r)`` with every force linear in ``P`` is a quadratic in ``P``.
    Of its real roots the one with the smaller ``|s|`` is the physical one: on uniform ground the
    quadratic term vanishes and ``s = F_req/(μ_f N_f + μ_r N_r)``, the grip-proportional split.
    """
    (a0, b0, c0, e0), (a1, b1, c1, e1) = np.moveaxis(base, -1, 0), np.moveaxis(direction, -1, 0)
    mf, mr = mu_front_static, mu_rear_static
    q2 = mr * c1 * b1 - mf * a1 * e1
    q1 = mr * (c0 * b1 + c1 * b0) - mf * (a0 * e1 + a1 * e0)
    q0 = mr * c0 * b0 - mf * a0 * e0
    disc = q1 * q1 - 4.0 * q2 * q0
    with np.errstate(invalid="ignore", divide="ignore"):
        # numerically stable roots: q0/q stays finite as q2 -> 0 (uniform ground)
        q = -0.5 * (q1 + np.copysign(np.sqrt(disc), q1))
        roots = np.stack((q0 / q, q / q2), axis=-1)
        pts = base[..., None, :] + roots[..., None] * direction[..., None, :]
        shares = pts[..., 1] / (mf * pts[..., 0])
    size = np.where(np.isfinite(shares), np.abs(shares), np.inf)
    pick = np.argmin(size, axis=-1)
    s = np.take_along_axis(shares, pick[..., None], -1)[..., 0]
    s = np.where((disc >= 0) & np.isfinite(s), s, np.nan)
    forces = np.take_along_axis(pts, pick[..., None, None], -2)[..., 0, :]
    return s, forces


def solve_contacts(weight_g, front_arm_mm, rear_arm_mm, front_angle_deg, rear_angle_deg, pitch_deg,
                   mu_front, mu_rear, overdriven: Optional[str], rolling_resistance=0.0, accel_g=0.0):
    """Normal and ground forces at both contacts, and the slip state, at many positions.

    Parameters
    ----------
    weight_g : float
        Rig weight. [gf]
    front_arm_mm, rear_arm_mm : array_like, shape (..., 2)
        Contact point minus CG, (x forward, z up). [mm]
    front_angle_deg, rear_angle_deg : array_like, shape (...)
        Surface angle at each contact; a step edge's is the direction of the edge-to-centre
        normal. [deg]
    pitch_deg : array_like, shape (...)
        Chassis pitch (direction of the throttle acceleration). [deg]
    mu_front, mu_rear : tuple of float
        ``(μ_static, μ_kinetic)`` of each axle. [-]
    overdriven : {"front", "rear", None}
        The axle whose tyres want to run faster over the ground.
    rolling_resistance : float, default 0
        ``c_rr``. [-]
    accel_g : float, default 0
        Throttle acceleration along the chassis. [g]

    Returns
    -------
    ContactLoads
        Normal forces and a `TractionState` with the same meaning as on a uniform slope: ground
        forces along each contact's tangent [gf] (NaN when an axle is lifted), ``windup_g`` the
        fast-axle force above the equal-share split, ``reserve_g`` the static grip left on the
        gripping axle (with no overdrive: ``(1 − |s|)(μ_f N_f + μ_r N_r)``). ``lifted`` (an axle
        with ``N <= 0`` in the state that applies, or forces the geometry cannot fix) outranks
        every slip state. Where both axles slip the rig is not in equilibrium (it stalls or slides
        back); the normal forces shown are those of the axle that let go first, the other axle's
        force is clipped to ``μ_k N`` [3]_.
    """
    if overdriven not in ("front", "rear", None):
        raise ValueError(f"overdriven must be 'front', 'rear' or None, not {overdriven!r}")
    cols = contact_columns(front_arm_mm, rear_arm_mm, front_angle_deg, rear_angle_deg, rolling_resistance)
    rhs = load_vector(weight_g, pitch_deg, accel_g)
    (msf, mkf), (msr, mkr) = mu_front, mu_rear
    fast = overdriven or "front"
    base, direction = equilibrium_line(cols, rhs, fast)
    s, eq = equal_share(base, direction, msf, msr)
    e_holds = np.abs(s) <= 1.0
    sgn = np.sign(s)
    # the equal-share split, or both sliding the way it leans
    e_forces = np.stack((eq[..., 0], np.where(e_holds, eq[..., 1], sgn * mkf * eq[..., 0]),
                         eq[..., 2], np.where(e_holds, eq[..., 3], sgn * mkr * eq[..., 2])), axis=-1)
    e_state = np.where(e_holds, NONE, BOTH)
    e_reserve = (1.0 - np.abs(s)) * (msf * eq[..., 0] + msr * eq[..., 2])

    if overdriven is None:
        forces, state, reserve = e_forces, e_state, e_reserve
    else:
        slow = "rear" if fast == "front" else "front"
        i_fa, i_sl = (0, 2) if fast == "front" else (2, 0)
        ms_fa, mk_fa, ms_sl, mk_sl = (msf, mkf, msr, mkr) if fast == "front" else (msr, mkr, msf, mkf)
        code_fa, code_sl = (FRONT, REAR) if fast == "front" else (REAR, FRONT)
        # margins to the limits, per unit of wind-up: only a shrinking margin can reach zero
        fast_nears = ms_fa * direction[..., i_fa] - 1.0 < 0
        slow_nears = ms_sl * direction[..., i_sl] + direction[..., i_sl + 1] < 0
        p_a = np.where(fast_nears, _where_ratio(base, direction, fast, ms_fa), np.inf)
        p_b = np.where(slow_nears, _where_ratio(base, direction, slow, -ms_sl), np.inf)
        fast_first = p_a < p_b  # on uniform ground: engine.traction.fast_slips_first
        c = _at(base, direction, _where_ratio(base, direction, fast, mk_fa))  # fast spins at μ_k
        d = _at(base, direction, _where_ratio(base, direction, slow, -mk_sl))  # slow dragged at μ_k
        reserve = np.where(fast_first, ms_sl * c[..., i_sl] - np.abs(c[..., i_sl + 1]),
                           ms_fa * d[..., i_fa] - np.abs(d[..., i_fa + 1]))
        holds = reserve >= 0
        x = np.where(fast_first[..., None], c, d)
        f_fa, f_sl = x[..., i_fa + 1], x[..., i_sl + 1]
        f_fa = np.where(fast_first | holds, f_fa, np.sign(f_fa) * mk_fa * x[..., i_fa])
        f_sl = np.where(~fast_first | holds, f_sl, np.sign(f_sl) * mk_sl * x[..., i_sl])
        forces = _order(fast, (x[..., i_fa], f_fa), (x[..., i_sl], f_sl))
        state = np.where(holds, np.where(fast_first, code_fa, code_sl), BOTH)
        # wedged: the pair presses both tyres harder than it pushes them, so neither lets go;
        # the driveline binds and the split is the equal-share one
        wedged = ~fast_nears & ~slow_nears
        forces = np.where(wedged[..., None], e_forces, forces)
        state = np.where(wedged, e_state, state)
        reserve = np.where(wedged, e_reserve, reserve)

    nf, ff, nr, fr = np.moveaxis(forces, -1, 0)
    windup = (ff - eq[..., 1]) if fast == "front" else (fr - eq[..., 3])
    if overdriven is None:
        windup = np.zeros_like(windup)
    lifted = ~((nf > 0) & (nr > 0))
    nan = np.full(np.shape(nf), np.nan)
    return ContactLoads(
        front_normal_g=nf,
        rear_normal_g=nr,
        traction=TractionState(
            state=np.where(lifted, LIFTED, state).astype(np.int8),
            front_force_g=np.where(lifted, nan, ff),
            rear_force_g=np.where(lifted, nan, fr),
            windup_g=np.where(lifted, nan, windup),
            reserve_g=np.where(lifted, nan, reserve),
        ),
    )
