"""Overdrive, the traction-limited grade, the handover and braking, against published rules and
hand-worked cases (Gillespie ch. 2 and 6, Shigley ch. 13, Serway & Beichner ch. 5, MODEL §4-5).

The same rules against independent methods (wind-up simulation, the reference model) are in
test_traction_reference.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune import engine
from slopetune.engine import Driveline, Grip, Rig, Setup, Terrain
from slopetune.engine import traction as tr
from slopetune.engine.overdrive import gear_overdrive_pct, overdrive_figures, stage_reduction

import reference_model as ref
from conftest import examples


def plain_setup(front_bias_pct=60.0, wheelbase_mm=300.0, cg_height_mm=75.0, overdrive_pct=0.0, mu=(1.0, 0.8),
                rolling=0.0, accel_g=0.0, tyres=(110.0, 110.0), mass_g=2000.0, stages=None, **grip):
    """A rig in round numbers on the rigid rule (tyres that never slip), the model the published
    rules are written for; `stages` (front, rear) replaces the overdrive percentage."""
    driveline = Driveline(None, *stages) if stages else Driveline(overdrive_pct)
    return Setup(
        name="test rig",
        rig=Rig(mass_g, wheelbase_mm, front_bias_pct, cg_height_mm, 240.0, tyres[0], tyres[1]),
        driveline=driveline,
        grip=Grip(mu[0], mu[1], rolling, **{"slip_stiffness": math.inf, **grip}),  # the rigid rule
        terrain=Terrain(0.0, accel_g),
    )


# --- published checks ----------------------------------------------------------------------------

@given(st.floats(0.2, 2.0), st.floats(20.0, 80.0), st.floats(0.05, 0.8))
def test_traction_limited_grade_is_atan_mu(mu, bias_pct, h_frac):
    # Gillespie ch. 2, traction-limited performance of a four-wheel drive: with no speed mismatch,
    # equal friction on both axles and no rolling resistance, tan θ_max = μ, unless the front lifts
    # first (tan θ = b/h), in which case the lift ends the climb.
    setup = plain_setup(front_bias_pct=bias_pct, cg_height_mm=300.0 * h_frac, mu=(mu, 0.8 * mu))
    a = engine.analyse(setup)
    b_over_h = bias_pct / 100.0 / h_frac
    assume(abs(b_over_h - mu) > 1e-3)
    if b_over_h > mu:
        assert a.angles_deg["max_grade"] == pytest.approx(math.degrees(math.atan(mu)), abs=0.01)
        assert a.max_grade_limit == "slip"
    else:
        assert a.angles_deg["max_grade"] == pytest.approx(math.degrees(math.atan(b_over_h)), abs=0.01)
        assert a.max_grade_limit == "lift"


def test_max_grade_rubber_on_dry_concrete():
    # Serway & Beichner table 5.2, rubber on dry concrete μ_s 1.0, μ_k 0.8 -> Gillespie ch. 2 tan θ = μ: 45 deg.
    a = engine.analyse(plain_setup(mu=(1.0, 0.8)))
    assert a.angles_deg["max_grade"] == pytest.approx(45.0, abs=0.01)
    assert a.angles_deg["handover"] is None and a.angles_deg["handover_weight_only"] is None


@given(st.floats(50.5, 85.0), st.floats(0.05, 0.8), st.floats(0.5, 60.0), st.floats(0.3, 2.0))
def test_no_load_handover_equals_balance_with_equal_mu(bias_pct, h_frac, od_pct, mu):
    # With no load and equal μ the overdriven front lets go once it carries less than the rear:
    # the weight-only rule equals the balance angle tan θ = (b − L/2)/h (Gillespie ch. 2).
    a = engine.analyse(plain_setup(front_bias_pct=bias_pct, cg_height_mm=300.0 * h_frac,
                                   overdrive_pct=od_pct, mu=(mu, 0.8 * mu)))
    assert a.angles_deg["handover_weight_only"] == pytest.approx(a.angles_deg["balance"], abs=0.01)
    assert a.angles_deg["balance"] == pytest.approx(
        math.degrees(math.atan((bias_pct / 100.0 - 0.5) / h_frac)), abs=1e-9)


@given(st.floats(15.0, 85.0), st.floats(0.05, 0.8), st.floats(1.0, 40.0))
def test_no_load_rear_overdrive_hands_over_at_once_on_a_front_heavy_rig(bias_pct, h_frac, under_pct):
    # Mirror of the balance rule: the overdriven rear lets go as soon as it carries less than the
    # front, i.e. for every climbing slope below the balance angle.
    assume(abs(bias_pct - 50.0) > 0.1)
    a = engine.analyse(plain_setup(front_bias_pct=bias_pct, cg_height_mm=300.0 * h_frac, overdrive_pct=-under_pct))
    assert a.overdrive.overdriven_axle == "rear"
    assert a.angles_deg["handover_weight_only"] == (0.0 if bias_pct > 50.0 else None)


def test_worked_case_handover_far_below_balance():
    """Hand-worked: 60 % front bias, h = L/4, μ_s 1.0 (μ_k 0.8), 30 % overdrive, no rolling resistance.

    With L = 1: b = 0.6, h = 0.25. The front (fast) axle is first to let go when
    μ N_f − μ N_r < W sin θ. N_f − N_r = W[(2b − L) cos θ − 2h sin θ]/L = W(0.2 cos θ − 0.5 sin θ),
    so 0.2 cos θ − 0.5 sin θ = sin θ, tan θ = 0.2/1.5, θ = 7.59°.
    Loads balance where (2b − L) cos θ = 2h sin θ: tan θ = 0.2/0.5, θ = 21.80°.
    So on a steady climb the front hands over at about a third of the balance angle.
    """
    a = engine.analyse(plain_setup(front_bias_pct=60.0, wheelbase_mm=300.0, cg_height_mm=75.0,
                                   overdrive_pct=30.0, mu=(1.0, 0.8)))
    assert a.angles_deg["handover"] == pytest.approx(math.degrees(math.atan(0.2 / 1.5)), abs=0.01)
    assert a.angles_deg["handover"] == pytest.approx(7.6, abs=0.05)
    assert a.angles_deg["balance"] == pytest.approx(math.degrees(math.atan(0.4)), abs=0.01)
    assert a.angles_deg["balance"] == pytest.approx(21.8, abs=0.05)
    assert a.angles_deg["handover_weight_only"] == pytest.approx(a.angles_deg["balance"], abs=0.01)
    s = engine.analyse(plain_setup(front_bias_pct=60.0, cg_height_mm=75.0, overdrive_pct=30.0), [5.0, 10.0]).sweep
    assert s.slipping == ["rear", "front"]


def test_no_handover_after_the_rig_has_tipped():
    """Hand-worked: rear overdriven, b = 0.3 L, h = 0.45 L, μ 1.0, steady climb, no rolling resistance.

    With W = L = 1: N_f = 0.3 cos θ − 0.45 sin θ, zero at tan θ = 0.3/0.45 (33.69°, Gillespie ch. 2).
    The fast rear would be first to slip where N_r − N_f < sin θ, i.e. 0.4 cos θ < 0.1 sin θ
    (tan θ = 4, 75.96°): far past the front lift, where nothing slips any more. So no handover.
    """
    a = engine.analyse(plain_setup(front_bias_pct=30.0, cg_height_mm=135.0, overdrive_pct=-20.0))
    assert a.overdrive.overdriven_axle == "rear"
    assert a.angles_deg["front_lift"] == pytest.approx(math.degrees(math.atan(0.3 / 0.45)), abs=1e-9)
    assert a.angles_deg["handover"] is None
    assert a.at([75.0, 77.0]).slipping == ["lifted", "lifted"]


def test_stage_reduction_is_product_of_driven_over_driver():
    # Shigley's Mechanical Engineering Design ch. 13: train value of gears in series is the product
    # of the stage ratios. 12->36 then 10->25: 3 × 2.5 = 7.5 input turns per output turn.
    assert stage_reduction([(12, 36), (10, 25)]) == pytest.approx(7.5, rel=1e-12)
    assert stage_reduction([]) == 1.0
    # front 13->38, rear 13->40 (one common input): front axle turns 40/38 per rear turn.
    assert gear_overdrive_pct([(13, 38)], [(13, 40)]) == pytest.approx((40 / 38 - 1) * 100, rel=1e-12)


@given(st.lists(st.tuples(st.integers(1, 1000), st.integers(1, 1000)), min_size=1, max_size=4),
       st.lists(st.tuples(st.integers(1, 1000), st.integers(1, 1000)), min_size=1, max_size=4))
def test_stage_overdrive_through_setup_matches_train_values(front, rear):
    # Shigley ch. 13 train value via the reference's own product; tyres equal so k is the axle ratio.
    a = engine.analyse(plain_setup(stages=(tuple(front), tuple(rear))), [0.0])
    want = ref.train_value(rear) / ref.train_value(front)
    assert a.overdrive.gear_pct == pytest.approx((want - 1) * 100, rel=1e-9, abs=1e-9)


def test_overdrive_conventions_38_40():
    # Front 38/12, rear 40/12 single stages, equal tyres: k = 40/38.
    # percent increase (k − 1) = 5.263 %, percent of the front (k − 1)/k = 5.000 %,
    # symmetric percent difference |k − 1|/((k + 1)/2) = 5.128 % (the usual definitions of
    # percent increase and percent difference).
    a = engine.analyse(plain_setup(stages=(((12, 38),), ((12, 40),))), [0.0])
    od = a.overdrive
    assert od.gear_pct == pytest.approx(5.263, abs=0.0005)
    assert od.effective_pct == pytest.approx(5.263, abs=0.0005)
    assert od.pct_of_front == pytest.approx(5.000, abs=0.0005)
    assert od.pct_difference == pytest.approx(5.128, abs=0.0005)
    assert od.overdriven_axle == "front"


def test_tyre_diameters_add_to_gear_overdrive():
    # MODEL §4: ground speed ratio k = (1 + p/100) D_f/D_r. 40/38 gears with 114/112 tyres:
    # k = 4560/4256 = 1.071428... (7.143 %); equal gears and a 5 % smaller front tyre underdrive it.
    od = engine.analyse(plain_setup(stages=(((13, 38),), ((13, 40),)), tyres=(114.0, 112.0)), [0.0]).overdrive
    assert od.effective_pct == pytest.approx(7.1428571, abs=1e-6)
    od = engine.analyse(plain_setup(tyres=(95.0, 100.0)), [0.0]).overdrive
    assert od.effective_pct == pytest.approx(-5.0, abs=1e-9) and od.overdriven_axle == "rear"


@given(st.floats(0.1, 100.0), st.floats(100.0, 600.0))
def test_turn_match_steer_angle_bicycle_geometry(od_pct, wheelbase_mm):
    # Gillespie ch. 6 low-speed turning: about the turn centre on the rear axle line, the rear wheel
    # runs on radius R = L/tan δ and the front on L/sin δ; their path ratio equals k at the match angle.
    od = overdrive_figures(od_pct, 110.0, 110.0)
    d = math.radians(od.turn_match_steer_deg)
    front_radius, rear_radius = wheelbase_mm / math.sin(d), wheelbase_mm / math.tan(d)
    assert front_radius / rear_radius == pytest.approx(1 + od_pct / 100, rel=1e-9)
    assert overdrive_figures(-od_pct / 2, 110.0, 110.0).turn_match_steer_deg is None


# --- underdrive mirrors overdrive --------------------------------------------------------------

@given(st.floats(0.0, 5000.0), st.floats(0.0, 5000.0), st.floats(-5000.0, 5000.0),
       st.floats(0.2, 2.0), st.floats(0.4, 1.0), st.floats(0.2, 2.0), st.floats(0.4, 1.0))
def test_traction_state_mirrors_front_and_rear(nf, nr, f_req, msf, kf, msr, kr):
    # Swapping front and rear (loads, friction, which axle is overdriven) swaps the answer.
    mu_f, mu_r = (msf, msf * kf), (msr, msr * kr)
    fwd = tr.traction_state(nf, nr, f_req, mu_f, mu_r, "front")
    back = tr.traction_state(nr, nf, f_req, mu_r, mu_f, "rear")
    swap = {tr.FRONT: tr.REAR, tr.REAR: tr.FRONT}
    assert swap.get(int(fwd.state), int(fwd.state)) == int(back.state)
    assert_allclose([fwd.front_force_g, fwd.rear_force_g, fwd.windup_g, fwd.reserve_g],
                    [back.rear_force_g, back.front_force_g, back.windup_g, back.reserve_g], rtol=1e-12, atol=1e-9)


@settings(max_examples=examples(60))
@given(st.floats(15.0, 85.0), st.floats(0.05, 0.8), st.floats(0.5, 60.0),
       st.floats(0.3, 2.0), st.floats(0.3, 2.0), st.floats(0.5, 1.0))
def test_underdriven_rig_turned_round_mirrors_overdriven_rig(bias_pct, h_frac, od_pct, mu_front, mu_rear, k_ratio):
    # The rig turned round end for end: bias 100 − f, per-axle μ swapped, the axle speed ratio
    # inverted (front underdriven by 1/k). On the mirrored slope −θ its loads swap ends, and with
    # no climbing force (no preferred direction) its slip states swap front/rear too: the Coulomb
    # rule (`traction_state`) fed the mirrored loads, each in its own driving direction.
    k = 1 + od_pct / 100
    fwd = plain_setup(front_bias_pct=bias_pct, cg_height_mm=300 * h_frac, overdrive_pct=od_pct,
                      front_mu_static=mu_front, front_mu_kinetic=mu_front * k_ratio,
                      rear_mu_static=mu_rear, rear_mu_kinetic=mu_rear * k_ratio)
    back = plain_setup(front_bias_pct=100 - bias_pct, cg_height_mm=300 * h_frac, overdrive_pct=(1 / k - 1) * 100,
                       front_mu_static=mu_rear, front_mu_kinetic=mu_rear * k_ratio,
                       rear_mu_static=mu_front, rear_mu_kinetic=mu_front * k_ratio)
    slopes = np.arange(-85.0, 86.0, 5.0)
    a, b = engine.analyse(fwd, slopes).sweep, engine.analyse(back, -slopes).sweep
    assert engine.analyse(back).overdrive.overdriven_axle == "rear"
    assert_allclose(a.front_normal_g, b.rear_normal_g, rtol=1e-9, atol=1e-9)
    c = (np.abs(a.front_normal_g) > 1e-9) & (np.abs(a.rear_normal_g) > 1e-9)
    mf, mr = (mu_front, mu_front * k_ratio), (mu_rear, mu_rear * k_ratio)
    ta = tr.traction_state(a.front_normal_g, a.rear_normal_g, 0.0, mf, mr, "front")
    tb = tr.traction_state(b.front_normal_g, b.rear_normal_g, 0.0, mr, mf, "rear")
    swap = {tr.FRONT: tr.REAR, tr.REAR: tr.FRONT}
    assert [swap.get(int(x), int(x)) for x in ta.state[c]] == [int(x) for x in tb.state[c]]
    assert_allclose(ta.front_force_g[c], tb.rear_force_g[c], rtol=1e-9, atol=1e-6)
    assert_allclose(ta.rear_force_g[c], tb.front_force_g[c], rtol=1e-9, atol=1e-6)
    assert_allclose(ta.reserve_g[c], tb.reserve_g[c], rtol=1e-9, atol=1e-6)
    fa, fb = engine.analyse(fwd).overdrive, engine.analyse(back).overdrive
    # percent difference is symmetric; the underdrive's "percent of the front" is −(k − 1)
    assert fb.pct_difference == pytest.approx(fa.pct_difference, rel=1e-9)
    assert fb.pct_of_front == pytest.approx(-fa.effective_pct, rel=1e-9)


# --- descents: the braking case ----------------------------------------------------------------

@given(st.floats(-89.0, -0.5), st.floats(0.0, 0.1))
def test_descents_need_a_braking_force(slope_deg, crr):
    # Gillespie ch. 2 grade resistance W sin θ is negative downhill; rolling resistance c_rr W cos θ
    # still opposes motion (Wong ch. 1). Below θ = −atan(c_rr) the tyres must hold the rig back.
    f = float(engine.analyse(plain_setup(rolling=crr), [slope_deg]).sweep.required_g[0])
    t = math.radians(slope_deg)
    assert f == pytest.approx(2000.0 * (math.sin(t) + crr * math.cos(t)), rel=1e-12)
    if math.tan(t) < -crr:
        assert f < 0


def test_braking_on_a_descent_by_hand():
    # 2000 g, L 300, b 180, h 75, μ_s 1.0, μ_k 0.8 (Serway & Beichner table 5.2), no overdrive:
    # at −30 deg the tyres must brake W sin 30 = 0.5 W, the grip is μ W cos 30 = 0.866 W: holds.
    # At −50 deg, 0.766 W > 0.643 W: both slide, each braking at μ_k N (rear lifts only at
    # atan(−120/75) = −58 deg).
    s = engine.analyse(plain_setup(), [-30.0, -50.0]).sweep
    assert s.slipping == ["none", "both"]
    assert np.all(s.traction.front_force_g < 0) and np.all(s.traction.rear_force_g < 0)
    assert s.traction.front_force_g[1] == pytest.approx(-0.8 * s.front_normal_g[1], rel=1e-12)
    assert s.traction.rear_force_g[1] == pytest.approx(-0.8 * s.rear_normal_g[1], rel=1e-12)


def test_braking_with_front_overdrive_by_hand():
    # Same rig, 30 % front overdrive, −20 deg. By hand (W = 1):
    # N_f = (180 cos 20 + 75 sin 20)/300 = 0.6493, N_r = cos 20 − N_f = 0.2904, F_req = −sin 20 = −0.3420.
    # μ N_f − μ N_r = 0.359 > F_req, so the slow rear reaches its limit first (MODEL §5 rule, checked by
    # simulation above): it is dragged back at −μ_k N_r = −0.2323; the front carries −0.1097, well
    # within μ N_f: state "rear".
    W, c, s_ = 2000.0, math.cos(math.radians(20)), math.sin(math.radians(20))
    n_f = W * (180 * c + 75 * s_) / 300
    n_r = W * c - n_f
    s = engine.analyse(plain_setup(overdrive_pct=30.0), [-20.0]).sweep
    assert s.slipping == ["rear"]
    assert s.traction.rear_force_g[0] == pytest.approx(-0.8 * n_r, rel=1e-9)
    assert s.traction.front_force_g[0] == pytest.approx(-W * s_ + 0.8 * n_r, rel=1e-9)
    assert s.traction.reserve_g[0] == pytest.approx(n_f - abs(-W * s_ + 0.8 * n_r), rel=1e-9)
