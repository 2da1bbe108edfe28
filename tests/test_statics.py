"""Slope statics (axle loads and the named angles) against published values and an independent model."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune import engine
from slopetune.engine import slope_statics as ss
from slopetune.engine import Driveline, Grip, Rig, Setup, Terrain

import reference_model as ref
from conftest import examples, rig_setups


def plain_setup(mass_g=2000.0, wheelbase_mm=300.0, front_bias_pct=60.0, cg_height_mm=75.0, track_mm=240.0,
                overdrive_pct=0.0, mu=(1.0, 0.8), rolling=0.0, accel_g=0.0, ballast=()):
    return Setup(
        name="test rig",
        rig=Rig(mass_g, wheelbase_mm, front_bias_pct, cg_height_mm, track_mm, 110.0, 110.0, tuple(ballast)),
        driveline=Driveline(overdrive_pct),
        grip=Grip(mu[0], mu[1], rolling),
        terrain=Terrain(0.0, accel_g),
    )


# --- published values ---------------------------------------------------------------------------

def test_grade_loads_gillespie_example():
    # Gillespie, Fundamentals of Vehicle Dynamics, ch. 2, grade-load equations, applied to
    # W 49,050 N, 10 deg, L 2.25 m, b 1.0 m, h 1.5 m; 15,790.5 N and 32,514.3 N worked by hand.
    # The equations are linear in force and scale-free in length: N in, N out; metres as mm.
    front, rear = ss.axle_loads_g(49050.0, 2250.0, 1000.0, 1500.0, 10.0)
    assert_allclose(front, 15790.5, atol=0.1)
    assert_allclose(rear, 32514.3, atol=0.1)


def test_grade_loads_gillespie_example_through_analyse():
    # Same Gillespie example through the public entry: a "rig" of 49,050 units, b/L as front bias.
    setup = plain_setup(mass_g=49050.0, wheelbase_mm=2250.0, front_bias_pct=100.0 * 1.0 / 2.25,
                        cg_height_mm=1500.0, track_mm=1500.0)
    sweep = engine.analyse(setup, [10.0]).sweep
    assert_allclose(sweep.front_normal_g[0], 15790.5, atol=0.1)
    assert_allclose(sweep.rear_normal_g[0], 32514.3, atol=0.1)


def test_overturn_angle_gillespie_example():
    # Gillespie ch. 2 / Jazar ch. 2 tilting angle: front unloads at tan θ = b/h = 1.0/1.5 -> 33.69 deg.
    assert_allclose(ss.front_lift_angle_deg(1000.0, 1500.0), 33.69, atol=0.005)
    setup = plain_setup(mass_g=49050.0, wheelbase_mm=2250.0, front_bias_pct=100.0 / 2.25, cg_height_mm=1500.0)
    assert_allclose(engine.analyse(setup).angles_deg["front_lift"], 33.69, atol=0.005)


def test_static_stability_factor_nhtsa():
    # NHTSA static stability factor SSF = T/(2h) (68 FR 59250, 2003): T 240, h 120 -> 1.0, 45 deg.
    assert_allclose(ss.static_stability_factor(240.0, 120.0), 1.0, rtol=1e-12)
    assert_allclose(ss.sidehill_roll_angle_deg(240.0, 120.0), 45.0, atol=1e-9)
    setup = plain_setup(cg_height_mm=120.0, track_mm=240.0)
    assert_allclose(engine.analyse(setup).angles_deg["sidehill_roll"], 45.0, atol=1e-9)


def test_sidehill_slide_equal_mu_serway_values():
    # Serway & Beichner table 5.2, rubber on dry concrete μ_s 1.0: slides sideways at atan(1.0) = 45 deg;
    # block on an incline slides at tan α = μ_s (Serway & Beichner ch. 5).
    setup = plain_setup(mu=(1.0, 0.8))
    assert_allclose(engine.analyse(setup).angles_deg["sidehill_slide"], 45.0, atol=1e-9)


@pytest.mark.parametrize("front_mu, rear_mu", [(1.0, 0.6), (0.6, 1.0)])
def test_sidehill_slide_per_axle_mu_worked_by_hand(front_mu, rear_mu):
    """Worked by hand (block on an incline per axle, Serway & Beichner ch. 5), 60 % front bias.

    Each axle stands on the side slope with its own static share of the weight: 0.6 W front,
    0.4 W rear. With μ_s 1.0 on one axle and 0.6 on the other, the 0.6 axle (share s) needs
    s sin φ sideways and can give 0.6 s cos φ:
      φ = 30.9°: rear 0.4·0.51504 = 0.20542 W needed, 0.6·0.4·0.85811 = 0.20595 W available: holds;
      φ = 31.0°: 0.20602 W needed, 0.20572 W available: slides.
    The crossing is tan φ = 0.6, φ = 30.964°, whichever end has the low mu. A load-weighted mean
    (0.6·1.0 + 0.4·0.6 = 0.84) would say 40.03°, the both-ends mean (0.8) 38.66°.
    """
    grip = Grip(1.0, 0.8, 0.0, front_mu_static=front_mu, front_mu_kinetic=0.5,
                rear_mu_static=rear_mu, rear_mu_kinetic=0.5)
    setup = dataclasses.replace(plain_setup(front_bias_pct=60.0), grip=grip)
    assert engine.analyse(setup).angles_deg["sidehill_slide"] == pytest.approx(30.964, abs=1e-3)
    assert ss.sidehill_slide_angle_deg(front_mu, rear_mu) == pytest.approx(30.964, abs=1e-3)


# --- rules of thumb of the trade ---------------------------------------------------------------

def _thumb_rig(front_bias_pct, cg_height_mm):
    return engine.analyse(plain_setup(wheelbase_mm=300.0, front_bias_pct=front_bias_pct, cg_height_mm=cg_height_mm))


def test_balance_and_lift_worked_by_hand_300mm_rig():
    """Worked by hand (Gillespie ch. 2 grade loads; moments about the wheelbase mid-point):
    L 300, 60 % bias (b 180), h 75, a round measured height, not one derived from the answer.

    Balance: N_f = N_r exactly when the weight's line of action passes over the mid-point of the
    contacts, 30 mm behind the CG along the slope and 75 mm below it: tan θ = 30/75 = 0.4,
    θ = 21.801°. Front lift: the line passes over the rear contact, tan θ = 180/75 = 2.4,
    θ = 67.380°. 65 % bias (b 195): tan θ = 45/75 = 0.6, 30.964°. A CG 10 mm lower (h 65):
    tan θ = 30/65, 24.775°. The trade's rule of thumb for such a rig (balance near 22°, front lift
    near 68°; 65 % bias about 31°, 10 mm lower about 25°; common practice, no source) agrees.
    """
    a = _thumb_rig(60.0, 75.0)
    assert a.angles_deg["balance"] == pytest.approx(21.801, abs=1e-3)
    assert a.angles_deg["front_lift"] == pytest.approx(67.380, abs=1e-3)
    assert _thumb_rig(65.0, 75.0).angles_deg["balance"] == pytest.approx(30.964, abs=1e-3)
    assert _thumb_rig(60.0, 65.0).angles_deg["balance"] == pytest.approx(24.775, abs=1e-3)


# --- the independent reference model -----------------------------------------------------------

SWEEP_DEG = np.arange(-89.0, 89.5, 0.5)


@settings(max_examples=examples(60))
@given(rig_setups(overdrive=False, rolling=False))
def test_loads_and_statics_angles_match_reference(setup):
    # Gillespie ch. 2 grade loads (rear-contact moments) and Jazar ch. 2 tilting angles, recomputed
    # by tests/reference_model.py: scalar loop, brentq roots. Tolerances from the issue:
    # 0.1 % of the weight, 0.05 deg.
    a = engine.analyse(setup, SWEEP_DEG)
    r = ref.ref_rig_from_setup(setup)
    steady = ref.ref_rig_from_setup(setup, accel_g=0.0)  # named angles are for a steady climb
    assert a.rig.mass_g == pytest.approx(r.weight_g, rel=1e-9)
    assert a.rig.cg_from_rear_mm == pytest.approx(r.cg_from_rear_mm, rel=1e-9)
    assert a.rig.cg_height_mm == pytest.approx(r.cg_height_mm, rel=1e-9)
    loads = np.array([ref.axle_loads(r, t) for t in SWEEP_DEG])
    assert_allclose(a.sweep.front_normal_g, loads[:, 0], rtol=0, atol=1e-3 * r.weight_g)
    assert_allclose(a.sweep.rear_normal_g, loads[:, 1], rtol=0, atol=1e-3 * r.weight_g)
    expected = {
        "balance": ref.balance_deg(steady),
        "front_lift": ref.front_lift_deg(steady),
        "rear_lift": ref.rear_lift_deg(steady),
        "sidehill_roll": ref.sidehill_roll_deg(steady),
        "sidehill_slide": ref.sidehill_slide_deg(steady),
    }
    for name, want in expected.items():
        got = a.angles_deg[name]
        if want is None:
            assert got is None or abs(got) > 89.9, name
        else:
            assert got == pytest.approx(want, abs=0.05), name


@settings(max_examples=examples(60))
@given(rig_setups(per_axle=True), st.floats(-2.0, 2.0).filter(lambda x: x != 0.0))
def test_loads_with_throttle_match_reference(setup, accel_g):
    # Gillespie ch. 2: the inertia force W a_x acts at the CG height and unloads the front. The
    # reference finds its roots by brentq on a scan, so a hard brake or punch beyond 1 g checks
    # that the closed form takes the right branch.
    a = engine.analyse(setup, SWEEP_DEG, accel_g=accel_g)
    r = ref.ref_rig_from_setup(setup, accel_g=accel_g)
    loads = np.array([ref.axle_loads(r, t) for t in SWEEP_DEG])
    assert_allclose(a.sweep.front_normal_g, loads[:, 0], rtol=0, atol=1e-3 * r.weight_g)
    assert_allclose(a.sweep.rear_normal_g, loads[:, 1], rtol=0, atol=1e-3 * r.weight_g)
    assert_allclose(a.sweep.required_g, [ref.required_force(r, t) for t in SWEEP_DEG], rtol=0, atol=1e-3 * r.weight_g)
    for name, fn in (("balance", ref.balance_deg), ("front_lift", ref.front_lift_deg), ("rear_lift", ref.rear_lift_deg)):
        want, got = fn(r), a.angles_with_throttle_deg[name]
        if want is None:  # the reference scans to 89.99 deg only
            assert got is None or abs(got) > 89.9, name
        else:
            assert got == pytest.approx(want, abs=0.05), name


# --- properties over the whole valid input space -----------------------------------------------

@given(rig_setups(), st.lists(st.floats(-89.9, 89.9), min_size=1, max_size=20), st.floats(-1.0, 1.0))
def test_rear_load_from_moments_about_the_front_contact(setup, slopes, accel_g):
    # A different moment point (Gillespie ch. 2 free-body diagram): the engine takes moments about
    # the rear contact and gets N_r by difference; here moments about the front contact give the
    # rear load directly: N_r L = W cos θ (L − b) + W (sin θ + a_x) h.
    a = engine.analyse(setup, slopes, accel_g=accel_g)
    W, L, b, h = a.rig.mass_g, a.rig.wheelbase_mm, a.rig.cg_from_rear_mm, a.rig.cg_height_mm
    t = np.radians(slopes)
    want = W * (np.cos(t) * (L - b) + (np.sin(t) + accel_g) * h) / L
    assert_allclose(a.sweep.rear_normal_g, want, rtol=0, atol=1e-9 * W)


@given(rig_setups(), st.lists(st.floats(-89.9, 89.9), min_size=1, max_size=20), st.floats(-1.0, 1.0))
def test_moments_about_cg_balance(setup, slopes, accel_g):
    # Newton-Euler about the CG (Gillespie ch. 2 free-body diagram): with the CG at b along and h
    # above the slope, N_f a − N_r b + h ΣF_x = 0, where the ground forces sum to W (sin θ + a_x).
    a = engine.analyse(setup, slopes, accel_g=accel_g)
    W, L, b, h = a.rig.mass_g, a.rig.wheelbase_mm, a.rig.cg_from_rear_mm, a.rig.cg_height_mm
    ground_x = W * (np.sin(np.radians(slopes)) + accel_g)
    moment = a.sweep.front_normal_g * (L - b) - a.sweep.rear_normal_g * b + h * ground_x
    assert_allclose(moment, 0.0, atol=1e-9 * W * L)


@given(rig_setups())
def test_named_angles_are_where_the_sweep_changes_sign(setup):
    # Definitions (Gillespie ch. 2): balance where N_f − N_r crosses zero, front lift where N_f does,
    # rear lift where N_r does; checked on the engine's own sweep 0.01 deg either side (steady
    # climb, as the named angles are).
    a = engine.analyse(setup, accel_g=0.0)
    eps = 0.01
    checks = {
        "balance": lambda s: s.front_normal_g - s.rear_normal_g,
        "front_lift": lambda s: s.front_normal_g,
        "rear_lift": lambda s: s.rear_normal_g,
    }
    for name, fn in checks.items():
        t = a.angles_deg[name]
        if t is None or abs(t) > 89.9:
            continue
        before, after = fn(a.at([t - eps, t + eps]))
        assert before * after < 0, name


@given(rig_setups(overdrive=False))
def test_lift_angles_bound_the_sweep(setup):
    # Between the rear-lift and front-lift angles both axles carry load; outside, one is off the
    # ground and the sweep says which (Jazar ch. 2 tilting angles).
    a = engine.analyse(setup, np.arange(-89.0, 90.0, 1.0), accel_g=0.0)
    fl, rl = a.angles_deg["front_lift"], a.angles_deg["rear_lift"]
    for t, lifted in zip(a.sweep.slope_deg, a.sweep.lifted):
        if rl + 0.01 < t < fl - 0.01:
            assert lifted is None, t
        elif t > fl + 0.01:
            assert lifted == "front", t
        elif t < rl - 0.01:
            assert lifted == "rear", t


def test_closed_form_roots_worked_by_hand():
    """Worked by hand: sin θ = 1/2 at 30° and 150°, and only 30° is a slope; cos θ = 0 only at
    ±90°, outside the open interval; cos θ = sin θ at 45° and −135°, so 45° alone; and
    √3 cos θ + sin θ = √3 where 2 cos(θ − 30°) = √3, at 0° and 60°, both slopes."""
    assert ss.solve_cos_sin(0.0, 1.0, -0.5) == pytest.approx([30.0], abs=1e-9)
    assert ss.solve_cos_sin(1.0, 0.0, 0.0) == []
    assert ss.solve_cos_sin(1.0, -1.0, 0.0) == pytest.approx([45.0], abs=1e-9)
    assert ss.solve_cos_sin(math.sqrt(3.0), 1.0, -math.sqrt(3.0)) == pytest.approx([0.0, 60.0], abs=1e-9)
    assert ss.solve_cos_sin(0.0, 0.0, 1.0) == [] and ss.solve_cos_sin(1.0, 0.0, 2.0) == []


def test_balance_angle_negative_for_rear_biased_rig():
    # tan θ = (b − L/2)/h < 0 when b < L/2 (Gillespie ch. 2): 40 % bias, L 300, h 100 -> atan(−0.3).
    a = engine.analyse(plain_setup(front_bias_pct=40.0, cg_height_mm=100.0))
    assert a.angles_deg["balance"] == pytest.approx(math.degrees(math.atan(-0.3)), abs=1e-9)


def test_scalar_and_array_slopes_agree():
    # The engine is vectorised: one slope or many give the same numbers (pvlib habit: scalar, array, edge).
    setup = plain_setup()
    many = engine.analyse(setup, [-45.0, 0.0, 30.0]).sweep
    for i, t in enumerate([-45.0, 0.0, 30.0]):
        one = engine.analyse(setup, t).sweep
        assert float(one.front_normal_g) == pytest.approx(many.front_normal_g[i], rel=1e-12)
    front, rear = ss.axle_loads_g(2000.0, 300.0, 180.0, 75.0, np.zeros((2, 3)))
    assert front.shape == (2, 3) and np.allclose(front, 1200.0) and np.allclose(rear, 800.0)


def test_ballast_combination_by_hand():
    # Jazar ch. 2: the mass centre is the mass-weighted mean position. 2000 g at (180, 75) plus
    # 200 g at (300, 40) minus 100 g at (100, 60): total 2100 g, x = (360000 + 60000 − 10000)/2100,
    # z = (150000 + 8000 − 6000)/2100.
    from slopetune.engine import BallastItem
    setup = plain_setup(ballast=(BallastItem("weights", 200.0, 300.0, 40.0), BallastItem("links", -100.0, 100.0, 60.0)))
    rig = engine.analyse(setup).rig
    assert rig.mass_g == pytest.approx(2100.0)
    assert rig.cg_from_rear_mm == pytest.approx(410000.0 / 2100.0, rel=1e-12)
    assert rig.cg_height_mm == pytest.approx(152000.0 / 2100.0, rel=1e-12)
    assert rig.front_bias_pct == pytest.approx(100.0 * 410000.0 / 2100.0 / 300.0, rel=1e-12)
