"""Loads along a course walk, with the speed ratio K under those loads: a fixed point per position.

The driveline's speed ratio ``K = g D_f(N_f)/D_r(N_r)`` follows the axle loads through the
roll-out diameters under load (MODEL §4), and on ground of two angles the loads follow K through
the tyre forces (the wind-up pair has a moment): each position's loads ``N`` must reproduce their
own K, ``N = S(K(N))`` with ``S`` the contact statics of `engine.contact_statics`.

Where the slip state flips with K there can be no such loads; the onset rule of MODEL §5 then
decides (see `solve_loads`).

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3 (rolling radius, brush model).
.. [2] R. L. Burden, J. D. Faires, *Numerical Analysis*, 9th ed., 2011, sec. 2.5 (Aitken's Δ²
   method and Steffensen's method for fixed-point iteration).
"""

from __future__ import annotations

import numpy as np

from .contact_statics import ContactLoads, CourseTraction, solve_contacts

_K_PASSES = 12  # at most: a plain pass shrinks the change 3-30x, an extrapolated one far more
_K_PASSES_UNDECIDED = 8  # a 2-cycle with no gripping solution to decide it stops here, as it always did
_K_TOL = 1e-9  # share of the weight: the loads no longer move, K matches them
_AITKEN_MAX_RATIO = 0.9  # extrapolate a change that shrinks by a steady ratio up to this


def _rolling_dia(level_mm, loss_mm_per_100g, free_mm, normal_g, level_g):
    """Rolling diameter under load, clamped at the free diameter and at half the level one. [mm]"""
    d = level_mm - loss_mm_per_100g * (np.asarray(normal_g) - level_g) / 100.0
    return np.clip(np.where(np.isfinite(d), d, level_mm), 0.5 * level_mm, free_mm)


def solve_loads(setup, rig, gear, pose, keys):
    """Loads, slip states and K at each pose, the loads reproducing their own K: ``N = S(K(N))``.

    `S` is the contact statics at a speed ratio, ``K(N)`` the rolling diameters under the loads
    (MODEL §4). From the level loads each position is iterated until its loads move less than
    ``_K_TOL`` of the weight; the solve of that last pass is the result, so its loads reproduce
    its K. Where the last three iterates share a slip state the change shrinks by a steady ratio
    per pass, and it is extrapolated to its limit (Aitken's Δ² process [2]_); the result is still
    a plain solve that meets the same test.

    Where the slip state flips with K there may be no fixed point: the gripping solution's loads
    give a K at which an axle saturates, and the loads after it lets go give a K at which it would
    grip, so the iteration comes back to the loads of two passes before (a 2-cycle). MODEL §5
    decides every state at the onset, from an unwound driveline: by the gripping solution, before
    any axle lets go. Such a position is then iterated on the gripping solution's own loads (they
    change continuously with K while the same root is followed, so they have a fixed point) and
    takes the state at that K:

    - nothing saturates there: it is a fixed point of `S` as well, and the result;
    - an axle saturates: it lets go. The result is that state, with the loads after it let go
      (they depend on K only through the direction of sliding) and K at those loads, at which a
      fresh onset would grip again. These positions are flagged ``no_fixed_point``.

    With no gripping solution to decide (rigid tyres, where the faster axle flips with K; both
    slipping; binds) a 2-cycle is left as it always was: the solve of pass ``_K_PASSES_UNDECIDED``.

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
    y = np.tile(level, (count, 1))  # the loads the next K comes from
    prev = np.full((count, 2), np.nan)  # the iterate before y ...
    chained = np.zeros(count, dtype=bool)  # ... of which y is the plain image (no extrapolation)
    prev_state = np.full(count, -1)
    onset = np.zeros(count, dtype=bool)  # a 2-cycle was found: iterate on the gripping solve's loads
    undecided = np.zeros(count, dtype=bool)  # a 2-cycle with no gripping solution (rigid tyres)
    settled = np.zeros(count, dtype=bool)
    last = np.zeros((count, 2))  # the loads of each position's last solve
    todo = np.ones(count, dtype=bool)
    passes = _K_PASSES if (loss_f or loss_r) else 1
    loads = k = q = None
    for done_passes in range(1, passes + 1):
        at = np.flatnonzero(todo)
        y_at = y[at]
        k_now, q_now = speed(y_at, at)
        part = solve_contacts(
            rig.mass_g, pose.front_contact_mm[at], pose.rear_contact_mm[at], pose.cg_mm[at],
            pose.front_angle_deg[at], pose.rear_angle_deg[at], pose.pitch_deg[at], (fs, fk), (rs, rk),
            c_f, c_r, k_now, q_now, rho[at], setup.grip.rolling_resistance, setup.terrain.accel_g,
        )
        if loads is None:
            loads, k, q = part, k_now, q_now
        else:  # only the positions still moving were solved again: put them back in place
            k, q = k.copy(), q.copy()
            k[at], q[at] = k_now, q_now
            loads = _put_back(loads, part, todo)
        state = part.traction.state
        x = pair(part.front_normal_g, part.rear_normal_g)
        last[at] = x
        if part.onset_front_normal_g is None:  # the rigid solve: no gripping solution
            o, gripping = x, np.zeros(at.shape, dtype=bool)
        else:  # NaN: no gripping solution (both slide, binds)
            o = np.stack((part.onset_front_normal_g, part.onset_rear_normal_g), axis=-1)
            gripping = np.all(np.isfinite(o) & (o > 0), axis=-1)
            o = np.where(gripping[:, None], o, x)
        target = np.where(onset[at, None], o, x)
        done = np.max(np.abs(target - y_at), axis=-1) <= tol
        # back at the iterate before last: a 2-cycle, which never settles
        back = ~done & chained[at] & (np.max(np.abs(target - prev[at]), axis=-1) <= tol)
        cycle = back & ~onset[at] & gripping
        undecided[at[back & ~gripping]] = True
        target = np.where(cycle[:, None], o, target)
        onset[at[cycle]] = True
        # Aitken's Δ² where the last three iterates share a state and the change shrinks steadily
        d1, d2 = y_at - prev[at], target - y_at
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.sum(d1 * d2, axis=-1) / np.sum(d1 * d1, axis=-1)
        leap = (chained[at] & ~cycle & (state == prev_state[at]) & np.isfinite(ratio)
                & (np.abs(ratio) <= _AITKEN_MAX_RATIO))
        ahead = np.where(leap[:, None], target + (ratio / (1.0 - ratio))[:, None] * d2, target)
        prev[at], y[at] = y_at, ahead
        chained[at] = ~leap
        prev_state[at] = state
        settled[at[done]] = True
        todo[at[done]] = False
        if done_passes >= _K_PASSES_UNDECIDED:
            todo &= ~undecided
        if not todo.any():
            break
    # the onset rule let an axle go: its loads are not those K came from; K follows the loads shown
    no_fixed_point = onset & settled & (np.max(np.abs(last - prev), axis=-1) > tol)
    if no_fixed_point.any():
        at = np.flatnonzero(no_fixed_point)
        k, q = k.copy(), q.copy()
        k[at], q[at] = speed(last[at], at)
    mismatch = np.where(outside, np.nan, (k + q) / rho)
    return loads, k, mismatch, outside, no_fixed_point


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
