"""Two-contact statics with tyre slip: front and rear tyres on ground of different angles.

Planar, quasi-static rigid body. Each axle is one contact ``i`` at point ``P_i`` with surface angle
``α_i``, normal ``n_i = (−sin α_i, cos α_i)`` and tangent ``t_i = (cos α_i, sin α_i)`` (x forward,
z up). The ground pushes on contact ``i`` with ``N_i n_i + (F_i − c_rr N_i) t_i``: the tyre's
longitudinal force ``F_i`` less rolling resistance. Weight ``W`` acts down at the CG and the
inertia force ``W a_x`` at the CG against the chassis direction ``(cos φ, sin φ)``.

Tyre force (brush model, parabolic pressure [1]_): ``F_i = μ_s,i N_i ψ(λ_i)`` with
``λ_i = c_i σ_i/(3 μ_s,i)``, ``σ_i = 1 − 1/s_i``; ``|λ_i| >= 1``: the patch slides and carries
``±μ_k,i N_i``. The driveline fixes ``s_f = [K s_r + (g − 1) r_f dφ/ds_r]/ρ`` (``ρ`` the path
ratio of the two centres, the second term the chassis pitching the axle housings).

Unknowns ``N_f, N_r, s_r``. Because each tyre force is ``N_i`` times a function of its own slip,
for a given ``s_r`` moments about the rear contact are one linear equation in ``N_f`` and moments
about the front contact one in ``N_r`` [2]_; the force balance along the chord between the two
contacts is the residual in ``s_r`` (the balance across the chord follows from the two moment
equations). On a uniform slope the residual is ``F_f + F_r − F_req`` and the normal forces are
the grade-load equations [3]_, so this reduces exactly to the uniform-slope solve.

The residual is scanned on a grid of ``s_r`` spanning every saturation point (beyond them it is
constant) and the first upward sign change with positive normal forces at both ends is bisected
on arrays, all positions at once. Monotonicity is not proven on uneven ground, so the normal
forces are checked: where the only sign change is a pole (a tyre pushed into a step so that the
wind-up presses it down harder than it pushes it along: the normal force runs to infinity) no
finite forces balance the rig and the driveline **binds**. Then, as in the uniform-slope onset
solve: an axle at ``|λ| >= 1`` lets go with ``±μ_k N`` and the other must carry the rest within
``μ_s N`` on its own brush curve, else both slip; no root within the grip: both slip.

Both axles rigid (stiffness ``inf``) is the Coulomb limit, solved exactly in
`engine.contact_rigid` (four friction limits, ``binds`` where none is reached).

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., Butterworth-Heinemann, 2012, ch. 3
   (brush model, theoretical slip, parabolic pressure, saturation at full sliding).
.. [2] J. L. Meriam, L. G. Kraige, *Engineering Mechanics: Statics*, Wiley, ch. 3 (planar
   equilibrium: moments about two points and one force balance are independent).
.. [3] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade, rolling resistance, traction-limited climbing).
.. [4] SAE J670, *Vehicle Dynamics Terminology* (longitudinal slip ratio).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

import numpy as np

from .contact_rigid import BINDS, contact_columns, load_vector, solve_rigid
from .overdrive import SAME_SPEED_TOL
from .traction import BOTH, FRONT, LIFTED, NONE, REAR, RIGID_STAND_IN
from .tyre_brush import brush_psi, brush_psi_inverse

# An axle given as rigid beside one with a finite stiffness is solved with the uniform-slope solve's
# stand-in stiffness, so both give the same numbers.
NEAR_RIGID = RIGID_STAND_IN
_GRID = 21  # residual samples across the bracket, plus the poles
_POLE_GAP = 1e-9  # grid points this far (relative) either side of a pole
_BISECT = 34  # halvings of the bracket cell (to about 1e-11); a secant step on the last cell finishes it


@dataclass(frozen=True)
class CourseTraction:
    """Per-position traction result; every field has the shape of the positions."""

    state: np.ndarray  # codes into engine.traction.STATES ("binds" included)
    front_force_g: np.ndarray  # tyre force along each contact's tangent, + forward [gf]
    rear_force_g: np.ndarray
    windup_g: np.ndarray  # fast axle's force above its grip-proportional share [gf]
    reserve_g: np.ndarray  # static grip left on the gripping axle(s); negative: short by that
    front_slip_pct: np.ndarray  # κ = s − 1 in % (SAE J670 [4]_); NaN sliding, lifted or bound
    rear_slip_pct: np.ndarray
    front_grip_used: np.ndarray  # |F|/(μ_s N); 1 on a sliding axle; NaN lifted or bound
    rear_grip_used: np.ndarray


@dataclass(frozen=True)
class ContactLoads:
    """Per-position result; every array has the shape of the positions."""

    front_normal_g: np.ndarray  # [gf]
    rear_normal_g: np.ndarray
    traction: CourseTraction
    # the normal forces at the gripping solution, before an axle lets go (the onset, MODEL §5),
    # and the rear wheel's speed ratio s_r there; NaN where there is none (no root within the
    # grip, binds); None from the rigid solve
    onset_front_normal_g: Optional[np.ndarray] = None
    onset_rear_normal_g: Optional[np.ndarray] = None
    onset_rear_speed_ratio: Optional[np.ndarray] = None


def _cross(a, b):
    return a[..., 0] * b[..., 1] - a[..., 1] * b[..., 0]


def _dot(a, b):
    return a[..., 0] * b[..., 0] + a[..., 1] * b[..., 1]


def _unit(angle_rad):
    return np.stack((np.cos(angle_rad), np.sin(angle_rad)), axis=-1)


class _Pose:
    """The pose's equations, reduced to a few numbers per position."""

    def __init__(self, weight_g, front_contact, rear_contact, cg, front_angle_deg, rear_angle_deg,
                 pitch_deg, rolling_resistance, accel_g):
        af, ar = np.radians(front_angle_deg), np.radians(rear_angle_deg)
        phi = np.radians(pitch_deg)
        self.tf, self.tr = _unit(af), _unit(ar)
        self.nf, self.nr = _unit(af + math.pi / 2), _unit(ar + math.pi / 2)
        self.crr = rolling_resistance
        d = front_contact - rear_contact
        e = d / np.hypot(d[..., 0], d[..., 1])[..., None]
        self.load = np.stack((-weight_g * accel_g * np.cos(phi), -weight_g * (1.0 + accel_g * np.sin(phi))), -1)
        c = rolling_resistance
        self.af, self.bf = _cross(d, self.nf) - c * _cross(d, self.tf), _cross(d, self.tf)
        self.ar, self.br = _cross(d, self.nr) - c * _cross(d, self.tr), _cross(d, self.tr)
        self.mom_r = -_cross(cg - rear_contact, self.load)  # drives N_f
        self.mom_f = _cross(cg - front_contact, self.load)  # drives N_r
        self.enf, self.etf, self.enr, self.etr = _dot(e, self.nf), _dot(e, self.tf), _dot(e, self.nr), _dot(e, self.tr)
        self.el = _dot(e, self.load)

    def normals(self, mf, mr, at=(...,)):
        """``N_f``, ``N_r`` for force-to-load ratios ``m_f``, ``m_r`` (moments about each contact)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            nf = self.mom_r[at] / (self.af[at] + mf * self.bf[at])
            nr = self.mom_f[at] / (self.ar[at] + mr * self.br[at])
        return nf, nr

    def residual(self, mf, mr, at=(...,)):
        """Force balance along the chord [gf] and the normal forces, for ratios ``m_f``, ``m_r``."""
        nf, nr = self.normals(mf, mr, at)
        c = self.crr
        with np.errstate(invalid="ignore"):
            res = (nf * (self.enf[at] + (mf - c) * self.etf[at]) + nr * (self.enr[at] + (mr - c) * self.etr[at])
                   + self.el[at])
        return res, nf, nr

    def one_sliding(self, front_slides, m_slide):
        """One axle at ratio `m_slide`, the other carrying the rest: ``N_f, N_r, F_other``."""
        nf_s, nr_s = self.normals(m_slide, m_slide)
        n_s = np.where(front_slides, nf_s, nr_s)
        v_s = np.where(front_slides[..., None], self.nf + (m_slide - self.crr)[..., None] * self.tf,
                       self.nr + (m_slide - self.crr)[..., None] * self.tr)
        rest = -(n_s[..., None] * v_s + self.load)
        n_o_dir = np.where(front_slides[..., None], self.nr, self.nf)
        t_o_dir = np.where(front_slides[..., None], self.tr, self.tf)
        n_o = _dot(rest, n_o_dir)  # (n − c t)·n = 1, t·n = 0
        f_o = _dot(rest, t_o_dir) + self.crr * n_o
        return np.where(front_slides, n_s, n_o), np.where(front_slides, n_o, n_s), f_o


def _ratio(s, stiffness, mu_s):
    """Force-to-load ratio ``μ_s ψ(λ)`` at wheel speed ratio `s` (``s <= 0``: full backward)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        lam = np.where(s > 0, stiffness * (1.0 - 1.0 / np.where(s > 0, s, 1.0)) / (3.0 * mu_s), -np.inf)
    return mu_s * brush_psi(lam), lam


def _speed_ratio_for(m, stiffness, mu_s):
    """Wheel speed ratio ``s`` at which a gripping tyre carries force ratio `m` (NaN beyond ±μ_s)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        inside = np.abs(m) < mu_s
        sigma = 3.0 * mu_s * brush_psi_inverse(np.where(inside, m / mu_s, 0.0)) / stiffness
        return np.where(inside, 1.0 / (1.0 - sigma), np.nan)


def _poles(eq, k, q, rho, cf, cr, msf, msr):
    """``s_r`` where a normal force's denominator ``A + m B`` vanishes, for each tyre (NaN: none)."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        s_f = _speed_ratio_for(-eq.af / eq.bf, cf, msf)
        s_r = _speed_ratio_for(-eq.ar / eq.br, cr, msr)
    return np.stack(((rho * s_f - q) / k, s_r), axis=-1)


def _slip_pct_from_ratio(m, stiffness, mu_s):
    """κ [%] of a gripping tyre carrying force ratio `m` (inverse brush curve)."""
    sigma = 3.0 * mu_s * brush_psi_inverse(np.clip(m / mu_s, -1.0, 1.0)) / stiffness
    return 100.0 * sigma / (1.0 - sigma)


def solve_contacts(weight_g, front_contact_mm, rear_contact_mm, cg_mm, front_angle_deg, rear_angle_deg,
                   pitch_deg, mu_front, mu_rear, stiffness_front, stiffness_rear, speed_ratio, pitch_term,
                   path_ratio, rolling_resistance=0.0, accel_g=0.0) -> ContactLoads:
    """Normal and tyre forces at both contacts, slips and the slip state, at many positions.

    Parameters
    ----------
    weight_g : float
        Rig weight. [gf]
    front_contact_mm, rear_contact_mm, cg_mm : array_like, shape (n, 2)
        Contact points and CG, (x forward, z up). [mm]
    front_angle_deg, rear_angle_deg, pitch_deg : array_like, shape (n,)
        Surface angle at each contact (a step edge's: the edge-to-centre normal's) and chassis
        pitch. [deg]
    mu_front, mu_rear : tuple of float
        ``(μ_static, μ_kinetic)`` of each axle. [-]
    stiffness_front, stiffness_rear : float
        Slip stiffness per unit load ``c`` (``> 3 μ_s``), or ``math.inf`` for a rigid tyre. [-]
    speed_ratio : array_like, shape (n,)
        ``K``: front over rear circumferential speed (gears and rolling diameters). [-]
    pitch_term : array_like, shape (n,)
        ``(g − 1) r_f dφ/ds_r``, the housings' pitch as seen by the front wheel. [-]
    path_ratio : array_like, shape (n,)
        ``ρ = ds_f/ds_r``, > 0. [-]
    rolling_resistance, accel_g : float
        ``c_rr`` [-] and the throttle acceleration along the chassis [g].

    Returns
    -------
    ContactLoads
        ``lifted`` (an axle with ``N <= 0``) outranks every other state. Where it binds the ground
        forces, slips and grip used are NaN and the normal forces are those before the wind-up
        builds (the grip-proportional split); where both slip the forces shown are ``±μ_k N``.
    """
    (msf, mkf), (msr, mkr) = mu_front, mu_rear
    pf, pr, cg = (np.asarray(a, dtype=float) for a in (front_contact_mm, rear_contact_mm, cg_mm))
    af, ar, pitch = (np.asarray(a, dtype=float) for a in (front_angle_deg, rear_angle_deg, pitch_deg))
    k, q, rho = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (speed_ratio, pitch_term, path_ratio)))
    mismatch = (k + q) / rho  # s_f/s_r at pure rolling of the rear
    # below SAME_SPEED_TOL the mismatch is rounding noise, as on a uniform slope
    fast_sign = np.where(np.abs(mismatch - 1.0) <= SAME_SPEED_TOL, 0, np.sign(mismatch - 1.0)).astype(int)
    if math.isinf(stiffness_front) and math.isinf(stiffness_rear):
        cols = contact_columns(pf - cg, pr - cg, af, ar, rolling_resistance)
        rhs = load_vector(weight_g, pitch, accel_g)
        state, forces, reserve, windup = solve_rigid(cols, rhs, mu_front, mu_rear, fast_sign)
        nf, ff, nr, fr = np.moveaxis(forces, -1, 0)
        slides_f, slides_r = state == FRONT, state == REAR
        slip_f = np.where(slides_f | (state == BOTH), np.nan, 0.0)
        slip_r = np.where(slides_r | (state == BOTH), np.nan, 0.0)
        return _finish(state, nf, nr, ff, fr, windup, reserve, slip_f, slip_r, msf, msr)

    cf = NEAR_RIGID if math.isinf(stiffness_front) else float(stiffness_front)
    cr = NEAR_RIGID if math.isinf(stiffness_rear) else float(stiffness_rear)
    eq = _Pose(weight_g, pf, pr, cg, af, ar, pitch, rolling_resistance, accel_g)

    def eval_at(s_r, at=(...,)):
        kk, qq, rr = k[at], q[at], rho[at]
        s_f = (kk * s_r + qq) / rr
        mf, lam_f = _ratio(s_f, cf, msf)
        mr, lam_r = _ratio(s_r, cr, msr)
        res, nf, nr = eq.residual(mf, mr, at)
        return res, nf, nr, mf, mr, lam_f, lam_r

    # bracket: every saturation point of either tyre, mapped to s_r
    sat_r = 1.0 / (1.0 - np.array([-1.0, 1.0]) * 3.0 * msr / cr)
    sat_f = (rho[..., None] / (1.0 - np.array([-1.0, 1.0]) * 3.0 * msf / cf) - q[..., None]) / k[..., None]
    lo = np.minimum(sat_r[0], sat_f[..., 0])
    hi = np.maximum(sat_r[1], sat_f[..., 1])
    lo = np.where(lo > 0, lo * (1.0 - 1e-6), 1e-9 * hi)
    hi = hi * (1.0 + 1e-6)
    # the poles (a normal force through infinity) as grid points, so no cell holds a pole and a root
    poles = _poles(eq, k, q, rho, cf, cr, msf, msr)
    poles = np.where((poles > lo[..., None]) & (poles < hi[..., None]), poles, lo[..., None])
    width = (hi - lo)[..., None]
    grid = np.sort(np.concatenate((lo[..., None] + width * np.linspace(0.0, 1.0, _GRID),
                                   poles * (1.0 - _POLE_GAP), poles * (1.0 + _POLE_GAP)), axis=-1), axis=-1)
    g_res, g_nf, g_nr = eval_at(grid, (..., None))[:3]
    up = (g_res[..., :-1] < 0) & (g_res[..., 1:] >= 0)
    good = np.isfinite(g_res) & (g_nf > 0) & (g_nr > 0) & np.isfinite(g_nf) & np.isfinite(g_nr)
    genuine = up & good[..., :-1] & good[..., 1:]
    # short of drive on the physical side, and a normal force runs off to infinity before the
    # tyres can supply it: the wind-up presses the tyre down faster than it pushes it along
    flips = (g_nf[..., :-1] * g_nf[..., 1:] < 0) | (g_nr[..., :-1] * g_nr[..., 1:] < 0)
    binding = up & good[..., :-1] & flips
    has_genuine = genuine.any(axis=-1)
    has_root = has_genuine | binding.any(axis=-1)
    j = np.where(has_genuine, np.argmax(genuine, axis=-1), np.argmax(binding, axis=-1))
    a = np.take_along_axis(grid, j[..., None], -1)[..., 0]
    b = np.take_along_axis(grid, (j + 1)[..., None], -1)[..., 0]
    for _ in range(_BISECT):
        mid = 0.5 * (a + b)
        below = eval_at(mid)[0] < 0
        a, b = np.where(below, mid, a), np.where(below, b, mid)
    ra, rb = eval_at(a)[0], eval_at(b)[0]
    with np.errstate(divide="ignore", invalid="ignore"):
        s_r = np.where(np.isfinite(ra) & np.isfinite(rb) & (rb > ra), a - ra * (b - a) / (rb - ra), 0.5 * (a + b))
    s_r = np.clip(s_r, a, b)
    _, nf, nr, mf, mr, lam_f, lam_r = eval_at(s_r)
    pole = has_root & ~has_genuine
    onset = tuple(np.where(has_genuine, v, np.nan) for v in (nf, nr, s_r))

    sat_f_, sat_r_ = np.abs(lam_f) >= 1.0, np.abs(lam_r) >= 1.0
    state = np.where(sat_f_ & sat_r_, BOTH, np.where(sat_f_, FRONT, np.where(sat_r_, REAR, NONE)))
    ff, fr = mf * nf, mr * nr
    slip_f, slip_r = 100.0 * (s_r * k + q) / rho - 100.0, 100.0 * (s_r - 1.0)
    with np.errstate(invalid="ignore"):
        reserve = np.minimum(msf * nf - np.abs(ff), msr * nr - np.abs(fr))

    # one axle lets go: it carries ±μ_k N, the other the rest on its own brush curve
    one = has_root & (state != NONE) & (state != BOTH)
    if one.any():
        front_slides = state == FRONT
        m_slide = np.where(front_slides, np.sign(lam_f) * mkf, np.sign(lam_r) * mkr)
        n_f1, n_r1, f_o = eq.one_sliding(front_slides, m_slide)
        n_o = np.where(front_slides, n_r1, n_f1)
        mu_o, c_o = np.where(front_slides, msr, msf), np.where(front_slides, cr, cf)
        mk_o = np.where(front_slides, mkr, mkf)
        with np.errstate(divide="ignore", invalid="ignore"):
            m_o = f_o / n_o
            res_o = mu_o * n_o - np.abs(f_o)
        holds = np.abs(m_o) <= mu_o
        f_o = np.where(holds, f_o, np.sign(f_o) * mk_o * n_o)
        f_s = m_slide * np.where(front_slides, n_f1, n_r1)
        slip_o = np.where(holds, _slip_pct_from_ratio(m_o, c_o, mu_o), np.nan)
        nf, nr = np.where(one, n_f1, nf), np.where(one, n_r1, nr)
        ff = np.where(one, np.where(front_slides, f_s, f_o), ff)
        fr = np.where(one, np.where(front_slides, f_o, f_s), fr)
        slip_f = np.where(one, np.where(front_slides, np.nan, slip_o), slip_f)
        slip_r = np.where(one, np.where(front_slides, slip_o, np.nan), slip_r)
        reserve = np.where(one, res_o, reserve)
        state = np.where(one & ~holds, BOTH, state)

    # no root within the grip: both slip, spinning forward (short of drive) or dragged back
    r_lo, r_hi = g_res[..., 0], g_res[..., -1]
    sign_both = np.where(r_hi < 0, 1.0, -1.0)
    no_root = ~has_root
    nf_b, nr_b = eq.normals(sign_both * mkf, sign_both * mkr)
    both_sat = has_root & (state == BOTH) & ~one
    sgn_f, sgn_r = np.where(both_sat, np.sign(lam_f), sign_both), np.where(both_sat, np.sign(lam_r), sign_both)
    if both_sat.any():
        nf_s, nr_s = eq.normals(sgn_f * mkf, sgn_r * mkr)
        nf_b, nr_b = np.where(both_sat, nf_s, nf_b), np.where(both_sat, nr_s, nr_b)
    all_slide = no_root | both_sat
    state = np.where(no_root, BOTH, state)
    nf, nr = np.where(all_slide, nf_b, nf), np.where(all_slide, nr_b, nr)
    ff, fr = np.where(all_slide, sgn_f * mkf * nf, ff), np.where(all_slide, sgn_r * mkr * nr, fr)
    slip_f, slip_r = np.where(all_slide, np.nan, slip_f), np.where(all_slide, np.nan, slip_r)
    reserve = np.where(no_root, np.where(r_hi < 0, r_hi, -r_lo), np.where(both_sat, 0.0, reserve))
    slip_f = np.where(state == FRONT, np.nan, slip_f)
    slip_r = np.where(state == REAR, np.nan, slip_r)

    # binds: no finite forces balance the rig; show the loads before the wind-up builds
    if pole.any():
        cols = contact_columns(pf - cg, pr - cg, af, ar, rolling_resistance)
        rhs = load_vector(weight_g, pitch, accel_g)
        unwound = solve_rigid(cols, rhs, mu_front, mu_rear, np.zeros_like(fast_sign))[1]
        nf, nr = np.where(pole, unwound[..., 0], nf), np.where(pole, unwound[..., 2], nr)
        state = np.where(pole, BINDS, state)
    nan = np.full(np.shape(nf), np.nan)
    ff, fr, reserve = (np.where(pole, nan, v) for v in (ff, fr, reserve))
    slip_f, slip_r = np.where(pole, nan, slip_f), np.where(pole, nan, slip_r)

    # wind-up: the kinematically fast axle's force above its grip-proportional share
    with np.errstate(divide="ignore", invalid="ignore"):
        share_f = msf * nf / (msf * nf + msr * nr)
    # what the tyres must supply along the chord; on a uniform slope F_req = W (sin θ + c_rr cos θ + a_x)
    c = rolling_resistance
    total = -(nf * (eq.enf - c * eq.etf) + nr * (eq.enr - c * eq.etr) + eq.el)
    windup = np.where(fast_sign < 0, fr - total * (1.0 - share_f), ff - total * share_f)
    return _finish(state, nf, nr, ff, fr, windup, reserve, slip_f, slip_r, msf, msr, onset)


def _finish(state, nf, nr, ff, fr, windup, reserve, slip_f, slip_r, msf, msr, onset=(None, None, None)) -> ContactLoads:
    """Grip used, and `lifted` over everything where a normal force is not positive."""
    state = np.asarray(state).astype(np.int8)
    lifted = ~((nf > 0) & (nr > 0))
    binds = state == BINDS
    slip_f, slip_r = np.where(binds, np.nan, slip_f), np.where(binds, np.nan, slip_r)
    with np.errstate(divide="ignore", invalid="ignore"):
        used_f = np.where(state == FRONT, 1.0, np.abs(ff) / (msf * nf))
        used_r = np.where(state == REAR, 1.0, np.abs(fr) / (msr * nr))
    used_f = np.where(state == BOTH, 1.0, used_f)
    used_r = np.where(state == BOTH, 1.0, used_r)
    nan = np.full(np.shape(nf), np.nan)

    def hide(a):
        return np.where(lifted, nan, a)

    return ContactLoads(
        front_normal_g=nf,
        rear_normal_g=nr,
        traction=CourseTraction(
            state=np.where(lifted, LIFTED, state).astype(np.int8),
            front_force_g=hide(ff), rear_force_g=hide(fr), windup_g=hide(windup), reserve_g=hide(reserve),
            front_slip_pct=hide(slip_f), rear_slip_pct=hide(slip_r),
            front_grip_used=hide(used_f), rear_grip_used=hide(used_r),
        ),
        onset_front_normal_g=onset[0], onset_rear_normal_g=onset[1], onset_rear_speed_ratio=onset[2],
    )
