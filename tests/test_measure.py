"""Measurement helpers: scale readings and tilt angles into setup numbers."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine import measure



def lifted_front_reading_g(weight_g, wheelbase_mm, front_bias_pct, cg_height_mm, axle_height_mm, lift_mm):
    """Front scale reading with the rear raised by `lift_mm`, from the geometry of the tilted rig.

    Tilted nose down by θ = asin(H/L) about the axle centres, the CG (b along and h − r above the
    axle line) sits b cos θ + (h − r) sin θ ahead of the rear axle horizontally, and the axles are
    L cos θ apart: W_f = W (b cos θ + (h − r) sin θ)/(L cos θ) (ISO 10392 axle-lift geometry).
    """
    t = math.asin(lift_mm / wheelbase_mm)
    b = front_bias_pct / 100.0 * wheelbase_mm
    return weight_g * (b * math.cos(t) + (cg_height_mm - axle_height_mm) * math.sin(t)) / (wheelbase_mm * math.cos(t))


def test_front_bias_from_scale():
    # Axle-load share, rig level (ISO 10392 weighs each axle): 1190 g of 2000 g on the front is 59.5 %.
    assert measure.front_bias_pct(1190.0, 2000.0) == pytest.approx(59.5, rel=1e-12)
    assert_allclose(measure.front_bias_pct([500.0, 1500.0], 2000.0), [25.0, 75.0])


def test_cg_height_iso_10392_example():
    # ISO 10392 axle-lift: W 2000 g, L 300 mm, axle height 55 mm, rear raised 100 mm, front up by
    # 106.066 g -> h = 100.0 mm with θ = asin(H/L); the small-angle shortcut tan θ ≈ H/L would give
    # 55 + 300·106.066/(2000·100/300) = 102.7 mm, so this pins the exact form.
    level = 1200.0
    h = measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, level, 100.0, level + 106.066)
    assert h == pytest.approx(100.0, abs=0.01)
    assert abs(h - 102.7) > 2.0


@given(st.floats(300.0, 8000.0), st.floats(150.0, 600.0), st.floats(20.0, 80.0), st.floats(0.1, 0.6),
       st.floats(0.1, 0.9), st.floats(0.05, 0.8))
def test_cg_height_recovers_the_geometry(weight_g, wheelbase_mm, bias_pct, h_frac, r_share, lift_frac):
    # Readings made from the tilted-rig geometry (ISO 10392, Jazar ch. 2) give back the CG height.
    h = wheelbase_mm * h_frac
    r = h * r_share
    lift = wheelbase_mm * lift_frac
    level = weight_g * bias_pct / 100.0
    reading = lifted_front_reading_g(weight_g, wheelbase_mm, bias_pct, h, r, lift)
    assert measure.cg_height_from_lift_mm(weight_g, wheelbase_mm, r, level, lift, reading) == pytest.approx(h, rel=1e-9)


def test_several_lifts_least_squares_matches_numpy_lstsq():
    # Several lifts: h − r is the least-squares slope through the origin of ΔW_f against
    # W tan θ / L; numpy.linalg.lstsq is the reference solver.
    rng = np.random.default_rng(20261201)
    W, L, r, bias, h = 2380.0, 313.0, 56.0, 57.5, 88.0
    lifts = np.array([40.0, 70.0, 100.0, 130.0, 160.0])
    level = W * bias / 100.0
    clean = np.array([lifted_front_reading_g(W, L, bias, h, r, x) for x in lifts])
    noisy = clean + rng.normal(0.0, 1.5, size=lifts.size)  # a kitchen scale reads to about a gram
    x = W * np.tan(np.arcsin(lifts / L)) / L
    slope, *_ = np.linalg.lstsq(x[:, None], noisy - level, rcond=None)
    got = measure.cg_height_from_lift_mm(W, L, r, level, lifts, noisy)
    assert got == pytest.approx(r + slope[0], rel=1e-12)
    assert got == pytest.approx(h, abs=3.0)  # and it is near the truth despite the noise
    assert measure.cg_height_from_lift_mm(W, L, r, level, lifts, clean) == pytest.approx(h, rel=1e-9)


@given(st.lists(st.tuples(st.floats(5.0, 250.0), st.floats(-30.0, 30.0)), min_size=2, max_size=8))
def test_several_lifts_any_readings_match_lstsq(pairs):
    # numpy.linalg.lstsq again, on arbitrary readings (the fit, not the physics).
    L, W, r, level = 300.0, 2000.0, 50.0, 1100.0
    lifts = np.array([p[0] for p in pairs])
    deltas = np.array([p[1] for p in pairs])
    x = W * np.tan(np.arcsin(lifts / L)) / L
    slope, *_ = np.linalg.lstsq(x[:, None], deltas, rcond=None)
    got = measure.cg_height_from_lift_mm(W, L, r, level, lifts, level + deltas)
    assert got == pytest.approx(r + slope[0], rel=1e-9, abs=1e-9)


def test_lift_readings_are_checked():
    with pytest.raises(ValueError):
        measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, 1200.0, [50.0, 100.0], [1250.0])
    for bad_lift in (0.0, -10.0, 300.0, 400.0):
        with pytest.raises(ValueError):
            measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, 1200.0, bad_lift, 1300.0)


def test_mu_from_slide_angle_serway_values():
    # Serway & Beichner ch. 5: a block starts to slide at tan α = μ_s. Table 5.2 rubber on dry
    # concrete μ_s 1.0 -> 45 deg; μ 0.8 -> atan(0.8) = 38.66 deg.
    assert measure.mu_from_slide_angle(45.0) == pytest.approx(1.0, rel=1e-12)
    assert measure.mu_from_slide_angle(38.66) == pytest.approx(0.8, abs=5e-4)
    assert_allclose(measure.mu_from_slide_angle([0.0, 45.0]), [0.0, 1.0], atol=1e-12)


@given(st.floats(0.01, 3.0))
def test_mu_from_slide_angle_inverts_atan(mu):
    # Incline at the point of sliding (Serway & Beichner ch. 5): α = atan μ_s.
    assert measure.mu_from_slide_angle(math.degrees(math.atan(mu))) == pytest.approx(mu, rel=1e-9)
