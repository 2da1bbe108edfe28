"""Tyre slip under driveline wind-up (MODEL section 5): the brush model and the onset solve.

Sources named beside each check:
- H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2: brush model with a parabolic
  pressure distribution, ``F/(μN) = 3λ − 3λ|λ| + λ³`` up to full sliding at ``|λ| = 1``, slope ``c``
  per unit load at zero slip, theoretical slip ``σ = κ/(1 + κ)``.
- T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, 1992, ch. 2: traction-limited grade of a
  four-wheel drive, ``tan θ = μ`` with equal friction and no rolling resistance.
- SAE J670: longitudinal slip ratio ``κ = u/v − 1``.
Independent solver: `scipy.optimize.brentq` per slope, written here from the equations of section 5.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as hs
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from slopetune.engine.traction import (
    BOTH, FRONT, LIFTED, NONE, REAR, required_force_g, slip_traction_state, traction_state,
)
from slopetune.engine.tyre_brush import (
    brush_force_g, brush_psi, brush_psi_inverse, slip_from_theoretical, theoretical_slip,
)


# --- brush model (Pacejka 2012, sec. 3.2) -------------------------------------------------------

@pytest.mark.parametrize("lam, psi", [
    (0.0, 0.0),
    (0.25, 0.578125),   # worked by hand: 0.75 − 0.1875 + 0.015625
    (0.5, 0.875),       # worked by hand: 1.5 − 0.75 + 0.125
    (1.0, 1.0),         # full sliding: 3 − 3 + 1
    (-0.5, -0.875),     # odd
    (2.0, 1.0), (-7.0, -1.0), (math.inf, 1.0),  # saturated beyond |λ| = 1
])
def test_brush_force_shape_worked_by_hand(lam, psi):
    assert_allclose(brush_psi(lam), psi, atol=1e-12)


def test_brush_slope_at_zero_slip_is_the_slip_stiffness():
    # Pacejka sec. 3.2: dF/dσ = c N at σ = 0 (c is defined per unit load)
    n, mu, c, d = 800.0, 1.1, 12.0, 1e-7
    slope = (brush_force_g(n, mu, c, d) - brush_force_g(n, mu, c, -d)) / (2 * d)
    assert_allclose(slope, c * n, rtol=1e-6)


def test_brush_saturates_exactly_at_three_mu_over_c():
    # λ = cσ/(3μ) = 1 at σ = 3μ/c: the whole patch slides (Pacejka sec. 3.2)
    n, mu, c = 500.0, 0.9, 10.0
    assert_allclose(brush_force_g(n, mu, c, 3 * mu / c), mu * n, rtol=1e-12)
    assert brush_force_g(n, mu, c, 0.999 * 3 * mu / c) < mu * n


def test_inverse_of_the_brush_curve():
    u = np.linspace(-1, 1, 41)
    assert_allclose(brush_psi(brush_psi_inverse(u)), u, atol=1e-12)
    assert_allclose(brush_psi_inverse(0.875), 0.5, atol=1e-12)  # the value worked above


def test_theoretical_slip_and_slip_ratio():
    # SAE J670 κ = s − 1; Pacejka σ = κ/(1 + κ)
    s = np.array([0.5, 1.0, 1.25, 3.0])
    kappa = s - 1
    assert_allclose(theoretical_slip(s), kappa / (1 + kappa))
    assert_allclose(slip_from_theoretical(theoretical_slip(s)), kappa)


# --- independent per-slope solver (scipy brentq), from the equations of MODEL section 5 ----------

def reference_state(nf, nr, f_req, mu_f, mu_r, c_f, c_r, ratio):
    """(state, F_f, F_r) by brentq on the rear speed ratio s_r (not σ), scalar floats."""
    (msf, mkf), (msr, mkr) = mu_f, mu_r
    if nf <= 0 or nr <= 0:
        return "lifted", None, None

    def lam(s, c, mu):
        return c * (1 - 1 / s) / (3 * mu)

    def psi(x):
        x = max(-1.0, min(1.0, x))
        return 3 * x - 3 * x * abs(x) + x ** 3

    def g(s_r):
        return msf * nf * psi(lam(ratio * s_r, c_f, msf)) + msr * nr * psi(lam(s_r, c_r, msr)) - f_req

    cap = msf * nf + msr * nr
    if abs(f_req) >= cap:  # both spin out (or slide back) at kinetic friction
        return "both", math.copysign(mkf * nf, f_req), math.copysign(mkr * nr, f_req)
    s_r = brentq(g, 1e-9, 1e9, xtol=1e-15, rtol=1e-15, maxiter=500)
    lf, lr = lam(ratio * s_r, c_f, msf), lam(s_r, c_r, msr)
    if abs(lf) >= 1 and abs(lr) >= 1:
        return "both", math.copysign(mkf * nf, lf), math.copysign(mkr * nr, lr)
    if abs(lf) >= 1:
        ff = math.copysign(mkf * nf, lf)
        fr = f_req - ff
        if abs(fr) <= msr * nr:
            return "front", ff, fr
        return "both", ff, math.copysign(mkr * nr, fr)  # the rear cannot carry the rest either
    if abs(lr) >= 1:
        fr = math.copysign(mkr * nr, lr)
        ff = f_req - fr
        if abs(ff) <= msf * nf:
            return "rear", ff, fr
        return "both", math.copysign(mkf * nf, ff), fr
    ff = msf * nf * psi(lf)
    return "none", ff, f_req - ff


def _grade(w, length, b, h, theta_deg):
    t = math.radians(theta_deg)
    nf = w * (b * math.cos(t) - h * math.sin(t)) / length  # Gillespie ch. 2, moments about the rear
    return nf, w * math.cos(t) - nf


@settings(max_examples=60, deadline=None)
@given(
    bias=hs.floats(0.35, 0.7), h_over_l=hs.floats(0.15, 0.45), mu=hs.floats(0.5, 1.4),
    kin=hs.floats(0.5, 1.0), c=hs.floats(4.5, 60.0), c_ratio=hs.floats(0.5, 2.0),
    ratio=hs.floats(0.8, 1.4), crr=hs.floats(0.0, 0.08),
)
def test_vectorised_solve_agrees_with_brentq(bias, h_over_l, mu, kin, c, c_ratio, ratio, crr):
    w, length = 2000.0, 300.0
    b, h = bias * length, h_over_l * length
    mu_f, mu_r = (mu, kin * mu), (0.9 * mu, 0.9 * kin * mu)
    c_f, c_r = max(c, 3.2 * mu), max(c * c_ratio, 3.2 * mu)
    slopes = np.arange(-60.0, 61.0, 3.0)
    loads = [_grade(w, length, b, h, t) for t in slopes]
    nf = np.array([x[0] for x in loads]); nr = np.array([x[1] for x in loads])
    f_req = w * (np.sin(np.radians(slopes)) + crr * np.cos(np.radians(slopes)))
    ts = slip_traction_state(nf, nr, f_req, mu_f, mu_r, c_f, c_r, ratio)
    names = ["none", "front", "rear", "both", "lifted", "binds"]
    for i, t in enumerate(slopes):
        state, ff, fr = reference_state(nf[i], nr[i], f_req[i], mu_f, mu_r, c_f, c_r, ratio)
        # away from transitions the states agree (a nudge of the slope keeps the reference state)
        near = {reference_state(*_grade(w, length, b, h, t + d), w * (math.sin(math.radians(t + d)) + crr * math.cos(math.radians(t + d))), mu_f, mu_r, c_f, c_r, ratio)[0] for d in (-0.05, 0.05)}
        if near != {state}:
            continue
        assert names[ts.state[i]] == state, (t, state)
        if ff is not None:
            assert abs(ts.front_force_g[i] - ff) <= 1e-3 * w
            assert abs(ts.rear_force_g[i] - fr) <= 1e-3 * w


# --- limits of the model -----------------------------------------------------------------------

@settings(max_examples=40, deadline=None)
@given(bias=hs.floats(0.35, 0.7), h_over_l=hs.floats(0.15, 0.45), mu=hs.floats(0.5, 1.4),
       kin=hs.floats(0.5, 1.0), od=hs.sampled_from([0.8, 0.95, 1.05, 1.0714, 1.3]))
def test_very_stiff_tyres_reproduce_the_rigid_rule(bias, h_over_l, mu, kin, od):
    # MODEL section 5: as c → ∞ the states and forces become the rigid Coulomb rule
    w, length = 2000.0, 300.0
    slopes = np.arange(-80.0, 81.0, 0.5)
    t = np.radians(slopes)
    nf = w * (bias * length * np.cos(t) - h_over_l * length * np.sin(t)) / length
    nr = w * np.cos(t) - nf
    f = required_force_g(w, slopes, 0.03)
    rigid = traction_state(nf, nr, f, (mu, kin * mu), (mu, kin * mu), "front" if od > 1 else "rear")
    for c in (1e7, math.inf):
        ts = slip_traction_state(nf, nr, f, (mu, kin * mu), (mu, kin * mu), c, c, od)
        # at c = 1e7 a state boundary moves by far less than the 0.5° grid; skip exact ties
        np.testing.assert_array_equal(ts.state, rigid.state)
        ok = rigid.state != LIFTED
        assert_allclose(ts.front_force_g[ok], rigid.front_force_g[ok], atol=1e-3)
        assert_allclose(ts.rear_force_g[ok], rigid.rear_force_g[ok], atol=1e-3)


def test_no_mismatch_gives_the_grip_proportional_split_up_to_tan_theta_mu():
    # K = ρ, equal mu, no rolling resistance: both grip, split in proportion to μN, up to
    # tan θ = μ (Gillespie ch. 2, traction-limited grade of a four-wheel drive)
    w, length, b, h, mu = 2400.0, 313.0, 186.0, 87.0, 0.9
    slopes = np.array([0.0, 10.0, 25.0, 40.0, 41.9, 42.1])
    t = np.radians(slopes)
    nf = w * (b * np.cos(t) - h * np.sin(t)) / length
    nr = w * np.cos(t) - nf
    f = w * np.sin(t)
    ts = slip_traction_state(nf, nr, f, (mu, 0.7), (mu, 0.7), 10.0, 10.0, 1.0)
    limit = math.degrees(math.atan(mu))  # 41.99°
    assert list(ts.state) == [NONE] * 5 + [BOTH] and slopes[4] < limit < slopes[5]
    hold = slopes < limit
    assert_allclose(ts.front_force_g[hold], (f * nf / (nf + nr))[hold], rtol=1e-8, atol=1e-8)
    assert_allclose(ts.windup_g[hold], 0.0, atol=1e-6)


def test_small_mismatch_is_carried_by_both_tyres_and_a_large_one_lets_go():
    # MODEL section 5: the amount of overdrive matters. On level ground with no load the
    # mismatch Δσ is shared so the forces cancel; worked by hand in the linear range:
    # c N_f σ_f + c N_r σ_r = 0 with σ_f − σ_r ≈ Δ → σ_f = Δ N_r/(N_f + N_r).
    nf, nr, c, mu = 1000.0, 1000.0, 20.0, 1.0
    small = slip_traction_state(nf, nr, 0.0, (mu, 0.8), (mu, 0.8), c, c, 1.02)
    assert small.state[()] == NONE
    assert 0.9 < small.front_slip_pct[()] / 1.0 < 1.1  # about half of the 2 % mismatch
    assert small.front_force_g[()] > 0 > small.rear_force_g[()]  # the wind-up pair
    large = slip_traction_state(nf, 1.2 * nr, 0.0, (mu, 0.8), (mu, 0.8), c, c, 1.4)
    # MODEL section 5: on level ground the lighter axle is the one that scrubs first (here the front)
    assert large.state[()] == FRONT
    assert math.isnan(large.front_slip_pct[()]) and large.front_grip_used[()] == 1.0


def test_rear_overdrive_mirrors_front_overdrive():
    # swapping axles and inverting the ratio is the same rig seen from the other end
    a = slip_traction_state(900.0, 1100.0, 300.0, (1.0, 0.8), (0.9, 0.7), 8.0, 12.0, 1.25)
    b = slip_traction_state(1100.0, 900.0, 300.0, (0.9, 0.7), (1.0, 0.8), 12.0, 8.0, 1 / 1.25)
    assert {int(a.state), int(b.state)} <= {NONE, FRONT, REAR, BOTH}
    swap = {NONE: NONE, BOTH: BOTH, FRONT: REAR, REAR: FRONT}
    assert swap[int(a.state)] == int(b.state)
    assert_allclose(a.front_force_g, b.rear_force_g, rtol=1e-9)


def test_lifted_outranks_and_carries_no_numbers():
    ts = slip_traction_state(np.array([-5.0, 0.0]), np.array([900.0, 900.0]), 100.0,
                             (1.0, 0.8), (1.0, 0.8), 10.0, 10.0, 1.07)
    assert list(ts.state) == [LIFTED, LIFTED]
    assert np.isnan(ts.front_force_g).all() and np.isnan(ts.rear_grip_used).all()


def test_descents_brake_and_rear_scrubs_are_dragged_back():
    # Serway & Beichner table 5.2 friction (μ 1.0 / 0.8); a steep descent makes F_req < 0
    ts = slip_traction_state(1400.0, 600.0, -1500.0, (1.0, 0.8), (1.0, 0.8), 10.0, 10.0, 1.07)
    assert int(ts.state) in (NONE, REAR, BOTH) and ts.front_force_g + ts.rear_force_g < 0
