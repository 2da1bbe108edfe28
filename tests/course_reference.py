"""An independent, per-position solver of the two-contact statics with brush-model tyres.

Written for the tests from the published equations, with different equations and a different
root finder from `engine.contact_statics`:
- for a trial slip, the normal forces and the force ``X`` along the chord that would be missing
  for equilibrium, from Σx, Σz and the moments about the **CG** as one 3×3 `scipy.linalg.solve`
  (the engine takes moments about each contact and projects the force balance on the chord);
- ``X = 0`` found on a fine plain scan and `scipy.optimize.brentq`, one position at a time in
  plain Python;
- a tyre that lets go: the 3×3 system (Σx, Σz, Σ moments about the CG) for ``N_f, N_r`` and the
  other tyre's force, again `scipy.linalg.solve`;
- `gripping_normals`: the normal forces at ``X = 0`` itself, before any tyre lets go (the onset of
  MODEL §5, which decides a state that flips with the speed ratio).
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


class _Position:
    """One position's equations: tyre forces for a trial slip, and the 3×3 equilibrium solves."""

    def __init__(self, weight, pf, pr, cg, af_deg, ar_deg, pitch_deg, mu_f, mu_r, c_f, c_r, k, q, rho,
                 crr=0.0, accel=0.0):
        af, ar, phi = math.radians(af_deg), math.radians(ar_deg), math.radians(pitch_deg)
        self.tf, self.tr = np.array([math.cos(af), math.sin(af)]), np.array([math.cos(ar), math.sin(ar)])
        self.nf, self.nr = np.array([-math.sin(af), math.cos(af)]), np.array([-math.sin(ar), math.cos(ar)])
        self.pf, self.pr, self.cg = (np.asarray(v, dtype=float) for v in (pf, pr, cg))
        self.load = np.array([-weight * accel * math.cos(phi), -weight * (1.0 + accel * math.sin(phi))])
        self.e = (self.pf - self.pr) / np.linalg.norm(self.pf - self.pr)
        self.mu_f, self.mu_r, self.c_f, self.c_r = mu_f, mu_r, c_f, c_r
        self.k, self.q, self.rho, self.crr = k, q, rho, crr

    def vec(self, n, t, m):
        return n + (m - self.crr) * t

    def solve3(self, mf, mr):
        """N_f, N_r and the missing force X along the chord, applied at the rear contact, that
        would hold the rig with these tyre forces (Σx, Σz, Σ moments about the CG)."""
        vf, vr = self.vec(self.nf, self.tf, mf), self.vec(self.nr, self.tr, mr)
        pf, pr, cg, e = self.pf, self.pr, self.cg, self.e
        a = np.array([[vf[0], vr[0], e[0]], [vf[1], vr[1], e[1]],
                      [cross(pf - cg, vf), cross(pr - cg, vr), cross(pr - cg, e)]])
        b = -np.array([self.load[0], self.load[1], 0.0])
        return scipy.linalg.solve(a, b)

    def forces(self, s_r):
        s_f = (self.k * s_r + self.q) / self.rho
        (msf, _), (msr, _) = self.mu_f, self.mu_r
        lf, lr = lam_of(s_f, self.c_f, msf), lam_of(s_r, self.c_r, msr)
        return msf * psi(lf), msr * psi(lr), lf, lr

    def residual(self, s_r):
        mf, mr, _, _ = self.forces(s_r)
        return -self.solve3(mf, mr)[2]  # > 0: the tyres push harder along the chord than needed

    def good(self, s_r):
        mf, mr, _, _ = self.forces(s_r)
        n_f, n_r, _ = self.solve3(mf, mr)
        return n_f > 0 and n_r > 0

    def gripping_slip(self):
        """The rear speed ratio at the gripping solution (None: none), and the scanned residuals.

        A fine plain scan for the first upward crossing with both normal forces positive (a pole,
        where a normal force runs through infinity, also changes the sign: skip those)."""
        grid = np.linspace(1e-3, 4.0, 4000)
        values = [self.residual(s) for s in grid]
        for a, b, ra, rb in zip(grid, grid[1:], values, values[1:]):
            if ra < 0 <= rb and self.good(a) and self.good(b):
                return scipy.optimize.brentq(self.residual, a, b, xtol=1e-15, rtol=1e-15, maxiter=500), grid, values
        return None, grid, values


def gripping_normals(*args, **kwargs):
    """(N_f, N_r) at the gripping solution, before any axle lets go (the onset, MODEL §5), or None
    where the tyres cannot hold the rig while gripping. Arguments as `solve_position`."""
    pos = _Position(*args, **kwargs)
    s_r = pos.gripping_slip()[0]
    if s_r is None:
        return None
    mf, mr, _, _ = pos.forces(s_r)
    n_f, n_r, _ = pos.solve3(mf, mr)
    return n_f, n_r


def solve_position(weight, pf, pr, cg, af_deg, ar_deg, pitch_deg, mu_f, mu_r, c_f, c_r, k, q, rho,
                   crr=0.0, accel=0.0):
    """(state, N_f, N_r, F_f, F_r) at one position; state in none/front/rear/both or None if unsure."""
    pos = _Position(weight, pf, pr, cg, af_deg, ar_deg, pitch_deg, mu_f, mu_r, c_f, c_r, k, q, rho, crr, accel)
    (msf, mkf), (msr, mkr) = mu_f, mu_r
    forces, solve3, good, vec = pos.forces, pos.solve3, pos.good, pos.vec
    nf, nr, tf, tr, pf, pr, cg, load = pos.nf, pos.nr, pos.tf, pos.tr, pos.pf, pos.pr, pos.cg, pos.load
    s_r, grid, values = pos.gripping_slip()
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
