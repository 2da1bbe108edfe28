"""Ballast: combine the measured rig with weights added or removed afterwards.

References
----------
.. [1] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2
   (mass centre of a vehicle as the mass-weighted mean position of its parts).
"""

from __future__ import annotations

import math


def combined_cg(mass_g, x_mm, z_mm):
    """Total mass and mass-weighted centre of several masses.

    Parameters
    ----------
    mass_g : sequence of float
        Masses; negative for parts removed. [g]
    x_mm, z_mm : sequence of float
        Positions of each mass along and above the ground. [mm]

    Returns
    -------
    total_g, x_mm, z_mm : float
        Total mass [g] and the centre [mm]. The centre is NaN when the total mass is zero.

    Notes
    -----
    ``x = Σ m_i x_i / Σ m_i``, likewise for ``z`` [1]_. A rig has a handful of items, so this is
    plain Python (``math.fsum``, exactly rounded): checking a file then never loads numpy.
    """
    m = [float(v) for v in mass_g]
    total = math.fsum(m)
    if total == 0:
        return total, float("nan"), float("nan")
    x = math.fsum(mi * float(xi) for mi, xi in zip(m, x_mm)) / total
    z = math.fsum(mi * float(zi) for mi, zi in zip(m, z_mm)) / total
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
