"""Tyre force against longitudinal slip: the brush model with a parabolic pressure distribution.

A tyre that rolls with its tread moving at ``u`` over the ground while its centre moves at ``v``
runs at the speed ratio ``s = u/v`` (1: pure rolling). The longitudinal slip is ``κ = s − 1``
(SAE J670 sense, drive positive) and the theoretical slip ``σ = κ/(1 + κ) = 1 − 1/s`` [1]_.
With the slip stiffness per unit load ``c`` (slope of force/load against slip at zero slip) and
the static (peak) friction ``μ_s`` the brush model gives

    λ = c σ / (3 μ_s)
    F = μ_s N ψ(λ),   ψ(λ) = 3λ − 3λ|λ| + λ³  for |λ| <= 1,   ψ = sign(λ) beyond.

At ``|λ| >= 1`` the whole contact patch slides. ``ψ'(0) = 3``, so ``dF/dσ = c N`` at zero slip.
``ψ`` is odd and on ``[0, 1]`` equals ``1 − (1 − λ)³``, which inverts in closed form.
A stiffness of ``math.inf`` is the rigid tyre: any slip saturates it.

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., Butterworth-Heinemann, 2012,
   sec. 3.2 (brush model, theoretical slip, parabolic pressure distribution, full sliding).
.. [2] SAE J670, *Vehicle Dynamics Terminology* (longitudinal slip ratio).
"""

from __future__ import annotations

import numpy as np


def brush_psi(lam):
    """Normalised brush force ``ψ(λ) = F/(μ_s N)``. [-]

    Parameters
    ----------
    lam : array_like
        Normalised slip ``λ = c σ/(3 μ_s)``. [-] ``±inf`` allowed (rigid tyre).

    Returns
    -------
    ndarray
        ``3λ − 3λ|λ| + λ³`` for ``|λ| <= 1``, ``sign(λ)`` beyond [1]_.
    """
    lam = np.asarray(lam, dtype=float)
    x = np.clip(lam, -1.0, 1.0)
    # Horner form of 3x − 3x|x| + x³: numpy's `x ** 3` goes through pow(), ~100x slower than products
    return x * (3.0 - 3.0 * np.abs(x) + x * x)


def brush_psi_slope(lam):
    """``dψ/dλ = 3 (1 − |λ|)²`` inside the patch, 0 at full sliding. [-]"""
    x = np.clip(np.asarray(lam, dtype=float), -1.0, 1.0)
    return 3.0 * (1.0 - np.abs(x)) ** 2


def brush_psi_inverse(u):
    """``λ`` with ``ψ(λ) = u`` for ``|u| <= 1`` (closed form ``1 − (1 − |u|)^(1/3)``, odd). [-]

    Values beyond ±1 are clipped to ±1 (the force cannot exceed ``μ_s N``).
    """
    u = np.clip(np.asarray(u, dtype=float), -1.0, 1.0)
    return np.sign(u) * (1.0 - np.cbrt(1.0 - np.abs(u)))


def theoretical_slip(speed_ratio):
    """``σ = 1 − 1/s`` from the tread-over-centre speed ratio ``s`` (> 0). [-] [1]_"""
    return 1.0 - 1.0 / np.asarray(speed_ratio, dtype=float)


def slip_from_theoretical(sigma):
    """Longitudinal slip ``κ = σ/(1 − σ)`` [2]_ (``σ < 1``). [-]"""
    sigma = np.asarray(sigma, dtype=float)
    return sigma / (1.0 - sigma)


def brush_lambda(sigma, stiffness, mu_static):
    """``λ = c σ / (3 μ_s)``; with ``c = inf`` it is ``±inf`` for any slip and 0 at none. [-]"""
    sigma = np.asarray(sigma, dtype=float)
    stiffness = np.asarray(stiffness, dtype=float)
    with np.errstate(invalid="ignore", over="ignore"):
        lam = stiffness * sigma / (3.0 * np.asarray(mu_static, dtype=float))
    return np.where(sigma == 0.0, 0.0, lam)


def brush_force_g(normal_g, mu_static, stiffness, sigma):
    """Longitudinal force of a gripping tyre, saturating at ``±μ_s N``. [gf]

    Parameters
    ----------
    normal_g : array_like
        Normal force. [gf]
    mu_static : array_like
        Static (peak) friction. [-]
    stiffness : array_like
        Slip stiffness per unit load ``c`` (> 3 μ_s), or ``inf``. [-]
    sigma : array_like
        Theoretical slip. [-]
    """
    return np.asarray(mu_static, float) * np.asarray(normal_g, float) * brush_psi(
        brush_lambda(sigma, stiffness, mu_static))


def slip_for_force(force_g, normal_g, mu_static, stiffness):
    """Theoretical slip ``σ`` at which a gripping tyre carries `force_g` (``|F| <= μ_s N``). [-]

    ``σ = 3 μ_s ψ⁻¹(F/(μ_s N)) / c``; 0 for a rigid tyre (``c = inf``).
    """
    mu = np.asarray(mu_static, float)
    lam = brush_psi_inverse(np.asarray(force_g, float) / (mu * np.asarray(normal_g, float)))
    return 3.0 * mu * lam / np.asarray(stiffness, float)
