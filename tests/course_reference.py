"""An independent, per-position solver of the two-contact statics with brush-model tyres.

Written for the tests from the published equations, with different equations and a different
root finder from `engine.contact_statics`:
- for a trial slip, the normal forces and the force ``X`` along the chord that would be missing
  for equilibrium, from Σx, Σz and the moments about the **CG** as one 3×3 `scipy.linalg.solve`
  (the engine takes moments about each contact and projects the force balance on the chord);
- ``X = 0`` found on a fine plain scan and `scipy.optimize.brentq`, one position at a time in
  plain Python;
- a tyre that lets go: the 3×3 system (Σx, Σz, Σ moments about the CG) for ``N_f, N_r`` and the
  other tyre's force, again `scipy.linalg.solve`.
Sources: planar rigid-body equilibrium (Meriam & Kraige, *Engineering Mechanics: Statics*, ch. 3);
brush model with parabolic pressure, ``F = μ_s N ψ(λ)``, ``ψ = 3λ − 3λ|λ| + λ³``,
``λ = c σ/(3 μ_s)``, ``σ = 1 − 1/s`` (Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg
import scipy.optimize


def psi(lam: float) -> float:
    """Brush force over μ_s N (Pacejka 2012, ch. 3), saturated at |λ| = 1."""
    x = max(-1.0, min(1.0, lam))
    return 3.0 * x - 3.0 * x * abs(x) + x ** 3


def lam_of(s: float, c: float, mu: float) -> float:
    if s <= 0:
        return -math.inf
    return c * (1.0 - 1.0 / s) / (3.0 * mu)


def cross(a, b) -> float:
    return a[0] * b[1] - a[1] * b[0]


def solve_position(weight, pf, pr, cg, af_deg, ar_deg, pitch_deg, mu_f, mu_r, c_f, c_r, k, q, rho,
                   crr=0.0, accel=0.0):
    """(state, N_f, N_r, F_f, F_r) at one position; state in none/front/rear/both or None if unsure."""
    af, ar, phi = math.radians(af_deg), math.radians(ar_deg), math.radians(pitch_deg)
    tf, tr = np.array([math.cos(af), math.sin(af)]), np.array([math.cos(ar), math.sin(ar)])
    nf, nr = np.array([-math.sin(af), math.cos(af)]), np.array([-math.sin(ar), math.cos(ar)])
    pf, pr, cg = (np.asarray(v, dtype=float) for v in (pf, pr, cg))
    load = np.array([-weight * accel * math.cos(phi), -weight * (1.0 + accel * math.sin(phi))])
    e = (pf - pr) / np.linalg.norm(pf - pr)
    (msf, mkf), (msr, mkr) = mu_f, mu_r

    def vec(n, t, m):
        return n + (m - crr) * t

    def solve3(mf, mr):
        """N_f, N_r and the missing force X along the chord, applied at the rear contact, that
        would hold the rig with these tyre forces (Σx, Σz, Σ moments about the CG)."""
        vf, vr = vec(nf, tf, mf), vec(nr, tr, mr)
        a = np.array([[vf[0], vr[0], e[0]], [vf[1], vr[1], e[1]],
                      [cross(pf - cg, vf), cross(pr - cg, vr), cross(pr - cg, e)]])
        b = -np.array([load[0], load[1], 0.0])
        return scipy.linalg.solve(a, b)

    def forces(s_r):
        s_f = (k * s_r + q) / rho
        lf, lr = lam_of(s_f, c_f, msf), lam_of(s_r, c_r, msr)
        return msf * psi(lf), msr * psi(lr), lf, lr

    def residual(s_r):
        mf, mr, _, _ = forces(s_r)
        return -solve3(mf, mr)[2]  # > 0: the tyres push harder along the chord than needed

    # a fine plain scan for the first upward crossing with both normal forces positive (a pole,
    # where a normal force runs through infinity, also changes the sign: skip those)
    def good(s_r):
        mf, mr, _, _ = forces(s_r)
        n_f, n_r, _ = solve3(mf, mr)
        return n_f > 0 and n_r > 0

    grid = np.linspace(1e-3, 4.0, 4000)
    values = [residual(s) for s in grid]
    s_r = None
    for a, b, ra, rb in zip(grid, grid[1:], values, values[1:]):
        if ra < 0 <= rb and good(a) and good(b):
            s_r = scipy.optimize.brentq(residual, a, b, xtol=1e-15, rtol=1e-15, maxiter=500)
            break
    if s_r is None:
        # no equilibrium with the tyres gripping: both spin (short of drive even at full grip
        # forward) or both are dragged back; anything else is no finite equilibrium at all
        for end, sign in ((-1, 1.0), (0, -1.0)):
            if sign * values[end] < 0 and good(grid[end]):
                # both slide at ±μ_k N; the normal forces they leave decide whether an axle lifts
                n_f, n_r, _ = solve3(sign * mkf, sign * mkr)
                return ("both" if n_f > 0 and n_r > 0 else "lifted"), None, None, None, None
        return None, None, None, None, None
    mf, mr, lf, lr = forces(s_r)
    n_f, n_r, _ = solve3(mf, mr)
    sat_f, sat_r = abs(lf) >= 1.0, abs(lr) >= 1.0
    if not sat_f and not sat_r:
        return "none", n_f, n_r, mf * n_f, mr * n_r
    if sat_f and sat_r:
        return "both", None, None, None, None
    # one lets go with ±μ_k N; unknowns N_f, N_r, F_other from Σx, Σz, Σ moments about the CG
    front_slides = sat_f
    m_s = math.copysign(mkf if front_slides else mkr, lf if front_slides else lr)
    n_s, t_s, p_s = (nf, tf, pf) if front_slides else (nr, tr, pr)
    n_o, t_o, p_o = (nr, tr, pr) if front_slides else (nf, tf, pf)
    v_s, v_o = vec(n_s, t_s, m_s), n_o - crr * t_o
    a = np.array([[v_s[0], v_o[0], t_o[0]], [v_s[1], v_o[1], t_o[1]],
                  [cross(p_s - cg, v_s), cross(p_o - cg, v_o), cross(p_o - cg, t_o)]])
    b = -np.array([load[0], load[1], 0.0])
    n_sl, n_ot, f_ot = scipy.linalg.solve(a, b)
    mu_o = msr if front_slides else msf
    if abs(f_ot) > mu_o * n_ot:
        return "both", None, None, None, None
    if front_slides:
        return "front", n_sl, n_ot, m_s * n_sl, f_ot
    return "rear", n_ot, n_sl, f_ot, m_s * n_sl
