"""Ballast: combine the measured rig with weights added or removed afterwards.

References
----------
.. [1] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2
   (mass centre of a vehicle as the mass-weighted mean position of its parts).
"""

from __future__ import annotations

import numpy as np


def combined_cg(mass_g, x_mm, z_mm):
    """Total mass and mass-weighted centre of several masses.

    Parameters
    ----------
    mass_g : array_like
        Masses; negative for parts removed. [g]
    x_mm, z_mm : array_like
        Positions of each mass along and above the ground. [mm]

    Returns
    -------
    total_g, x_mm, z_mm : float
        Total mass [g] and the centre [mm]. The centre is NaN when the total mass is zero.

    Notes
    -----
    ``x = Σ m_i x_i / Σ m_i``, likewise for ``z`` [1]_.
    """
    m = np.asarray(mass_g, dtype=float)
    total = float(m.sum())
    with np.errstate(divide="ignore", invalid="ignore"):
        x = float(np.dot(m, np.asarray(x_mm, dtype=float)) / total) if total != 0 else float("nan")
        z = float(np.dot(m, np.asarray(z_mm, dtype=float)) / total) if total != 0 else float("nan")
    return total, x, z


def combine_ballast(rig):
    """Effective mass and CG of a `Rig` with its ballast items.

    Returns
    -------
    mass_g, cg_from_rear_mm, cg_height_mm : float
        Effective rig. [g], [mm], [mm]
    """
    base_x = rig.front_bias_pct / 100.0 * rig.wheelbase_mm
    masses = [rig.mass_g] + [b.mass_g for b in rig.ballast]
    xs = [base_x] + [b.x_mm for b in rig.ballast]
    zs = [rig.cg_height_mm] + [b.z_mm for b in rig.ballast]
    return combined_cg(masses, xs, zs)
