"""Off-camber and diagonal climbs (MODEL section 8): wheel loads, tip, wheel lift, hold angle.

Each check names its source. The independent scalar implementation is `reference_off_camber`.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from slopetune.engine import Driveline, Grip, Rig, Setup, Terrain, analyse, load_setup
from slopetune.engine import off_camber as oc
from slopetune.engine.analysis import effective_rig
from slopetune.engine.heading_sweep import LIMITS, PlaneModel, heading_sweep

import reference_off_camber as ref
from conftest import examples, rig_setups

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"


def demo_setup() -> Setup:
    """The demo rig on its tyre diameters (MODEL's worked examples quote it without roll-out
    measurements, so the speed ratio does not change with load)."""
    return load_setup(DEMO).setup.on_tyre_diameters()


def round_rig(overdrive_pct=0.0, mu=(1.0, 0.8), rolling=0.0, share=None, **grip) -> Setup:
    """W 1000 g, L 300, b 150 (50 % bias), h 100, T 200: numbers that work out by hand."""
    return Setup(
        name="round rig",
        rig=Rig(1000.0, 300.0, 50.0, 100.0, 200.0, 110.0, 110.0, roll_stiffness_front_pct=share),
        driveline=Driveline(overdrive_pct),
        grip=Grip(mu[0], mu[1], rolling, **grip),
        terrain=Terrain(30.0, heading_deg=45.0),
    )


def model(setup: Setup, stiffness=math.inf) -> PlaneModel:
    """The plane model with a slip stiffness per unit load on both axles (inf: the rigid limit)."""
    m = PlaneModel(setup)
    m.stiffness = (stiffness, stiffness)
    return m


def model_example_rig() -> Setup:
    """The demo rig as MODEL sections 5 and 8 quote it: 7.1 % overdrive, μ 1.0/0.8 on both axles,
    no rolling resistance."""
    s = demo_setup()
    return replace(s, grip=Grip(1.0, 0.8, 0.0))


# --- wheel loads -------------------------------------------------------------------------------

def test_three_wheel_example_of_model_section_8():
    """MODEL section 8 worked example (demo rig, ξ = 0.5, β = 52°, ψ = 90): 89/804/0/608 gf,
    summing to W cos β = 1501 gf."""
    r = effective_rig(demo_setup())
    wl = oc.wheel_loads_g(r.mass_g, r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, r.track_mm, 52.0, 90.0, 0.5)
    got = [float(v) for v in wl.as_array()]
    assert [round(v) for v in got] == [89, 804, 0, 608]
    assert round(sum(got)) == 1501
    assert oc.WHEELS[int(wl.lifted)] == "rear_left" and not wl.tipped


def test_diagonal_case_worked_by_hand():
    """Round rig (W 1000 gf, L 300, b 150, h 100, T 200 mm) at β = 30°, ψ = 45°, default ξ.

    Worked by hand (4-5 figures), Gillespie ch. 2 grade loads with sin θ -> sin β cos ψ:
      W cos β = 1000 x 0.866025 = 866.025
      N_F = W (b cos β − h sin β cos ψ)/L = 1000 (150 x 0.866025 − 100 x 0.5 x 0.707107)/300
          = 1000 (129.904 − 35.355)/300 = 315.161;   N_R = 866.025 − 315.161 = 550.864
      M/T = W h sin β sin ψ / T = 1000 x 100 x 0.5 x 0.707107 / 200 = 176.777
      ξ = N_F/(N_F + N_R) = 0.363917;  ξ M/T = 64.332;  (1 − ξ) M/T = 112.445
      FL = 157.581 − 64.332 = 93.249   FR = 157.581 + 64.332 = 221.913
      RL = 275.432 − 112.445 = 162.987  RR = 275.432 + 112.445 = 387.877
    Tip at ψ = 45°: tan β = min(b/(h cos ψ), (T/2)/(h sin ψ)) = min(2.12132, 1.41421)
      -> 54.7356° over the right-hand wheels (the left wheels lift).
    Hold at ψ = 45° with no overdrive, μ 1.0/0.8, no rolling resistance: both axles grip with
      the grip-proportional split while W sin β cos ψ <= μ' W cos β, μ' = sqrt(μ² − tan²β sin²ψ):
      tan²β cos²ψ <= μ² − tan²β sin²ψ  <=>  tan β <= μ: 45.00°, limited by slip (not the tip).
    """
    s = round_rig()
    r = effective_rig(s)
    wl = oc.wheel_loads_g(r.mass_g, r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, r.track_mm, 30.0, 45.0)
    assert np.allclose(wl.as_array(), [93.249, 221.913, 162.987, 387.877], atol=0.002)
    tip, edge = oc.tip_angle_deg(300.0, 150.0, 100.0, 200.0, 45.0)
    assert float(tip) == pytest.approx(54.7356, abs=1e-4) and oc.EDGES[int(edge)] == "left"
    hold, limit = PlaneModel(s).hold([45.0])
    assert float(hold[0]) == pytest.approx(45.0, abs=0.01) and LIMITS[int(limit[0])] == "slip"


def test_diagonal_rigid_overdrive_worked_by_hand():
    """Round rig, front overdriven, rigid limit, μ 1.0/0.8, c_rr 0, ψ = 45°. By hand, u = tan β,
    per unit W cos β: N_F = 0.5 − 0.235702 u, N_R = 0.5 + 0.235702 u, F_req = 0.707107 u,
    t = 0.707107 u, μ'_s = sqrt(1 − u²/2), μ'_k = sqrt(0.64 − u²/2).
    Front first (rigid rule μ'_s N_F − μ'_s N_R < F_req: −0.4714 u μ'_s < 0.7071 u, any u > 0);
    the rear must carry F_req − μ'_k N_F within μ'_s N_R:
      f(u) = μ'_s N_R + μ'_k N_F − F_req:  f(0.93) = +0.0121,  f(0.94) = −0.0016
      -> u = 0.9388 by linear interpolation, β = 43.19° (slip); the crab limit
      (t >= μ_k: u >= 1.1314, 48.5°) and the tip (54.74°) come later."""
    hold, limit = model(round_rig(overdrive_pct=5.0)).hold([45.0])
    assert float(hold[0]) == pytest.approx(43.19, abs=0.03)
    assert LIMITS[int(limit[0])] == "slip"


@given(slope=st.floats(0.0, 80.0), heading=st.floats(-180.0, 180.0), share=st.floats(0.01, 0.99),
       bias=st.floats(20.0, 80.0), h=st.floats(30.0, 200.0), track=st.floats(100.0, 400.0),
       default=st.booleans())
def test_wheel_loads_balance_total_pitch_and_roll(slope, heading, share, bias, h, track, default):
    """Hypothesis: the four loads sum to W cos β and satisfy both moment equations for any ξ
    (statics of a rigid body, Gillespie ch. 2; roll moment M = W h sin β sin ψ, Milliken ch. 18)."""
    W, L = 2000.0, 300.0
    b = bias / 100 * L
    xi = None if default else share
    wl = oc.wheel_loads_g(W, L, b, h, track, slope, heading, xi)
    assume(not bool(wl.tipped))
    fl, fr, rl, rr = (float(v) for v in wl.as_array())
    be, ps = math.radians(slope), math.radians(heading)
    scale = W
    assert min(fl, fr, rl, rr) >= -1e-9 * scale
    assert fl + fr + rl + rr == pytest.approx(W * math.cos(be), abs=1e-9 * scale)
    # moments about the rear axle line (pitch) and about the centre line (roll)
    assert (fl + fr) * L == pytest.approx(W * (b * math.cos(be) - h * math.sin(be) * math.cos(ps)), abs=1e-7 * scale * L)
    assert (fr + rr - fl - rl) * track / 2 == pytest.approx(W * h * math.sin(be) * math.sin(ps), abs=1e-7 * scale * L)


@given(slope=st.floats(0.0, 75.0), heading=st.floats(-180.0, 180.0), share=st.floats(0.02, 0.98))
def test_wheel_loads_agree_with_the_scalar_reference(slope, heading, share):
    """Independent implementation (Cramer's rule on the three-wheel system) agrees."""
    r = ref.PlaneRig(2000.0, 300.0, 170.0, 90.0, 240.0, front_share=share)
    want = ref.wheel_loads(r, slope, heading)
    wl = oc.wheel_loads_g(2000.0, 300.0, 170.0, 90.0, 240.0, slope, heading, share)
    if want is None:
        assert bool(wl.tipped) or min(ref.split_loads(r, slope, heading)) < 0 and abs(ref.edge_room(r, slope, heading)) < 1e-6
        return
    assume(ref.edge_room(r, slope, heading) > 1e-6)
    assert np.allclose(wl.as_array(), want, atol=1e-6)


# --- tip and wheel lift ------------------------------------------------------------------------

def test_tip_at_0_180_and_90_equals_planar_lift_and_nhtsa_roll():
    """ψ = 0/180: the planar front/rear lift angles (Gillespie ch. 2, tan θ = b/h and a/h);
    ψ = ±90: atan((T/2)/h), the NHTSA static stability factor T/(2h) (68 FR 59250, 2003)."""
    s = demo_setup()
    r = effective_rig(s)
    tip, edge = oc.tip_angle_deg(r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, r.track_mm, [0, 180, 90, -90])
    a = analyse(s).angles_deg
    assert tip[0] == pytest.approx(a["front_lift"], abs=1e-9)
    assert tip[1] == pytest.approx(-a["rear_lift"], abs=1e-9)
    ssf = math.degrees(math.atan((r.track_mm / 2) / r.cg_height_mm))
    assert tip[2] == pytest.approx(ssf, abs=1e-9) and tip[3] == pytest.approx(ssf, abs=1e-9)
    # by hand: b = (2380 x 179.975 + 96 x 313 − 38 x 120)/2438 = 186.148 mm, h = 86.780 mm
    assert tip[0] == pytest.approx(math.degrees(math.atan(186.148 / 86.780)), abs=0.01)
    assert [oc.EDGES[e] for e in edge] == ["front", "rear", "left", "right"]


@pytest.mark.parametrize("share", [None, 0.3, 0.5, 0.8])
def test_tip_and_wheel_lift_agree_with_the_scalar_reference(share):
    """Independent scans (brentq on the foot's room and on the split loads) agree to 1e-6 deg."""
    L, b, h, T = 313.0, 186.148, 86.78, 252.0
    r = ref.PlaneRig(2438.0, L, b, h, T, front_share=share)
    headings = np.arange(0.0, 360.0, 15.0)
    tip, _ = oc.tip_angle_deg(L, b, h, T, headings)
    lift, _ = oc.wheel_lift_angle_deg(L, b, h, T, headings, share)
    for i, psi in enumerate(headings):
        assert tip[i] == pytest.approx(ref.tip_deg(r, psi), abs=1e-6)
        want = ref.wheel_lift_deg(r, psi)
        assert lift[i] == pytest.approx(want, abs=1e-6)
        assert lift[i] <= tip[i] + 1e-9  # a wheel never lifts after the rig has tipped


def test_default_share_lifts_a_pair_exactly_at_the_tip():
    """MODEL section 8: with ξ = N_F/(N_F + N_R) both uphill wheels unload together, at the tip."""
    L, b, h, T = 313.0, 186.148, 86.78, 252.0
    headings = np.arange(0.0, 360.0, 5.0)
    tip, edge = oc.tip_angle_deg(L, b, h, T, headings)
    lift, what = oc.wheel_lift_angle_deg(L, b, h, T, headings)
    assert np.array_equal(lift, tip)
    assert all(oc.LIFTS[w] == f"{oc.EDGES[e]} wheels" for w, e in zip(what, edge))


def test_edge_margins_are_zero_on_the_point_of_tipping():
    """Force-angle measure (Papadopoulos & Rey 2000) for gravity alone: zero at the tip angle."""
    L, b, h, T = 313.0, 186.148, 86.78, 252.0
    for psi in (0.0, 30.0, 90.0, 150.0, 180.0, -60.0):
        tip, edge = oc.tip_angle_deg(L, b, h, T, psi)
        m = oc.edge_margins_deg(L, b, h, T, float(tip), psi)
        assert m[int(edge)] == pytest.approx(0.0, abs=1e-9)
        assert np.all(m >= -1e-9)


# --- hold angle --------------------------------------------------------------------------------

def test_hold_at_0_and_180_equals_the_planar_slip_results():
    """ψ = 0 is the planar climb: hold = planar max grade (same section 5 solve); ψ = 180 the
    planar descent: the first slope below 0 the planar sweep does not hold."""
    s = demo_setup()
    hold, limit = PlaneModel(s).hold([0.0, 180.0])
    a = analyse(s, np.arange(-90.0, 90.001, 0.005))
    assert hold[0] == pytest.approx(a.angles_deg["max_grade"], abs=0.01)
    st_ = a.sweep.traction.state
    down = np.flatnonzero((a.sweep.slope_deg < 0) & ~np.isin(st_, (0, 1, 2)))
    assert hold[1] == pytest.approx(-a.sweep.slope_deg[down[-1]], abs=0.01)
    assert LIMITS[int(limit[0])] == "slip"


def test_planar_states_along_heading_0_and_180():
    """Along ψ = 0 / 180 with no side demand, the state at every slope is the planar one."""
    s = demo_setup()
    m = PlaneModel(s)
    slopes = np.arange(0.0, 60.0, 0.5)
    planar = analyse(s, np.concatenate([slopes, -slopes]), accel_g=0.0).sweep.traction.state
    _, _, _, up = m.traction(slopes, 0.0)
    _, _, _, down = m.traction(slopes, 180.0)
    assert np.array_equal(up, planar[: len(slopes)])
    assert np.array_equal(down, planar[len(slopes):])


def test_sidehill_hold_is_atan_min_mu_when_no_axle_scrubs():
    """ψ = ±90, no overdrive, no rolling resistance: no axle scrubs, so the rig holds until the
    sideways demand reaches the smaller static mu: atan(min μ_s) (MODEL section 2; Coulomb,
    Serway & Beichner ch. 5). Front 0.9, rear 1.0: atan 0.9 = 41.99°."""
    s = round_rig(mu=(1.0, 0.8), front_mu_static=0.9, front_mu_kinetic=0.7)
    hold, limit = PlaneModel(s).hold([90.0, -90.0])
    assert hold == pytest.approx([math.degrees(math.atan(0.9))] * 2, abs=0.01)
    assert [LIMITS[c] for c in limit] == ["slide", "slide"]


@pytest.mark.parametrize("stiffness, want", [(math.inf, 38.7), (20.0, 43.1)])
def test_crab_rule_examples_of_model_section_8(stiffness, want):
    """MODEL section 8 worked examples: demo rig, ψ = 90: the hold angle is 43.1° at c = 20 and
    38.7° in the rigid limit (the rear scrubs under wind-up, so past t = μ_k = 0.8, atan 0.8 =
    38.66°, it cannot carry its sideways share), not atan μ_s = 45°."""
    hold, limit = model(model_example_rig(), stiffness).hold([90.0])
    assert round(float(hold[0]), 1) == want
    assert LIMITS[int(limit[0])] == "crab"
    if math.isinf(stiffness):
        assert float(hold[0]) == pytest.approx(math.degrees(math.atan(0.8)), abs=0.01)


@pytest.mark.parametrize("overdrive", [0.0, 7.0, -6.0])
def test_rigid_hold_agrees_with_the_scalar_reference(overdrive):
    """Independent per-heading scalar scan (rigid rule written afresh) agrees to 0.01 deg."""
    s = round_rig(overdrive_pct=overdrive, rolling=0.03, mu=(1.0, 0.8), front_mu_static=1.1,
                  front_mu_kinetic=0.85)
    r = ref.PlaneRig(1000.0, 300.0, 150.0, 100.0, 200.0, (1.1, 0.85), (1.0, 0.8), 0.03,
                     None if overdrive == 0 else "front" if overdrive > 0 else "rear")
    headings = np.arange(0.0, 360.0, 20.0)
    hold, limit = model(s).hold(headings)
    for i, psi in enumerate(headings):
        want, what = ref.hold_deg(r, psi)
        assert hold[i] == pytest.approx(want, abs=0.01), psi
        got = LIMITS[int(limit[i])]
        near_tie = abs(want - ref.tip_deg(r, psi)) < 0.01  # two limits within the tolerance
        assert near_tie or ("tip" if got in ("tip", "lift") else got) == what, psi


def test_heading_sweep_is_mirror_symmetric_and_complete():
    """The rig is symmetric left to right: ψ and −ψ give the same angles (common practice, no source)."""
    hs = heading_sweep(demo_setup())
    assert len(hs.heading_deg) == 72 and hs.heading_deg[0] == 0 and hs.heading_deg[-1] == 355
    mirror = (360 - np.arange(72) * 5) % 360 // 5
    for arr in (hs.tip_deg, hs.hold_deg, hs.wheel_lift_deg):
        assert np.allclose(arr, arr[mirror.astype(int)])
    assert np.all(hs.hold_deg <= hs.tip_deg + 1e-9)


@pytest.mark.parametrize("stiffness", [8.0, 20.0])
def test_slip_hold_agrees_with_the_scalar_reference(stiffness):
    """Independent per-heading scan with the brentq section 5 solver of test_tyre_slip (a different
    method) agrees with the vectorised scan and bisection to 0.02 deg on the demo rig."""
    from test_tyre_slip import reference_state

    s = demo_setup()
    m = model(s, stiffness)
    r = ref.PlaneRig(m.weight, m.L, m.b, m.h, m.T, m.mu_f, m.mu_r, m.crr)
    ratio = m.od.ratio

    def axles(nf, nr, f_req, mu_f, mu_r):
        return reference_state(nf, nr, f_req, mu_f, mu_r, stiffness, stiffness, ratio)[0]

    headings = np.array([0.0, 40.0, 90.0, 135.0, 180.0])
    hold, limit = m.hold(headings)
    for i, psi in enumerate(headings):
        want, what = ref.hold_deg(r, psi, lambda rig, b, p: ref.plane_state(rig, b, p, axles), step=0.5)
        assert hold[i] == pytest.approx(want, abs=0.02), psi
        assert LIMITS[int(limit[i])] == what, psi


def test_along_heading_is_the_planar_model_at_heading_0_and_slides_and_rolls_across():
    """The hook for the uniform-slope sweep: at ψ = 0 exactly the planar loads (Gillespie ch. 2)
    with the friction untouched; at ψ = 90 a sideways slide from atan(min μ_s) (here atan 1.0 = 45°)
    and a roll-over from the NHTSA angle atan(T/(2h)) = atan(100/100) = 45° for the round rig."""
    slopes = np.arange(-89.0, 90.0, 1.0)
    a = oc.along_heading(1000.0, 300.0, 150.0, 100.0, 200.0, slopes, 0.0, 0.02, 0.0, (1.0, 0.8), (0.9, 0.7))
    th = np.radians(slopes)
    assert np.allclose(a.front_g, 1000.0 * (150.0 * np.cos(th) - 100.0 * np.sin(th)) / 300.0)
    assert np.allclose(a.required_g, 1000.0 * (np.sin(th) + 0.02 * np.cos(th)))
    assert a.mu_front == (1.0, 0.8) and a.mu_rear == (0.9, 0.7) and not a.slides.any()
    b = oc.along_heading(1000.0, 300.0, 150.0, 100.0, 250.0, np.array([41.0, 42.0, 51.0, 52.0]), 90.0, 0.0, 0.0,
                         (1.0, 0.8), (0.9, 0.7))
    assert b.slides.tolist() == [False, True, True, True]  # atan 0.9 = 41.99°
    assert b.rolls.tolist() == [False, False, False, True]  # atan(125/100) = 51.34°
    assert b.mu_rear[0][0] == pytest.approx(math.sqrt(0.81 - math.tan(math.radians(41.0)) ** 2))
    codes = b.state_codes(np.zeros(4, dtype=np.int8), (1, 2, 3, 4))
    assert codes.tolist() == [0, 3, 3, 4]
    # an axle off the ground (code 4 from the slip solve) outranks the slide (MODEL section 5, rule 1)
    assert b.state_codes(np.full(4, 4, dtype=np.int8), (1, 2, 3, 4)).tolist() == [4, 4, 4, 4]
    # the crab rule: a scrubbing rear (code 2) past t = μ_k,r = 0.7 (tan β = 0.7 at 35°) lets go
    c = oc.along_heading(1000.0, 300.0, 150.0, 100.0, 250.0, np.array([34.0, 36.0]), 90.0, 0.0, 0.0,
                         (1.0, 0.8), (0.9, 0.7))
    assert c.state_codes(np.array([2, 2], dtype=np.int8), (1, 2, 3, 4)).tolist() == [2, 3]


@settings(max_examples=examples(15))
@given(setup=rig_setups(), heading=st.floats(-180.0, 180.0), share=st.one_of(st.none(), st.floats(1.0, 99.0)),
       stiffness=st.sampled_from([math.inf, 20.0, 6.5]))
def test_any_valid_rig_gives_a_finite_consistent_sweep(setup, heading, share, stiffness):
    """Drawn rigs (conftest): every heading has finite angles with hold <= tip and wheel lift <= tip,
    the mirror headings agree, and the wheel loads at the file's pose sum to W cos β unless tipped
    (statics, Gillespie ch. 2)."""
    setup = replace(setup, rig=replace(setup.rig, roll_stiffness_front_pct=share),
                    terrain=replace(setup.terrain, heading_deg=heading))
    assume(stiffness > 3 * max(setup.grip.axle_mu()))
    m = model(setup, stiffness)
    headings = np.arange(0.0, 360.0, 30.0)
    tip, _ = m.tip(headings)
    lift, _ = m.wheel_lift(headings)
    hold, limit = m.hold(headings)
    assert np.all(np.isfinite(tip)) and np.all(np.isfinite(hold))
    assert np.all(hold <= tip + 1e-9) and np.all(np.nan_to_num(lift, nan=90.0) <= tip + 1e-9)
    mirror = (12 - np.arange(12)) % 12
    assert np.allclose(hold, hold[mirror], atol=1e-9) and np.array_equal(limit, limit[mirror])
    r = m.rig
    beta = abs(setup.terrain.slope_deg)
    wl = m.wheel_loads(beta, heading)
    if not bool(wl.tipped):
        assert float(np.sum(wl.as_array())) == pytest.approx(r.mass_g * math.cos(math.radians(beta)), rel=1e-9)
