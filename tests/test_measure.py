"""Measurement helpers: scale readings and tilt angles into setup numbers."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine import measure

from conftest import examples



def lifted_front_reading_g(weight_g, wheelbase_mm, front_bias_pct, cg_height_mm, axle_height_mm, lift_mm):
    """Front scale reading with the rear raised by `lift_mm`: the tilted rig's equilibrium, solved.

    A different method from the code's closed form: place the rig in world coordinates and solve
    the two equilibrium equations (vertical forces, moments about the CG; Meriam & Kraige,
    *Engineering Mechanics: Statics*, ch. 3) with `numpy.linalg.solve`. Rear axle centre at
    (0, H + r), front at (L cos θ, r) with sin θ = H/L; the free-rolling wheels put vertical
    forces straight under the axle centres; the CG is b along and h − r above the axle line.
    """
    t = math.asin(lift_mm / wheelbase_mm)
    b = front_bias_pct / 100.0 * wheelbase_mm
    along = np.array([math.cos(t), -math.sin(t)])  # rear axle to front axle, unit
    up = np.array([math.sin(t), math.cos(t)])  # normal to the axle line, upward
    rear, front = np.array([0.0, lift_mm + axle_height_mm]), np.array([wheelbase_mm * math.cos(t), axle_height_mm])
    cg = rear + b * along + (cg_height_mm - axle_height_mm) * up
    equations = np.array([[1.0, 1.0], [front[0] - cg[0], rear[0] - cg[0]]])
    front_g, _rear_g = np.linalg.solve(equations, [weight_g, 0.0])
    return float(front_g)


def test_front_bias_from_scale():
    # Axle-load share, rig level (ISO 10392 weighs each axle): 1190 g of 2000 g on the front is 59.5 %.
    assert measure.front_bias_pct(1190.0, 2000.0) == pytest.approx(59.5, rel=1e-12)
    assert_allclose(measure.front_bias_pct([500.0, 1500.0], 2000.0), [25.0, 75.0])


def test_cg_height_axle_lift_worked_by_hand():
    """Worked by hand (no published worked example used): the axle-lift method of ISO 10392 on
    a 2000 g rig, L 300, b 180 (front reads 1200 g level), axle height 55, CG 100 mm high.

    Raise the rear 100 mm: sin θ = 1/3, cos θ = 0.942809. Horizontally the CG is
    180·0.942809 + 45·(1/3) = 184.706 mm ahead of the rear contact and the front contact is
    300·0.942809 = 282.843 mm ahead; moments about the rear contact: front reads
    2000·184.706/282.843 = 1306.066 g. Fed back, the method must return 100 mm; the small-angle
    shortcut tan θ ≈ H/L would give 55 + 300·106.066/(2000·100/300) = 102.73 mm.
    """
    assert lifted_front_reading_g(2000.0, 300.0, 60.0, 100.0, 55.0, 100.0) == pytest.approx(1306.066, abs=1e-3)
    h = measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, 1200.0, 100.0, 1306.066)
    assert h == pytest.approx(100.0, abs=0.01)
    assert abs(h - 102.73) > 2.0


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


def _fit_h_by_scipy(W, L, r, bias_pct, lifts, readings):
    """CG height fitted by `scipy.optimize.least_squares`: a different method from the code's
    regression. The unknown is h itself; each residual is a reading minus the equilibrium model's
    reading at that lift (`lifted_front_reading_g`, solved numerically), not a regressor."""
    from scipy.optimize import least_squares

    def residuals(v):
        return [lifted_front_reading_g(W, L, bias_pct, v[0], r, x) - y for x, y in zip(lifts, readings)]

    return float(least_squares(residuals, [r + 0.25 * L], method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15).x[0])


def test_several_lifts_fit_matches_scipy_least_squares():
    # Several lifts with scale noise (a kitchen scale reads to about a gram): the code's fit and a
    # scipy least-squares fit of h through the equilibrium model agree, and both land near the truth.
    rng = np.random.default_rng(20261201)
    W, L, r, bias, h = 2380.0, 313.0, 56.0, 57.5, 88.0
    lifts = np.array([40.0, 70.0, 100.0, 130.0, 160.0])
    level = W * bias / 100.0
    clean = np.array([lifted_front_reading_g(W, L, bias, h, r, x) for x in lifts])
    noisy = clean + rng.normal(0.0, 1.5, size=lifts.size)
    got = measure.cg_height_from_lift_mm(W, L, r, level, lifts, noisy)
    assert got == pytest.approx(_fit_h_by_scipy(W, L, r, bias, lifts, noisy), abs=1e-6)
    assert got == pytest.approx(h, abs=3.0)
    assert measure.cg_height_from_lift_mm(W, L, r, level, lifts, clean) == pytest.approx(h, rel=1e-9)


@settings(max_examples=examples(40))
@given(st.lists(st.tuples(st.floats(5.0, 250.0), st.floats(-30.0, 30.0)), min_size=2, max_size=6))
def test_several_lifts_any_readings_match_scipy_least_squares(pairs):
    # Arbitrary (even implausible) readings: the same scipy fit through the equilibrium model.
    L, W, r, bias = 300.0, 2000.0, 50.0, 55.0
    level = W * bias / 100.0
    lifts = np.array([p[0] for p in pairs])
    readings = level + np.array([p[1] for p in pairs])
    got = measure.cg_height_from_lift_mm(W, L, r, level, lifts, readings)
    # 0.1 µm: scipy's stopping rule on tiny lifts (5 mm of 300), far below any wrong regressor's error
    assert got == pytest.approx(_fit_h_by_scipy(W, L, r, bias, lifts, readings), abs=1e-4)


def test_lift_readings_are_checked():
    with pytest.raises(ValueError):
        measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, 1200.0, [50.0, 100.0], [1250.0])
    for bad_lift in (0.0, -10.0, 300.0, 400.0):
        with pytest.raises(ValueError):
            measure.cg_height_from_lift_mm(2000.0, 300.0, 55.0, 1200.0, bad_lift, 1300.0)


def test_mu_from_slide_angle_serway_values():
    # Serway & Beichner ch. 5: a block starts to slide at tan α = μ_s. Table 5.2 rubber on dry
    # concrete μ_s 1.0 -> 45 deg (rise equals run); level board, no friction needed.
    assert measure.mu_from_slide_angle(45.0) == pytest.approx(1.0, rel=1e-12)
    assert_allclose(measure.mu_from_slide_angle([0.0, 45.0]), [0.0, 1.0], atol=1e-12)


def test_mu_from_a_3_4_5_board_worked_by_hand():
    """Worked by hand: a 500 mm board whose raised end stands 300 mm high when the rig slides.
    The run is √(500² − 300²) = 400 mm (Pythagoras); along the board the weight's pull is
    W·300/500 and the normal force W·400/500, so at the point of sliding μ_s = 300/400 = 0.75
    exactly (Serway & Beichner ch. 5). The board angle is asin(0.6) = 36.870°."""
    assert measure.mu_from_slide_angle(math.degrees(math.asin(0.6))) == pytest.approx(0.75, rel=1e-12)


@given(st.floats(50.0, 2000.0), st.floats(0.01, 0.95))
def test_mu_from_board_rise_and_length_by_pythagoras(length_mm, rise_share):
    # A different method: the board's rise and length as read with a tape; the run by Pythagoras,
    # μ_s = rise/run (force balance along and across the board, Serway & Beichner ch. 5).
    rise = length_mm * rise_share
    run = math.sqrt(length_mm ** 2 - rise ** 2)
    angle = math.degrees(math.asin(rise / length_mm))
    assert measure.mu_from_slide_angle(angle) == pytest.approx(rise / run, rel=1e-9)


# ---- plausibility of the readings (issue: refuse or warn, naming the reading) -------------------
# A rig worked by hand for these: W 2000 g, L 300 mm, front bias 50 % (b 150 mm), axle height
# r 50 mm. Rear raised H 150 mm: sin θ = 0.5, θ = 30 deg, cos θ = 0.866025, tan θ = 0.577350.
# With the CG at h (tilted geometry, ISO 10392 set-up): W_f = W (b cos θ + (h − r) sin θ)/(L cos θ)
#   h 100 mm: 2000 (129.904 + 25.000)/259.808 = 1192.45 g   (worked by hand)
#   h  30 mm: 2000 (129.904 − 10.000)/259.808 =  923.02 g   (worked by hand: CG below the axle)


def test_hand_worked_axle_lift_gives_back_100_mm():
    # Worked by hand above; the exact form h = r + L ΔW/(W tan θ) [ISO 10392]: 50 + 300·192.45/(2000·0.57735)
    # = 50 + 57735/1154.7 = 100.0 mm.
    h = measure.cg_height_from_lift_mm(2000.0, 300.0, 50.0, 1000.0, 150.0, 1192.45)
    assert h == pytest.approx(100.0, abs=0.01)
    assert measure.lift_checks(2000.0, 300.0, 50.0, 1000.0, [150.0], [1192.45]) == []


def test_a_cg_below_the_axle_is_refused_naming_the_lift():
    # Hand-worked 923.02 g: the front reading falls as the rear rises, the fit puts h at 30 mm < r.
    checks = measure.lift_checks(2000.0, 300.0, 50.0, 1000.0, [150.0], [923.02])
    assert len(checks) == 1 and checks[0].refuse and checks[0].reading == "lift" and checks[0].index == 0
    assert "30.0 mm" in checks[0].why and "axle height 50 mm" in checks[0].why


def test_a_reading_that_falls_between_lifts_is_a_warning_not_a_refusal():
    # 50 mm: 1060 g, 100 mm: 1050 g -- the second falls though the fit stays above the axle.
    # Worked by hand: x = W tan(asin(H/L))/L = 1.1269, 2.3570; ΔW = 60, 50; least-squares slope
    # (67.61 + 117.85)/(1.2699 + 5.5555) = 27.17, so h = 77.2 mm, above r = 50 mm.
    assert measure.cg_height_from_lift_mm(2000.0, 300.0, 50.0, 1000.0, [50.0, 100.0], [1060.0, 1050.0]) == \
        pytest.approx(77.2, abs=0.05)
    checks = measure.lift_checks(2000.0, 300.0, 50.0, 1000.0, [50.0, 100.0], [1060.0, 1050.0])
    assert [(c.reading, c.index, c.refuse) for c in checks] == [("lift", 1, False)]
    assert "1050 g at 100 mm" in checks[0].why and "1060 g" in checks[0].why
    # listed out of order, the same pair is named (the check sorts by lift, not by position)
    checks = measure.lift_checks(2000.0, 300.0, 50.0, 1000.0, [100.0, 50.0], [1050.0, 1060.0])
    assert [(c.index, c.refuse) for c in checks] == [(0, False)]


@pytest.mark.parametrize("level, lift, reading, which", [
    (2100.0, 150.0, 1192.45, "level"),    # the level front reading above the 2000 g total
    (2000.0, 150.0, 1192.45, "level"),    # equal to it: the rear would carry nothing
    (1000.0, 150.0, 2500.0, "lift"),      # a lifted reading above the total
    (1000.0, 300.0, 1192.45, "lift"),     # a lift equal to the wheelbase: asin(1), the rig on end
    (0.0, 150.0, 1192.45, "level"),
])
def test_readings_above_the_total_or_outside_the_geometry_are_refused(level, lift, reading, which):
    checks = measure.lift_checks(2000.0, 300.0, 50.0, level, [lift], [reading])
    assert checks and checks[0].refuse and checks[0].reading == which


def test_front_bias_reading_checks():
    # Gillespie ch. 2: the front axle carries part of W, so 0 < W_f < W.
    assert measure.bias_checks(1190.0, 2000.0) == []
    for front in (2000.0, 2400.0, 0.0, -5.0):
        (check,) = measure.bias_checks(front, 2000.0)
        assert check.refuse and check.reading == "front"


def test_slide_angle_limit_is_the_files_mu_limit():
    # The file takes mu_static <= 5 (setup_model); atan 5 = 78.69 deg (four-figure tables).
    # Serway & Beichner ch. 5: mu_s = tan α, so 78.6 deg (tan 4.989) is taken and 78.8 (tan 5.03) is not.
    assert measure.MU_STATIC_MAX == 5.0
    assert measure.slide_angle_checks(78.6) == []
    for angle in (78.8, 80.0, 90.0, 0.0, -3.0):
        (check,) = measure.slide_angle_checks(angle)
        assert check.refuse and check.reading == "angle" and "78.7" in check.why
