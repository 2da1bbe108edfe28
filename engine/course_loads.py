"""Loads along a course walk, with the speed ratio K under those loads: a fixed point per position.

The driveline's speed ratio ``K = g D_f(N_f)/D_r(N_r)`` follows the axle loads through the
roll-out diameters under load (MODEL §4), and on ground of two angles the loads follow K through
the tyre forces (the wind-up pair has a moment): each position's loads ``N`` must reproduce their
own K, ``N = S(K(N))`` with ``S`` the contact statics of `engine.contact_statics`.

K is one number per position, so its fixed point is a scalar root, found on the gripping branch
with a bracket; the onset rule of MODEL §5 then decides the state (see `solve_loads`).

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3 (rolling radius, brush model).
.. [2] R. L. Burden, J. D. Faires, *Numerical Analysis*, 9th ed., 2011, sec. 2.3 (the secant
   method and the method of false position) and sec. 2.5 (Aitken's Δ² method).
.. [3] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
   equation", *BIT* 11, 1971, pp. 168–174 (the Illinois method).
"""

from __future__ import annotations

import math

import numpy as np

from .contact_statics import NEAR_RIGID, ContactLoads, CourseTraction, solve_contacts
from .traction import NONE

_K_PASSES = 24  # passes on the gripping branch at most (most settle in 2-6; very stiff tyres may need 20)
_K_PASSES_PLAIN = 8  # with no gripping solution the loads jump with K: a 2-cycle stops here, as it always did
_K_TOL = 1e-9  # share of the weight: one more pass would move the loads less than this
_K_REL = 1e-11  # K reproduces its own loads to this share
_STEP_MAX = 8.0  # before a bracket: a secant step of at most this many plain steps

_GRIP, _PLAIN, _LET_GO, _DONE = range(4)


def _rolling_dia(level_mm, loss_mm_per_100g, free_mm, normal_g, level_g):
    """Rolling diameter under load, clamped at the free diameter and at half the level one. [mm]"""
    d = level_mm - loss_mm_per_100g * (np.asarray(normal_g) - level_g) / 100.0
    return np.clip(np.where(np.isfinite(d), d, level_mm), 0.5 * level_mm, free_mm)


def solve_loads(setup, rig, gear, pose, keys):
    """Loads, slip states and K at each pose, decided at the onset from a gripping start (MODEL §5).

    MODEL §5: "Each slope is evaluated as the onset from an unwound driveline: the rig set down at
    that slope and starting to creep, with no scrub already going on. (Because μ_k < μ_s, a scrub
    that has started can outlast its onset; see the band below.)" and "A scrub that has started
    continues while it is self-consistent" (the persistence band). So the tyres grip until the
    gripping solution can no longer hold, and the state is the onset's. With K under load (MODEL
    §4) the gripping solution must also reproduce its own K. At every position, with roll-out losses:

    1. The gripping branch. ``G(K)`` is the gripping solution of the statics at K (the root of the
       force balance, each tyre on its brush curve and at most ``±μ_s N``, before any axle lets
       go); its loads change continuously with K. ``g(K) = K(G(K)) − K = 0`` is solved as one
       scalar root per position (`_RootFind`, in K plus the pitch term, which the statics follow):
       a plain pass first (``K_1 = K(G(K_0))`` from the level loads, as a plain iteration would),
       then secant steps (Aitken's Δ² [2]_) until ``g`` changes sign, then the secant inside that
       bracket, false position with the Illinois safeguard [3]_ where it would leave it. Converged
       when K and the pitch term reproduce the loads to ``_K_REL`` and one more plain pass would
       move them less than ``_K_TOL`` of the weight; at once where one tyre is saturated at the
       gripping solution and stays so at the K of its loads (``G`` does not move with K there).
    2. No axle saturates there: "both grip", with those loads and K, a fixed point of the whole
       statics. Where an axle that had already let go would also stay let go (a second
       self-consistent answer), that answer is the persistence band's, not the onset's.
    3. An axle saturates there: it lets go (or both slip), with the loads it leaves, and K at those
       loads (they depend on K only through which axle slides and which way). Solved again at that
       K: the same state and loads, a fixed point too. Otherwise no loads reproduce their own K (at
       the K of the loads after letting go a fresh onset would not let go): the onset's state
       stands, and the position is flagged ``no_fixed_point``.

    Where no gripping solution exists at a K visited (both slip, binds, a lift) and with rigid tyres
    the loads depend on K only through which axle is faster or slides which way: they are iterated
    plainly, ``N ← S(K(N))``, until they stop moving; one that flips with K (a 2-cycle, nothing to
    decide it) is left at pass ``_K_PASSES_PLAIN``, as before.

    On a uniform slope the loads do not depend on the tyre forces: step 1 ends after its plain pass,
    and steps 2 and 3 give the uniform-slope solve at the K of the grade loads. Where the only answer
    that reproduces its own K lets an axle go, the gripping solution saturates an axle at its own K
    (else "both grip" would be a second answer), and step 3 lets that axle go: the same answer
    wherever it is the same axle. Where ``g`` has several roots the bracket finds one of them.

    Parameters
    ----------
    setup : Setup
        Grip, rolling resistance and throttle.
    rig : EffectiveRig
        The rig with its ballast.
    gear : float
        Gear overdrive ``g = 1 + p/100``. [-]
    pose : RigPose
        The poses of this chunk of positions.
    keys : tuple
        ``((D_f, D_r), (d_f, d_r), (c_f, c_r))``: level roll-out diameters [mm], their loss per
        100 g [mm], slip stiffnesses [-].

    Returns
    -------
    tuple
        ContactLoads, K [-], the mismatch ``(K + pitch term)/ρ`` [-] (NaN outside the model), the
        positions outside the model, and the ``no_fixed_point`` flags.
    """
    (dia_f, dia_r), (loss_f, loss_r), (c_f, c_r) = keys
    fs, fk, rs, rk = setup.grip.axle_mu()
    level_f = rig.mass_g * rig.cg_from_rear_mm / rig.wheelbase_mm
    level = np.array([level_f, rig.mass_g - level_f])
    outside = ~np.isfinite(pose.path_ratio) | ~(pose.path_ratio > 0)
    rho = np.where(outside, 1.0, pose.path_ratio)
    rate = np.where(outside, 0.0, pose.pitch_rate_rad_per_mm)
    tol = _K_TOL * rig.mass_g
    # K can only come out between its values at the clamped diameters, so a step never goes past
    k_min = gear * 0.5 * dia_f / rig.tire_dia_rear_mm
    k_max = gear * rig.tire_dia_front_mm / (0.5 * dia_r)

    def speed(n_g, at):
        """K and the pitch term at loads `n_g` (shape (m, 2)) of the positions `at`."""
        d_f = _rolling_dia(dia_f, loss_f, rig.tire_dia_front_mm, n_g[:, 0], level[0])
        d_r = _rolling_dia(dia_r, loss_r, rig.tire_dia_rear_mm, n_g[:, 1], level[1])
        return gear * d_f / d_r, (gear - 1.0) * (d_f / 2.0) * rate[at]

    def pair(front, rear):
        """Loads as an (m, 2) array; NaN (lifted, outside) counts as level, as K needs a load."""
        n_g = np.stack((front, rear), axis=-1)
        return np.where(np.isfinite(n_g), n_g, level)

    count = rho.shape[0]
    rigid = np.isinf(c_f) and np.isinf(c_r)
    mode = np.full(count, _PLAIN if rigid else _GRIP)
    k_next, q_next = speed(np.tile(level, (count, 1)), np.arange(count))
    y = np.tile(level, (count, 1))  # plain: the loads K came from; let go: the loads it left
    plain_passes = np.zeros(count, dtype=int)
    root = _RootFind(count)
    onset_state = np.full(count, -1)
    no_fixed_point = np.zeros(count, dtype=bool)
    k_out, q_out = k_next.copy(), q_next.copy()
    loads = None
    for _ in range(_K_PASSES + 1 if (loss_f or loss_r) else 1):
        at = np.flatnonzero(mode != _DONE)
        if at.size == 0:
            break
        k_now, q_now = k_next[at], q_next[at]
        part = solve_contacts(
            rig.mass_g, pose.front_contact_mm[at], pose.rear_contact_mm[at], pose.cg_mm[at],
            pose.front_angle_deg[at], pose.rear_angle_deg[at], pose.pitch_deg[at], (fs, fk), (rs, rk),
            c_f, c_r, k_now, q_now, rho[at], setup.grip.rolling_resistance, setup.terrain.accel_g,
        )
        state = part.traction.state
        x = pair(part.front_normal_g, part.rear_normal_g)
        was = mode[at]
        if part.onset_front_normal_g is None:  # the rigid solve: no gripping solution
            o, gripping = x, np.zeros(at.size, dtype=bool)
        else:  # NaN: no gripping solution (both slide, binds)
            o = np.stack((part.onset_front_normal_g, part.onset_rear_normal_g), axis=-1)
            gripping = np.all(np.isfinite(o) & (o > 0), axis=-1)
        m = np.where((was == _GRIP) & ~gripping, _PLAIN, was)  # plain from here on
        k_x, q_x = speed(x, at)
        k_new, q_new = k_x, q_x

        # 1. the gripping branch: a step of the root find of g(K) = K(G(K)) − K
        gr = m == _GRIP
        if gr.any():
            i = at[gr]
            k_o, q_o = speed(o[gr], i)
            settled, e_step, n_pred = root.step(i, k_now[gr] + q_now[gr], q_now[gr], k_o + q_o, q_o, o[gr], tol)
            # one tyre saturated at the gripping solution and still so at the K of its loads: there
            # G does not move with K, so that K is the root (g = 0), and no pass is needed to find it
            settled |= _stays_saturated(part.onset_rear_speed_ratio[gr], k_now[gr], q_now[gr], k_o, q_o,
                                        rho[i], (c_f, c_r), (fs, rs))
            # 2. nothing saturates at the fixed point: both grip; 3. an axle saturates: it lets go
            state_g = state[gr]
            # (where the loads it left give this K again, as on a uniform slope, this solve is the fixed point)
            again = np.abs(k_x[gr] - k_now[gr]) + np.abs(q_x[gr] - q_now[gr]) <= _K_REL * k_now[gr]
            m[gr] = np.where(settled, np.where((state_g == NONE) | again, _DONE, _LET_GO), _GRIP)
            onset_state[i] = np.where(settled, state_g, -1)
            q_step = speed(n_pred, i)[1]
            k_new[gr] = np.where(settled, k_new[gr], np.clip(e_step - q_step, k_min, k_max))
            q_new[gr] = np.where(settled, q_new[gr], q_step)
        # 3. solved again at the K of the loads it left: the same state, or no fixed point
        let_go = was == _LET_GO
        same = (state == onset_state[at]) & (np.max(np.abs(x - y[at]), axis=-1) <= tol)
        flagged = let_go & ~same
        no_fixed_point[at[flagged]] = True
        m[let_go] = _DONE
        # plain passes: done when the loads reproduce the K they came from, or at the cap
        plain = m == _PLAIN
        plain_passes[at[plain]] += 1
        fixed = (was == _PLAIN) & (np.max(np.abs(x - y[at]), axis=-1) <= tol)
        m[plain & (fixed | (plain_passes[at] >= _K_PASSES_PLAIN))] = _DONE

        keep = ~flagged  # the onset's solve stands where no loads reproduce their own K
        if loads is None:
            loads = part
        else:  # only the positions still moving were solved again: put them back in place
            where = np.zeros(count, dtype=bool)
            where[at[keep]] = True
            loads = _put_back(loads, _take(part, keep), where)
        # K at the loads shown (for a flagged position: those it left, at which this pass was solved)
        k_out[at], q_out[at] = k_now, q_now
        k_next[at], q_next[at] = k_new, q_new
        y[at] = x
        mode[at] = m
    mismatch = np.where(outside, np.nan, (k_out + q_out) / rho)
    return loads, k_out, mismatch, outside, no_fixed_point


def _stays_saturated(s_r, k, q, k_to, q_to, rho, stiffness, mu_static):
    """Where exactly one tyre is saturated at the gripping solution (rear speed ratio `s_r` at K
    `k`, pitch term `q`), whether it is still saturated the same way at `k_to`, `q_to`.

    A saturated tyre carries ``±μ_s N`` whatever its slip, so the other tyre's slip, the root and the
    loads stay where they are while it stays saturated: the front's ``s_f = (K s_r + q)/ρ`` moves
    with K at a fixed ``s_r``, or the rear's ``s_r = (ρ s_f − q)/K`` at a fixed ``s_f``.
    """
    (c_f, c_r), (mu_f, mu_r) = stiffness, mu_static
    with np.errstate(divide="ignore", invalid="ignore"):
        s_f = (k * s_r + q) / rho
        lam_f, lam_r = _brush_lambda(s_f, c_f, mu_f), _brush_lambda(s_r, c_r, mu_r)
        front_to = _brush_lambda((k_to * s_r + q_to) / rho, c_f, mu_f)
        rear_to = _brush_lambda((rho * s_f - q_to) / k_to, c_r, mu_r)
        front = (np.abs(lam_f) >= 1.0) & (np.abs(lam_r) < 1.0) & (front_to * np.sign(lam_f) >= 1.0)
        rear = (np.abs(lam_r) >= 1.0) & (np.abs(lam_f) < 1.0) & (rear_to * np.sign(lam_r) >= 1.0)
    return front | rear


def _brush_lambda(s, stiffness, mu_s):
    """``λ = c σ/(3 μ_s)``, ``σ = 1 − 1/s`` (Pacejka [1]_), as `engine.contact_statics` takes it. [-]"""
    c = NEAR_RIGID if math.isinf(stiffness) else stiffness
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(s > 0, c * (1.0 - 1.0 / np.where(s > 0, s, 1.0)) / (3.0 * mu_s), -np.inf)


class _RootFind:
    """A safeguarded root find of ``g(e) = e(G(e)) − e`` for many positions at once, one step a pass.

    ``e = K + (g − 1) r_f dφ/ds_r`` is the driveline's speed ratio with the pitch term (``ρ`` times
    the mismatch): the statics depend on K and the pitch term almost only through it (they enter as
    ``K s_r + q`` with ``s_r`` within a few percent of 1), so points at different pitch terms agree.
    Until ``g`` changes sign: a plain step ``e + g`` first (the fixed-point pass), then the secant
    through the last two points (Aitken's Δ² [2]_) when it heads where ``g`` points, between one
    and ``_STEP_MAX`` plain steps long (the fixed point may attract slowly; where it repels the
    step doubles). Once ``g`` has changed sign: the secant while it stays inside the bracket, else
    false position with the end kept twice running halved (Illinois [3]_). The pitch term of the
    next pass is taken at the loads expected there (linear from the last two passes).
    """

    def __init__(self, count):
        self.e = np.full(count, np.nan)  # e, g, pitch term and loads of the last pass
        self.g = np.full(count, np.nan)
        self.q = np.full(count, np.nan)
        self.n = np.full((count, 2), np.nan)
        self.lo = np.full((count, 2), np.nan)  # (e, g) with g > 0
        self.hi = np.full((count, 2), np.nan)  # (e, g) with g < 0
        self.side = np.zeros(count, dtype=int)  # the end replaced last: +1 lo, −1 hi
        self.passes = np.zeros(count, dtype=int)

    def step(self, at, e, q, e_o, q_o, n, tol):
        """(settled, the next e, the loads expected there) after a pass at `e` (pitch term `q`)
        gave the loads `n`, whose own e and pitch term are `e_o`, `q_o`.

        Settled when K and the pitch term reproduce the loads to ``_K_REL`` and one more plain pass
        would move them less than `tol`, or at ``_K_PASSES``.
        """
        g = e_o - e
        self.passes[at] += 1
        e_prev, g_prev, q_prev, n_prev = self.e[at], self.g[at], self.q[at], self.n[at]
        with np.errstate(divide="ignore", invalid="ignore"):
            # (at the first pass there is no slope yet: settled only where the level loads give back
            # their K, as on level ground, so the next pass would repeat this one)
            moved = np.max(np.abs(n - n_prev), axis=-1)
            # |dN/de| along the branch times the change one more plain pass makes
            ahead = np.where(moved > 0, moved / (np.abs(e - e_prev) + np.abs(q - q_prev)), 0.0)
            ahead = ahead * (np.abs(g) + np.abs(q_o - q))
            # g = (K(n) − K) + (q_o − q): both parts within _K_REL
            settled = (ahead <= tol) & (np.abs(g) + 2.0 * np.abs(q_o - q) <= _K_REL * e)
        settled |= self.passes[at] >= _K_PASSES

        rising = g > 0
        sign = np.where(rising, 1, -1)
        bracketed = np.isfinite(self.lo[at, 0]) & np.isfinite(self.hi[at, 0])
        stuck = bracketed & (self.side[at] == sign)
        self.hi[at[stuck & rising], 1] *= 0.5
        self.lo[at[stuck & ~rising], 1] *= 0.5
        point = np.stack((e, g), axis=-1)
        self.lo[at[rising]], self.hi[at[~rising]] = point[rising], point[~rising]
        self.side[at] = sign
        (e_lo, g_lo), (e_hi, g_hi) = self.lo[at].T, self.hi[at].T
        bracketed = np.isfinite(e_lo) & np.isfinite(e_hi)
        # a bracket shrunk to rounding without settling has an end that no longer holds: start afresh
        lost = bracketed & (np.abs(e_hi - e_lo) <= 1e-14 * e)
        self.lo[at[lost]], self.hi[at[lost]] = np.nan, np.nan
        bracketed &= ~lost
        with np.errstate(divide="ignore", invalid="ignore"):
            false_position = (e_lo * g_hi - e_hi * g_lo) / (g_hi - g_lo)
            secant = e - g * (e - e_prev) / (g - g_prev)
            inside = (secant - e_lo) * (secant - e_hi) < 0
            toward = np.isfinite(secant) & ((secant - e) * g > 0)
            size = np.where(toward, np.abs(secant - e), 2.0 * np.abs(e - e_prev))
            size = np.clip(np.nan_to_num(size), np.abs(g), _STEP_MAX * np.abs(g))
            outward = np.where(np.isfinite(e_prev), e + sign * size, e + g)
            e_next = np.where(bracketed, np.where(inside, secant, false_position), outward)
            n_pred = n + (n - n_prev) * ((e_next - e) / (e - e_prev))[:, None]
        n_pred = np.where(np.isfinite(n_pred), n_pred, n)
        self.e[at], self.g[at], self.q[at], self.n[at] = e, g, q, n
        return settled, e_next, n_pred


def _take(loads: ContactLoads, where) -> ContactLoads:
    """The positions `where` of `loads`."""
    t = loads.traction
    traction = CourseTraction(**{f: getattr(t, f)[where] for f in CourseTraction.__dataclass_fields__})
    return ContactLoads(loads.front_normal_g[where], loads.rear_normal_g[where], traction)


def _put_back(whole: ContactLoads, part: ContactLoads, where) -> ContactLoads:
    """`whole` with the positions `where` taken from `part` (solved again on their own)."""
    def merge(a, b):
        out = np.array(a, copy=True)
        out[where] = b
        return out

    t, u = whole.traction, part.traction
    traction = CourseTraction(**{f: merge(getattr(t, f), getattr(u, f)) for f in CourseTraction.__dataclass_fields__})
    return ContactLoads(merge(whole.front_normal_g, part.front_normal_g),
                        merge(whole.rear_normal_g, part.rear_normal_g), traction)
