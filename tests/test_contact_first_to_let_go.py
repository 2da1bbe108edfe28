"""Which axle lets go first under wind-up, and where rigid tyres bind (engine.contact_rigid).

Sources named beside each check:
- rigid limit: which axle lets go first from the feasible interval of the friction cone along the
  line of equilibria (`scipy.linalg.null_space`), with the driveline kinematics of MODEL §5;
- "binds" where maximising the wind-up is an unbounded linear program (`scipy.optimize.linprog`);
- both over planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering
  Mechanics: Statics*, ch. 3), written out in tests/contact_equations.py, and Coulomb friction
  cones |F| <= μ_s N (Serway & Beichner, 5th ed., ch. 5).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg
import scipy.optimize

from slopetune.engine.contact_rigid import BINDS
from slopetune.engine.traction import FRONT, LIFTED, REAR

from contact_equations import equilibrium_loads, equilibrium_rows, solve_contacts


def _random_contacts(rng, n):
    """`n` random contact geometries: contact angles, arms of both contacts from the CG, pitch [deg, mm]."""
    af, ar = rng.uniform(-60.0, 88.0, n), rng.uniform(-60.0, 88.0, n)
    arm_f = np.stack((rng.uniform(60, 250, n), rng.uniform(-150, -20, n)), -1)
    arm_r = np.stack((rng.uniform(-250, -60, n), rng.uniform(-150, -20, n)), -1)
    return af, ar, arm_f, arm_r, rng.uniform(-40, 40, n)


def _first_to_let_go(a, b, fast, mu_f, mu_r):
    """Reference: which axle a growing wind-up pair brings to its limit first, or None.

    The equilibrium solutions are x0 + P d (scipy.linalg.lstsq and null_space of the 3x4
    system), P the overdriven axle's force. Each Coulomb margin μ_s N ∓ F is linear in P; the
    splits where both grip are the interval between the last growing margin's zero and the first
    shrinking one's. Raising P normally stops at the top. But the driveline forces the slips
    apart (MODEL §5: s_f = (K/ρ) s_r), so an axle can only let go alone with the fast one driving
    forward or the slow one dragged backward (with rigid tyres the other would have to slide
    too); where the top limit is the other kind, P also loads the fast axle's own normal force
    and its grip share falls as P grows: the wind-up grows towards the bottom, which is then the
    limit reached (hand-worked in test_wall_rear_overdriven_hand_worked).
    None when no split grips on both axles or two limits tie.
    """
    x0 = scipy.linalg.lstsq(a, b)[0]
    d = scipy.linalg.null_space(a)[:, 0]
    d = d / d[fast + 1]
    lows, ups = [], []
    for i, mu in ((0, mu_f), (2, mu_r)):
        for sign in (1.0, -1.0):
            value, slope = mu * x0[i] - sign * x0[i + 1], mu * d[i] - sign * d[i + 1]
            (lows if slope > 0 else ups).append((-value / slope, i, (i == fast) == (sign > 0)))
    if not ups:
        return None
    ups.sort()
    lows.sort(reverse=True)
    lo = lows[0][0] if lows else -np.inf
    scale = float(np.abs(b).max())
    if ups[0][0] <= lo + 1e-6 * scale or (len(ups) > 1 and ups[1][0] - ups[0][0] < 1e-6 * scale):
        return None
    first = ups[0]
    if not first[2] and lows and lows[0][2]:
        if len(lows) > 1 and lows[0][0] - lows[1][0] < 1e-6 * scale:
            return None
        first = lows[0]
    return FRONT if first[1] == 0 else REAR


def test_first_to_let_go_follows_the_friction_cone():
    """3,000 random contact geometries (seeded): the reported slipping axle is the reference's
    first to let go, including tyres pressed into an edge, whose margin grows with the pair."""
    rng = np.random.default_rng(20261201)
    n = 1500
    checked = pressed = 0
    for od, fast in (("front", 0), ("rear", 2)):
        af, ar, arm_f, arm_r, pitch = _random_contacts(rng, n)
        mu = rng.uniform(0.4, 1.6)
        mu_f, mu_r = (mu, 0.8 * mu), (1.2 * mu, 0.96 * mu)
        out = solve_contacts(1000.0, arm_f, arm_r, af, ar, pitch, mu_f, mu_r, od, 0.03)
        for k in np.flatnonzero(np.isin(out.traction.state, (FRONT, REAR))):
            a = equilibrium_rows(arm_f[k], arm_r[k], math.radians(af[k]), math.radians(ar[k]), 0.03)
            b = equilibrium_loads(1000.0, math.radians(pitch[k]), 0.0)
            ref = _first_to_let_go(a, b, fast, mu_f[0], mu_r[0])
            if ref is None:
                continue
            checked += 1
            d = scipy.linalg.null_space(a)[:, 0]
            d = d / d[fast + 1]
            slow = 2 - fast
            pressed += (mu_r[0] if slow == 2 else mu_f[0]) * d[slow] + d[slow + 1] > 0
            assert int(out.traction.state[k]) == ref, (od, af[k], ar[k], arm_f[k], arm_r[k], pitch[k], mu)
    assert checked > 1000 and pressed > 100  # the test reached both regimes


def _wind_up_is_unbounded(a, b, fast, mu_f, mu_r):
    """scipy.optimize.linprog: maximise the fast axle's force over the equilibria inside both
    friction cones. Returns True (unbounded: binds), False (bounded) or None (no such equilibrium)."""
    # variables (N_f, F_f, N_r, F_r); cones −μ N <= F <= μ N, N >= 0
    a_ub = np.array([[-mu_f, 1, 0, 0], [-mu_f, -1, 0, 0], [0, 0, -mu_r, 1], [0, 0, -mu_r, -1]], float)
    c = np.zeros(4)
    c[fast + 1] = -1.0
    res = scipy.optimize.linprog(c, A_ub=a_ub, b_ub=np.zeros(4), A_eq=a, b_eq=b,
                                 bounds=[(0, None), (None, None), (0, None), (None, None)], method="highs")
    if res.status == 3:
        return True
    if res.status == 0:
        return False
    return None


def test_binds_exactly_where_the_wind_up_is_unbounded():
    """4,000 random contact geometries (seeded), rigid tyres: the state is `binds` exactly where
    the linear program "maximise the wind-up pair over the equilibria within both friction cones"
    is unbounded (no friction limit is ever reached, all four checked), and never "both grip"."""
    rng = np.random.default_rng(20261203)
    n = 2000
    binds = bounded = 0
    for od, fast in (("front", 0), ("rear", 2)):
        af, ar, arm_f, arm_r, pitch = _random_contacts(rng, n)
        mu_f, mu_r = (1.0, 0.8), (0.9, 0.72)
        out = solve_contacts(1000.0, arm_f, arm_r, af, ar, pitch, mu_f, mu_r, od, 0.03)
        for k in range(n):
            a = equilibrium_rows(arm_f[k], arm_r[k], math.radians(af[k]), math.radians(ar[k]), 0.03)
            b = equilibrium_loads(1000.0, math.radians(pitch[k]), 0.0)
            lp = _wind_up_is_unbounded(a, b, fast, mu_f[0], mu_r[0])
            state = int(out.traction.state[k])
            if lp is None or state == LIFTED:
                continue
            assert (state == BINDS) == lp, (od, af[k], ar[k], arm_f[k], arm_r[k], pitch[k])
            binds += lp
            bounded += not lp
    assert binds > 20 and bounded > 1000  # both regimes reached
