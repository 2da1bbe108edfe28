"""Two-contact statics in the rigid-driveline limit: Coulomb wind-up along the line of equilibria.

Planar, quasi-static rigid body. Each axle is one contact ``i`` with surface angle ``α_i``,
normal ``n_i = (−sin α_i, cos α_i)`` and tangent ``t_i = (cos α_i, sin α_i)`` (x forward, z up).
The ground pushes on contact ``i`` with ``N_i n_i + F_i t_i``; rolling resistance adds
``−c_rr N_i t_i``. Weight ``W`` acts down at the CG and the inertia force ``W a_x`` acts at the CG
against the chassis direction ``(cos φ, sin φ)``.

Four unknowns ``N_f, F_f, N_r, F_r`` and three equilibrium equations: every equilibrium lies on
one line ``x(P) = base + P · direction``, parametrised by the fast axle's ground force ``P``
(one 3×3 system per position with two right-hand sides, solved for all positions at once).
Moving along the line with growing ``P`` is the wind-up pair growing. The margin of each of the
four friction limits (each axle, forward ``μ_s N − F`` and backward ``F + μ_s N``) is linear in
``P``; only a shrinking margin can reach zero, and the first one that does is the axle that lets
go, in that direction. On a uniform slope only the fast axle's forward and the slow axle's
backward margins shrink, which is exactly the rule of `engine.traction`. On ground of two angles
the pair also changes the normal forces (a tyre pushed into a step edge presses harder on it); if
no margin shrinks, no friction limit is ever reached — the linear program is unbounded — and the
driveline **binds**: the forces grow with the motor's torque until something stalls or breaks.
Where the pair presses a tyre into a steep face hard enough, the grip shares ``F/(μ_s N)`` move
against ``P``: the wind-up then grows towards the bottom of the
interval where both grip, and the limit there is the one reached (an axle lets go alone only with
the fast one driving forward or the slow one dragged backward, MODEL §5 as ``c → ∞``).
The axle that lets go then carries ``μ_k N`` and the other must stay within ``μ_s N``; otherwise
both slip.

With no mismatch there is no wind-up: the split is the one where both axles use the same share
``s`` of their static grip (the grip-proportional split on a uniform slope); the rig holds while
``|s| <= 1``. That split is also the "no wind-up" reference for ``windup_g``.

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

import numpy as np

from .traction import BOTH, FRONT, NONE, REAR, STATES

BINDS = STATES.index("binds") if "binds" in STATES else len(STATES)

# A 3×3 system whose determinant is below this share of its column scale has no unique solution.
_SINGULAR_REL = 1e-12


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
        The axle whose ground force is the parameter ``P``.

    Returns
    -------
    base, direction : ndarray, shape (..., 4)
        ``(N_f, F_f, N_r, F_r)`` at ``P = 0`` [gf] and per unit of ``P`` [-]. NaN where the
        three equations do not fix the other three unknowns.
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


def _one_fast(fast, base, direction, msf, mkf, msr, mkr):
    """State, forces and reserve with `fast` ("front"/"rear") winding up, at every position."""
    axles = ("front", "rear")
    mu_s, mu_k = {"front": msf, "rear": msr}, {"front": mkf, "rear": mkr}
    # the four limits: margin m0 + P·dm, reached at P = −m0/dm when it shrinks (dm < 0)
    reach, floor, which = [], [], []
    for axle in axles:
        i = 0 if axle == "front" else 2
        for sign in (1.0, -1.0):
            m0 = mu_s[axle] * base[..., i] - sign * base[..., i + 1]
            dm = mu_s[axle] * direction[..., i] - sign * direction[..., i + 1]
            with np.errstate(divide="ignore", invalid="ignore"):
                reach.append(np.where(dm < 0, -m0 / dm, np.inf))
                floor.append(np.where(dm > 0, -m0 / dm, -np.inf))
            which.append((axle, sign))
    reach, floor = np.stack(reach, axis=-1), np.stack(floor, axis=-1)
    first = np.argmin(reach, axis=-1)
    binds = ~np.isfinite(np.min(reach, axis=-1))
    # Growing P is growing wind-up only while the normal forces stay put (uniform ground). Where P
    # also presses a tyre into a steep face, the grip shares F/(μ_s N) can move against P and the
    # wind-up (fast share minus slow share, the c → ∞ limit of the slip difference) grows
    # towards the other end of the interval where both grip. An axle can only let go alone in the
    # direction its speed mismatch drives it (fast forward, slow backward): a limit at the top of
    # the interval that breaks this is no solution of the slip model as c → ∞, the bottom one is.
    consistent = np.array([(axle == fast) == (sign > 0) for axle, sign in which])
    low = np.argmax(floor, axis=-1)
    flip = (~binds & ~consistent[first] & consistent[low]
            & (np.max(floor, axis=-1) <= np.min(reach, axis=-1)))
    first = np.where(flip, low, first)
    state = np.full(first.shape, BOTH, dtype=np.int8)
    forces = np.full(first.shape + (4,), np.nan)
    reserve = np.full(first.shape, np.nan)
    for k, (axle, sign) in enumerate(which):
        pick = first == k
        if not pick.any():
            continue
        other = "rear" if axle == "front" else "front"
        io = 2 if axle == "front" else 0
        x = _at(base, direction, _where_ratio(base, direction, axle, sign * mu_k[axle]))
        res = mu_s[other] * x[..., io] - np.abs(x[..., io + 1])
        holds = res >= 0
        f_other = np.where(holds, x[..., io + 1], np.sign(x[..., io + 1]) * mu_k[other] * x[..., io])
        x = x.copy()
        x[..., io + 1] = f_other
        code = FRONT if axle == "front" else REAR
        state = np.where(pick, np.where(holds, code, BOTH), state)
        forces = np.where(pick[..., None], x, forces)
        reserve = np.where(pick, res, reserve)
    return np.where(binds, BINDS, state).astype(np.int8), forces, reserve, binds


def solve_rigid(columns, rhs, mu_front, mu_rear, fast_sign):
    """Rigid-limit states and forces at many positions.

    Parameters
    ----------
    columns, rhs : ndarray
        From `contact_columns` and `load_vector`.
    mu_front, mu_rear : tuple of float
        ``(μ_static, μ_kinetic)`` of each axle. [-]
    fast_sign : array_like of int
        +1 where the front is kinematically faster (``K/ρ`` with the pitch term above 1), −1 where
        the rear is, 0 where they match.

    Returns
    -------
    state, forces, reserve, windup
        State codes (``binds`` where no limit is ever reached), ``(N_f, F_f, N_r, F_r)`` [gf]
        (ground forces NaN where it binds; the normal forces there are the unwound split's),
        reserve and wind-up pair [gf].
    """
    (msf, mkf), (msr, mkr) = mu_front, mu_rear
    fast_sign = np.asarray(fast_sign)
    out = {}
    for fast in ("front", "rear"):
        base, direction = equilibrium_line(columns, rhs, fast)
        s, eq = equal_share(base, direction, msf, msr)
        out[fast] = (base, direction, s, eq)
    rear_fast = fast_sign < 0

    def pick(a, b):
        return np.where(rear_fast.reshape(rear_fast.shape + (1,) * (a.ndim - rear_fast.ndim)), b, a)

    base, direction, s, eq = (pick(a, b) for a, b in zip(out["front"], out["rear"]))
    e_holds = np.abs(s) <= 1.0
    sgn = np.sign(s)
    e_forces = np.stack((eq[..., 0], np.where(e_holds, eq[..., 1], sgn * mkf * eq[..., 0]),
                         eq[..., 2], np.where(e_holds, eq[..., 3], sgn * mkr * eq[..., 2])), axis=-1)
    e_state = np.where(e_holds, NONE, BOTH).astype(np.int8)
    e_reserve = (1.0 - np.abs(s)) * (msf * eq[..., 0] + msr * eq[..., 2])

    state, forces, reserve = e_state, e_forces, e_reserve
    for fast, sign in (("front", 1), ("rear", -1)):
        here = fast_sign == sign
        if not here.any():
            continue
        b, d = out[fast][0], out[fast][1]
        st_, fo, re, binds = _one_fast(fast, b, d, msf, mkf, msr, mkr)
        unwound = np.stack((eq[..., 0], np.full(eq.shape[:-1], np.nan), eq[..., 2],
                            np.full(eq.shape[:-1], np.nan)), axis=-1)
        fo = np.where(binds[..., None], unwound, fo)
        re = np.where(binds, np.nan, re)
        state = np.where(here, st_, state)
        forces = np.where(here[..., None], fo, forces)
        reserve = np.where(here, re, reserve)
    nf, ff, nr, fr = np.moveaxis(forces, -1, 0)
    windup = np.where(fast_sign < 0, fr - eq[..., 3], ff - eq[..., 1])
    windup = np.where(fast_sign == 0, 0.0, windup)
    return state.astype(np.int8), forces, reserve, windup
