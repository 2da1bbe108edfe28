"""The two-contact statics as the contact tests call them, and the equilibrium equations written out.

`solve_contacts` is `engine.contact_statics.solve_contacts` in its rigid limit, with contact points
given relative to the CG. `equilibrium_rows` and `equilibrium_loads` are planar rigid-body
equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics: Statics*, ch. 3), written
out from the model's contact force, not taken from the engine.
"""

from __future__ import annotations

import math

import numpy as np

from slopetune.engine.contact_statics import solve_contacts as solve_slip

RIGID = math.inf
_OD_RATIO = {"front": 1.05, "rear": 0.95, None: 1.0}


def solve_contacts(weight, front_arm, rear_arm, af, ar, pitch, mu_f, mu_r, od, crr=0.0, accel=0.0):
    """The rigid limit with contact points given relative to the CG (CG at the origin) and the
    overdriven axle named: K/ρ above, below or at 1."""
    front_arm, rear_arm = np.atleast_2d(np.asarray(front_arm, float)), np.atleast_2d(np.asarray(rear_arm, float))
    n = front_arm.shape[0]
    return solve_slip(weight, front_arm, rear_arm, np.zeros((n, 2)), af, ar, pitch, mu_f, mu_r, RIGID, RIGID,
                      np.full(n, _OD_RATIO[od]), np.zeros(n), np.ones(n), crr, accel)


def equilibrium_rows(front_arm, rear_arm, alpha_f, alpha_r, crr):
    """3x4 matrix of Σx, Σz and Σ moment about the CG for (N_f, F_f, N_r, F_r), from the model:
    contact force N n + (F − c_rr N) t with n = (−sin α, cos α), t = (cos α, sin α)."""
    cols = []
    for arm, alpha in ((front_arm, alpha_f), (rear_arm, alpha_r)):
        n = np.array([-math.sin(alpha), math.cos(alpha)])
        t = np.array([math.cos(alpha), math.sin(alpha)])
        for f in (n - crr * t, t):
            cols.append([f[0], f[1], arm[0] * f[1] - arm[1] * f[0]])
    return np.array(cols).T


def equilibrium_loads(weight, pitch, accel):
    """Right-hand side of `equilibrium_rows`: weight and throttle along the chord at `pitch` [rad]."""
    return np.array([weight * accel * math.cos(pitch), weight * (1 + accel * math.sin(pitch)), 0.0])
