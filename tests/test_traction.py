"""Overdrive, driveline wind-up and which axle lets go, against published rules and independent methods."""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

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
from conftest import examples, rig_setups


def plain_setup(front_bias_pct=60.0, wheelbase_mm=300.0, cg_height_mm=75.0, overdrive_pct=0.0, mu=(1.0, 0.8),
                rolling=0.0, accel_g=0.0, tyres=(110.0, 110.0), mass_g=2000.0, stages=None, **grip):
    driveline = Driveline(None, *stages) if stages else Driveline(overdrive_pct)
    return Setup(
        name="test rig",
        rig=Rig(mass_g, wheelbase_mm, front_bias_pct, cg_height_mm, 240.0, tyres[0], tyres[1]),
        driveline=driveline,
        grip=Grip(mu[0], mu[1], rolling, **{"slip_stiffness": math.inf, **grip}),  # the rigid rule
        terrain=Terrain(0.0, accel_g),
    )


# --- wind-up simulated directly ----------------------------------------------------------------

def simulate_windup(n_fast, n_slow, f_req, mu_fast, mu_slow, start_fast, step):
    """Grow the internal pair P from a starting split until a contact reaches μ_s N.

    Coulomb static friction (Serway & Beichner ch. 5): a contact holds while |F| <= μ_s N. The fast
    axle carries start + P, the slow one (F_req − start) − P. Returns "fast" or "slow".
    """
    fast, slow = start_fast, f_req - start_fast
    while True:
        fast += step
        slow -= step
        if fast >= mu_fast * n_fast:
            return "fast"
        if slow <= -mu_slow * n_slow:
            return "slow"


@settings(max_examples=examples(150))
@given(rig_setups(), st.floats(-60.0, 60.0))
def test_windup_simulation_agrees_with_closed_form(setup, slope_deg):
    # Coulomb friction + wind-up pair grown in steps from five starting splits (MODEL §5 criterion
    # checked by brute force): the contact that reaches its static limit first is the one that
    # lets go; the closed form says the starting split does not matter.
    a = engine.analyse(setup, [slope_deg])
    od = a.overdrive.overdriven_axle
    assume(od is not None)
    s = a.sweep
    nf, nr, f_req = float(s.front_normal_g[0]), float(s.rear_normal_g[0]), float(s.required_g[0])
    assume(nf > 0 and nr > 0)
    (msf, mkf, msr, mkr) = setup.grip.axle_mu()
    n_fast, n_slow, ms_fast, ms_slow, mk_fast, mk_slow = (
        (nf, nr, msf, msr, mkf, mkr) if od == "front" else (nr, nf, msr, msf, mkr, mkf))
    # a starting split must itself be within both static limits
    lo = max(-ms_fast * n_fast, f_req - ms_slow * n_slow)
    hi = min(ms_fast * n_fast, f_req + ms_slow * n_slow)
    assume(hi - lo > 1e-3 * a.rig.mass_g)
    step = 2e-4 * a.rig.mass_g
    tie = ms_fast * n_fast - ms_slow * n_slow - f_req
    assume(abs(tie) > 4 * step)  # closer than a step or two the simulation cannot tell

    firsts = {simulate_windup(n_fast, n_slow, f_req, ms_fast, ms_slow, lo + frac * (hi - lo), step)
              for frac in (0.02, 0.25, 0.5, 0.75, 0.98)}
    assert len(firsts) == 1  # the starting split drops out
    first = firsts.pop()
    assert bool(tr.fast_slips_first(n_fast, n_slow, f_req, ms_fast, ms_slow)) == (first == "fast")

    # after it lets go the loose axle carries μ_k N; the other must hold the rest within μ_s N
    if first == "fast":
        other_needs, other_cap = f_req - mk_fast * n_fast, ms_slow * n_slow
        letting_go = od
    else:
        other_needs, other_cap = f_req + mk_slow * n_slow, ms_fast * n_fast
        letting_go = "rear" if od == "front" else "front"
    assume(abs(abs(other_needs) - other_cap) > 1e-9 * a.rig.mass_g)
    expected = letting_go if abs(other_needs) <= other_cap else "both"
    assert s.slipping[0] == expected
    if expected != "both":
        front, rear = float(s.traction.front_force_g[0]), float(s.traction.rear_force_g[0])
        assert front + rear == pytest.approx(f_req, abs=1e-9 * a.rig.mass_g)  # Newton along the slope


# --- the independent reference model -----------------------------------------------------------

SWEEP_DEG = np.arange(-89.0, 89.5, 0.5)


def _expected_accel(setup):
    """Named angles are for a steady climb (MODEL section 5): no throttle."""
    return 0.0


@settings(max_examples=examples(100))
@given(rig_setups())
def test_named_traction_angles_and_states_match_reference(setup):
    # MODEL §3–5 recomputed by tests/reference_model.py (scalar loop, 0.01 deg scan, brentq).
    # Tolerances from the issue: handover and max grade within 0.1 deg; state identical at every
    # sweep row farther than 0.2 deg from a transition.
    a = engine.analyse(setup, SWEEP_DEG)
    r = ref.ref_rig_from_setup(setup)
    climb = ref.ref_rig_from_setup(setup, accel_g=_expected_accel(setup))
    coast = ref.ref_rig_from_setup(setup, load="none")
    assert a.overdrive.overdriven_axle == r.overdriven

    want_grade, _ = ref.max_grade_deg(climb)
    for name, rig in (("handover", climb), ("handover_weight_only", coast)):
        want, got = ref.handover_deg(rig), a.angles_deg[name]
        if name == "handover" and want is not None and want > want_grade - 0.1:
            # MODEL section 5: a handover is only one below the max grade; where the fast axle's
            # letting go is itself the end of the grade (the other cannot hold), there is none
            assert got is None or got == pytest.approx(want, abs=0.1)
            continue
        if want is None:
            assert got is None, name
        else:
            assert got == pytest.approx(want, abs=0.1), name

    want_grade, want_limit = ref.max_grade_deg(climb)
    assert a.angles_deg["max_grade"] == pytest.approx(want_grade, abs=0.1)
    assert a.max_grade_limit == want_limit

    angles, names = ref.state_grid(r)
    changes = np.array(ref.transitions(angles, names) or [1e9])
    got_states = a.sweep.slipping
    for i, t in enumerate(SWEEP_DEG):
        if np.min(np.abs(changes - t)) <= 0.2:
            continue
        want = ref.state_at(r, t)
        assert got_states[i] == want.name, f"slope {t}"
        if want.name in ("front", "rear"):
            W = r.weight_g
            assert a.sweep.traction.front_force_g[i] == pytest.approx(want.front_force, abs=1e-6 * W)
            assert a.sweep.traction.rear_force_g[i] == pytest.approx(want.rear_force, abs=1e-6 * W)
            assert a.sweep.traction.reserve_g[i] == pytest.approx(want.reserve, abs=1e-6 * W)


@given(rig_setups(), st.lists(st.floats(-89.0, 89.0), min_size=1, max_size=30))
def test_holding_axles_carry_the_required_force(setup, slopes):
    # Newton along the slope (Gillespie ch. 2): while the rig holds, the two ground forces add up to
    # F_req, and neither exceeds its static limit μ_s N (Coulomb, Serway & Beichner ch. 5).
    s = engine.analyse(setup, slopes).sweep
    fs, _, rs, _ = setup.grip.axle_mu()
    W = setup.rig.mass_g
    for i, state in enumerate(s.slipping):
        if state in ("none", "front", "rear"):
            f, r_ = s.traction.front_force_g[i], s.traction.rear_force_g[i]
            assert f + r_ == pytest.approx(s.required_g[i], abs=1e-9 * W)
            assert abs(f) <= fs * s.front_normal_g[i] + 1e-9 * W
            assert abs(r_) <= rs * s.rear_normal_g[i] + 1e-9 * W
        if state == "lifted":
            assert min(s.front_normal_g[i], s.rear_normal_g[i]) <= 0


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


# --- named traction angles sit where the sweep changes ------------------------------------------

@given(rig_setups())
def test_handover_and_max_grade_are_where_the_sweep_changes(setup):
    # Definitions (MODEL §5): just past the handover the overdriven axle is the first to let go
    # (alone, or with the other following: both); just before it, it is not. Just below the max
    # grade the rig holds; just above, it does not.
    eps = 0.01
    a = engine.analyse(setup)
    od = a.overdrive.overdriven_axle
    climb = engine.analyse(setup, accel_g=_expected_accel(setup))  # named angles: a steady climb
    h = a.angles_deg["handover"]
    if h is not None and eps < h < 90 - eps:
        before, after = climb.at([h - eps, h + eps]).slipping
        assert after in (od, "both")
        assert before != od
    m = a.angles_deg["max_grade"]
    if eps < m < 90 - eps:
        before, after = climb.at([m - eps, m + eps]).slipping
        assert before in ("none", "front", "rear")
        assert after == ("lifted" if a.max_grade_limit == "lift" else "both")


# --- the report command agrees with the reference ---------------------------------------------

INVENTED_RIGS = {
    # invented rigs the engine was not tuned on: gear stages + per-axle mu + ballast + rolling resistance
    "heron-224": """schema = 1
name = "Heron 224 trail rig"
[rig]
mass_g = 1460
wheelbase_mm = 224
front_bias_pct = 54
cg_height_mm = 71
track_mm = 186
tire_dia_front_mm = 96
tire_dia_rear_mm = 98
[[rig.ballast]]
name = "steel wheel weights"
mass_g = 120
x_mm = 224
z_mm = 30
[driveline]
front_stages = [[11, 34], [13, 38]]
rear_stages = [[11, 34], [12, 37]]
[grip]
mu_static = 1.2
mu_kinetic = 0.9
rolling_resistance = 0.05
rear_mu_static = 0.95
rear_mu_kinetic = 0.7
slip_stiffness = "rigid"
[terrain]
slope_deg = 35
""",
    # rear overdriven (front underdrive), rear-heavy, throttle punch
    "wombat-340": """schema = 1
name = "Wombat 340 tube buggy"
[rig]
mass_g = 4200
wheelbase_mm = 340
front_bias_pct = 44
cg_height_mm = 120
track_mm = 300
tire_dia_front_mm = 140
tire_dia_rear_mm = 140
[driveline]
overdrive_pct = -8
[grip]
mu_static = 0.85
mu_kinetic = 0.6
slip_stiffness = "rigid"
[terrain]
slope_deg = 20
accel_g = 0.15
""",
}


def _json_report(text, folder, name):
    root = Path(__file__).resolve().parent.parent
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "slopetune.tui.cli", "report", str(path), "--json", "--from", "-89",
                          "--to", "89", "--step", "0.5"], cwd=root, capture_output=True, text=True, timeout=120,
                         env=dict(os.environ, PYTHONPATH=str(root)))
    assert out.returncode == 0, out.stderr
    return path, json.loads(out.stdout)


@pytest.mark.parametrize("name", sorted(INVENTED_RIGS))
def test_report_json_matches_reference(name, tmp_path):
    # Issue acceptance: `report --json` on rigs not tuned for agrees with an independent
    # implementation of MODEL §2–5 (0.1 % of weight, 0.05 deg statics, 0.1 deg handover and max
    # grade, states identical farther than 0.2 deg from a transition).
    path, rep = _json_report(INVENTED_RIGS[name], tmp_path, name)
    setup = engine.load_setup(path).setup
    r = ref.ref_rig_from_setup(setup, accel_g=0.0)  # named angles: a steady climb
    W = r.weight_g
    assert rep["rig"]["mass_g"] == pytest.approx(W, abs=1e-3)
    assert rep["rig"]["cg_from_rear_mm"] == pytest.approx(r.cg_from_rear_mm, abs=2e-3)
    assert rep["rig"]["cg_height_mm"] == pytest.approx(r.cg_height_mm, abs=2e-3)
    assert rep["overdrive"]["effective_pct"] == pytest.approx((r.speed_ratio - 1) * 100, abs=1e-4)
    assert rep["overdrive"]["overdriven_axle"] == r.overdriven
    ang = rep["angles_deg"]
    for key, fn in (("balance", ref.balance_deg), ("front_lift", ref.front_lift_deg), ("rear_lift", ref.rear_lift_deg),
                    ("sidehill_roll", ref.sidehill_roll_deg), ("sidehill_slide", ref.sidehill_slide_deg)):
        assert ang[key] == pytest.approx(fn(r), abs=0.05), key
    climb = ref.ref_rig_from_setup(setup, accel_g=0.0)
    assert ang["handover"] == pytest.approx(ref.handover_deg(climb), abs=0.1)
    assert ang["handover_weight_only"] == pytest.approx(ref.handover_deg(ref.ref_rig_from_setup(setup, load="none")), abs=0.1)
    grade, limit = ref.max_grade_deg(r)
    assert ang["max_grade"] == pytest.approx(grade, abs=0.1) and rep["max_grade_limit"] == limit
    r = ref.ref_rig_from_setup(setup)  # the sweep rows carry the file's throttle
    changes = np.array(ref.transitions(*ref.state_grid(r)) or [1e9])
    compared = 0
    for row in rep["sweep"]:
        t = row["slope_deg"]
        nf, nr = ref.axle_loads(r, t)
        assert row["front_normal_g"] == pytest.approx(nf, abs=1e-3 * W)
        assert row["rear_normal_g"] == pytest.approx(nr, abs=1e-3 * W)
        if np.min(np.abs(changes - t)) > 0.2:
            assert row["slipping"] == ref.state_at(r, t).name, t
            compared += 1
    assert compared > 300
