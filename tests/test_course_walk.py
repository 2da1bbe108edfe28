"""Course walk (engine.course_walk) and `slopetune walk`: uniform ground, a crest, events, CLI.

Sources named beside each check:
- on a straight incline the walk must give what the uniform-slope model gives (`engine.analyse`,
  Gillespie, *Fundamentals of Vehicle Dynamics*, ch. 2, and the wind-up rule of MODEL §5);
- planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics:
  Statics*, ch. 3) and Coulomb limits (Serway & Beichner, 5th ed., ch. 5), written out here;
- states before, on and after a change of ground worked by hand from the geometry and the
  uniform-slope rules, and the events placed against them.
"""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine import Course, analyse, load_setup
from slopetune.engine.course_file import load_course
from slopetune.engine.course_walk import walk_course
from slopetune.engine.traction import BOTH, FRONT, LIFTED, REAR
from slopetune.tui.cli import main

from conftest import rig_setups

ROOT = Path(__file__).resolve().parent.parent
DEMOS = sorted((ROOT / "setups").glob("course-*.toml"))
RIG = ROOT / "setups" / "marmot-overdrive.toml"


def _with_course(setup, points, belly=40.0):
    return dataclasses.replace(setup, course=Course("test", tuple(map(tuple, points)), belly))


@given(setup=rig_setups(), slope=st.floats(-55.0, 55.0))
def test_walk_on_a_straight_incline_is_the_uniform_model(setup, slope):
    """Both wheels on one incline: same state, loads and forces as engine.analyse, to 1e-9 of the
    weight (the contact statics and the pose both reduce exactly)."""
    setup = _with_course(setup, [])
    a = analyse(setup, [slope])
    s = a.sweep
    t = s.traction
    w = a.rig.mass_g
    clear = min(abs(s.front_normal_g[0]), abs(s.rear_normal_g[0]))
    if not math.isnan(t.reserve_g[0]):
        clear = min(clear, abs(t.reserve_g[0]))
    fs, _, rs, _ = setup.grip.axle_mu()
    od = a.overdrive.overdriven_axle
    if od is not None:  # the fast-first margin (engine.traction.fast_slips_first)
        sign = 1.0 if od == "front" else -1.0
        clear = min(clear, abs(sign * (fs * s.front_normal_g[0] - rs * s.rear_normal_g[0]) - s.required_g[0]))
    assume(clear > 1e-6 * w)  # not on a boundary, where rounding may pick either state

    th = math.radians(slope)
    length = 20.0 * a.rig.wheelbase_mm
    setup = _with_course(setup, [[0.0, 0.0], [length, length * math.tan(th)]])
    walk = walk_course(setup, rear_x_mm=[0.45 * length])
    assert walk.traction.state.tolist() == t.state.tolist()
    tol = dict(rtol=1e-9, atol=1e-9 * w)
    assert_allclose(walk.pose.pitch_deg, slope, atol=1e-9)
    assert_allclose(walk.front_normal_g, s.front_normal_g, **tol)
    assert_allclose(walk.rear_normal_g, s.rear_normal_g, **tol)
    for name in ("front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        assert_allclose(getattr(walk.traction, name), getattr(t, name), equal_nan=True, err_msg=name, **tol)


def test_crest_front_on_flat_rear_on_a_steep_face():
    """Rear wheel on a 50° face, front on the flat top (a crest): the forces satisfy Σx, Σz and
    Σ moments about the CG (Meriam & Kraige ch. 3), the slipping axle carries μ_k N and the
    gripping one stays within μ_s N (Serway & Beichner ch. 5)."""
    setup = load_setup(ROOT / "setups" / "marmot-overdrive.toml").setup.rigid_tyres()  # Coulomb limits
    face = 50.0
    top = 300.0 * math.tan(math.radians(face))
    setup = _with_course(setup, [[0.0, 0.0], [400.0, 0.0], [700.0, top], [1500.0, top]])
    walk = walk_course(setup, 1.0)
    p, t = walk.pose, walk.traction
    crest = np.flatnonzero((np.abs(p.rear_angle_deg - face) < 1e-9) & (np.abs(p.front_angle_deg) < 1e-9))
    assert crest.size > 20
    fs, fk, rs, rk = setup.grip.axle_mu()
    w = walk.setup.rig.mass_g + sum(b.mass_g for b in walk.setup.rig.ballast)
    crr = setup.grip.rolling_resistance
    for i in crest[:: max(1, crest.size // 10)]:
        state = int(t.state[i])
        assert state in (FRONT, REAR, BOTH)
        total = np.array([0.0, -w])
        moment = 0.0
        for contact, alpha, n_g, f_g in ((p.front_contact_mm[i], p.front_angle_deg[i], walk.front_normal_g[i],
                                          t.front_force_g[i]),
                                         (p.rear_contact_mm[i], p.rear_angle_deg[i], walk.rear_normal_g[i],
                                          t.rear_force_g[i])):
            a = math.radians(alpha)
            n, tan = np.array([-math.sin(a), math.cos(a)]), np.array([math.cos(a), math.sin(a)])
            force = n_g * n + (f_g - crr * n_g) * tan
            arm = contact - p.cg_mm[i]
            total += force
            moment += arm[0] * force[1] - arm[1] * force[0]
        if state == BOTH:
            continue  # no equilibrium: the rig stalls or slides back
        assert_allclose(total, 0.0, atol=1e-8 * w)
        assert abs(moment) < 1e-8 * w * 300.0
        # the axle that lets go slides forward if it is the faster one here (K/ρ, MODEL §6), else back
        sign = 1.0 if walk.overdriven_here[i] == ("front" if state == FRONT else "rear") else -1.0
        slipping, gripping = ((t.front_force_g[i], sign * fk * walk.front_normal_g[i]),
                              (t.rear_force_g[i], rs * walk.rear_normal_g[i]))
        if state == REAR:
            slipping = (t.rear_force_g[i], sign * rk * walk.rear_normal_g[i])
            gripping = (t.front_force_g[i], fs * walk.front_normal_g[i])
        assert_allclose(slipping[0], slipping[1], rtol=1e-9)
        assert abs(gripping[0]) <= gripping[1] * (1 + 1e-12)


def test_flat_to_steep_ramp_changes_state_only_in_the_corner_window_worked_by_hand():
    """Worked by hand: flat ground, a concave corner at x = 1000 mm, then a straight 50° ramp.

    Rig: 2000 g, L 300, 50 % bias, h 60, tyres 110 mm (r 55), no overdrive, μ_s 1.0, no rolling
    resistance or throttle. A wheel of radius r leaves the flat when its centre is r·tan(θ/2) =
    55·tan 25° = 25.647 mm short of the corner (the offset lines y = r and y = (x − 1000) tan θ +
    r/cos θ meet there), so the front leaves it at rear x = 1000 − 25.647 − 300 = 674.353 and the
    rear at 974.353 (Serra's disc dilation, by hand). Before that the rig stands level: F_req = 0,
    it holds (state "none"). Once both wheels are on the ramp it is the uniform slope: it holds
    only while W sin θ <= μ_s W cos θ (Gillespie ch. 2; Serway & Beichner ch. 5), and tan 50° =
    1.192 > 1.0, so both axles slip. The front never lifts: its lift angle atan(150/60) = 68.2°.
    So the walk starts "none", ends "both", and every state change lies between 674.353 and 974.353.
    """
    from slopetune.engine import Driveline, Grip, Rig, Setup, Terrain

    th = math.radians(50.0)
    setup = Setup(name="corner rig", rig=Rig(2000.0, 300.0, 50.0, 60.0, 240.0, 110.0, 110.0, ()),
                  driveline=Driveline(0.0), grip=Grip(1.0, 0.8, 0.0), terrain=Terrain(0.0, 0.0))
    setup = _with_course(setup, [[0.0, 0.0], [1000.0, 0.0], [1600.0, 600.0 * math.tan(th)]])
    walk = walk_course(setup, 1.0)
    x = walk.rear_x_mm
    lo, hi = 1000.0 - 55.0 * math.tan(th / 2) - 300.0, 1000.0 - 55.0 * math.tan(th / 2)
    assert (lo, hi) == pytest.approx((674.353, 974.353), abs=1e-3)
    assert x[0] < lo - 100 and x[-1] > hi + 100
    before, after = x < lo - 1e-6, x > hi + 1e-6
    assert set(np.asarray(walk.slipping)[before]) == {"none"}
    assert set(np.asarray(walk.slipping)[after]) == {"both"}
    assert all(up is None for up in walk.lifted)
    kinds = [e.kind for e in walk.events]
    assert "cannot_hold" in kinds
    for e in walk.events:
        assert lo - 1e-6 <= e.rear_x_mm <= hi + 1.0 + 1e-6, e  # first position in the new state


def test_kestrel_knuckle_states_worked_by_hand():
    """Worked by hand for the demo file (MODEL §2, §3, §5 rule; Gillespie ch. 2; Shigley ch. 13).

    Effective rig with its ballast: W = 2380 + 96 − 38 = 2438 g,
    b = (2380·0.575·313 + 96·313 − 38·120)/2438 = 453828.5/2438 = 186.15 mm,
    h = (2380·88 + 96·40 − 38·45)/2438 = 211570/2438 = 86.78 mm. Overdrive k = (40/13)/(38/13)·114/112
    = 1.071: the front is the fast axle. μ_s,f 1.05, μ_k,f 0.85, μ_s,r 1.0, μ_k,r 0.8, c_rr 0.03.
    Per unit W:
    - level start: N_f = 186.15/313 = 0.5947, N_r = 0.4053, F_req = 0.03; μ_s,f N_f − μ_s,r N_r =
      0.6244 − 0.4053 = 0.219 > F_req, so the slow rear lets go first (dragged at 0.8·0.4053 = 0.324);
      the front carries 0.03 + 0.324 = 0.354 < 0.624: state "rear".
    - ramp, atan(213/400) = 28.03° (cos 0.8827, sin 0.4700): N_f = (186.15·0.8827 − 86.78·0.4700)/313
      = 0.3946, N_r = 0.4881, F_req = 0.4700 + 0.03·0.8827 = 0.4965; 0.4143 − 0.4881 = −0.074 < F_req,
      so the overdriven front lets go (carries 0.85·0.3946 = 0.3354); the rear carries
      0.4965 − 0.3354 = 0.1611 < 0.4881: state "front", a handover between the two.
    - face, atan(314/220) = 55.0°: even all the grip, at most 1.05 W cos θ, is short of
      W (sin θ + 0.03 cos θ), since tan 55° = 1.43 > 1.02: both slip ("cannot_hold" before it).
    """
    setup = load_setup(RIG).setup.rigid_tyres()  # worked by hand with the rigid rule on the tyre diameters
    walk = walk_course(setup, 5.0, course=load_course(ROOT / "setups" / "course-kestrel-knuckle.toml").course)
    p = walk.pose
    face, ramp = math.degrees(math.atan2(314, 220)), math.degrees(math.atan2(213, 400))
    on_face = (np.abs(p.front_angle_deg - face) < 1e-6) & (np.abs(p.rear_angle_deg - face) < 1e-6)
    on_ramp = (np.abs(p.front_angle_deg - ramp) < 1e-6) & (np.abs(p.rear_angle_deg - ramp) < 1e-6)
    level = (np.abs(p.front_angle_deg) < 1e-9) & (np.abs(p.rear_angle_deg) < 1e-9) & (walk.rear_x_mm < 400)
    assert on_face.any() and on_ramp.any() and level.any()
    slipping = np.asarray(walk.slipping)
    assert set(slipping[level]) == {"rear"}
    assert set(slipping[on_ramp]) == {"front"}
    assert set(slipping[on_face]) == {"both"}
    first_ramp, first_face = walk.rear_x_mm[on_ramp][0], walk.rear_x_mm[on_face][0]
    kinds_before = lambda x_mm: {e.kind for e in walk.events if e.rear_x_mm <= x_mm}  # noqa: E731
    assert "handover" in kinds_before(first_ramp)
    assert "cannot_hold" in kinds_before(first_face)


def test_positions_with_no_ground_for_the_front_are_lifted():
    """A 400 mm front tyre, a 40 mm rear one, and a 900 mm wall 80 mm ahead of the rear axle: the
    front tyre's centre curve above the rear axle (900 + √(200² − 80²) = 1083 mm) is higher than
    the rear centre plus the wheelbase (20 + 313), so no front position exists there."""
    setup = load_setup(ROOT / "setups" / "marmot-overdrive.toml").setup
    setup = setup.with_value("rig.tire_dia_front_mm", 400.0).with_value("rig.tire_dia_rear_mm", 40.0)
    setup = _with_course(setup, [[0.0, 0.0], [500.0, 0.0], [500.001, 900.0], [1500.0, 900.0]])
    walk = walk_course(setup, rear_x_mm=[-400.0, 420.0])
    assert walk.pose.placed.tolist() == [True, False]
    assert walk.traction.state[1] == LIFTED and walk.lifted[1] == "front"
    assert math.isnan(walk.pose.pitch_deg[1])


# ----- the command ----------------------------------------------------------------------------

def test_walk_text_reads_at_80_columns(capsys):
    code = main(["walk", str(RIG), "--course", str(ROOT / "setups" / "course-kestrel-knuckle.toml")])
    out = capsys.readouterr().out
    assert code == 0
    assert max(len(line) for line in out.splitlines()) <= 80
    assert "handover" in out and "cannot hold" in out and "belly touches" in out
    assert "wind-up reverses" in out and "Path ratio" in out and "hands clear" in out


def test_walk_json(capsys):
    path = ROOT / "setups" / "course-bramble-steps.toml"
    assert main(["walk", str(RIG), "--course", str(path), "--json", "--step", "10"]) == 0
    data = json.loads(capsys.readouterr().out)
    walk = walk_course(load_setup(RIG).setup, 10.0, course=load_course(path).course)
    assert len(data["positions"]) == len(walk)
    assert data["positions"][3]["rear_x_mm"] == pytest.approx(30.0)
    assert [e["kind"] for e in data["events"]] == [e.kind for e in walk.events]
    assert {"pitch_deg", "front_angle_deg", "rear_angle_deg", "front_normal_g", "rear_force_g", "slipping",
            "belly_touch", "path_ratio", "front_grip_used", "rear_grip_used", "front_slip_pct", "rear_slip_pct",
            "speed_ratio"} <= set(data["positions"][0])
    assert {row["slipping"] for row in data["positions"]} <= {"none", "front", "rear", "both", "lifted", "binds",
                                                              "outside"}


@pytest.mark.parametrize("args, words", [
    (["setups/marmot-stock.toml"], "no course to walk"),
    (["setups/course-bramble-steps.toml"], "a course file"),
    (["setups/marmot-stock.toml", "--course", "setups/marmot-overdrive.toml"], "not a course file"),
    (["setups/marmot-stock.toml", "--course", "setups/course-bramble-steps.toml", "--step", "0"], "--step"),
    (["setups/marmot-stock.toml", "--course", "setups/course-bramble-steps.toml", "--step", "nan"], "--step"),
    (["setups/marmot-stock.toml", "--course", "setups/course-bramble-steps.toml", "--step", "1e-6"], "positions"),
    (["setups/marmot-stock.toml", "--course", "setups/course-bramble-steps.toml", "--step", "5e-324"], "positions"),
    (["no-such-file.toml"], "no such file"),
])
def test_walk_bad_input_is_one_line_exit_2(args, words, capsys, monkeypatch):
    """Issue 12 item 6 (a subnormal step) and the course-file mix-ups: one line, exit 2."""
    monkeypatch.chdir(ROOT)
    assert main(["walk", *args]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and words in err


def _course_file(tmp_path, points, belly=44, name="c.toml"):
    path = tmp_path / name
    path.write_text(f"schema = 1\n\n[course]\nname = \"test\"\npoints_mm = {points}\n"
                    f"belly_clearance_mm = {belly}\n")
    return path


def test_course_shorter_than_the_wheelbase_names_the_field(tmp_path, capsys):
    short = _course_file(tmp_path, "[[0, 0], [200, 0]]", name="short.toml")
    assert main(["walk", str(RIG), "--course", str(short)]) == 2
    err = capsys.readouterr().err
    assert "course.points_mm" in err and "short.toml:" in err


@pytest.mark.parametrize("points, belly, words", [
    ("[[0, 0], [1e308, 0]]", 44, "coordinate"),
    ("[[-1.7e308, 0], [0, 1e308]]", 44, "coordinate"),
    ("[[0, 0], [1000, 0]]", 1e9, "belly_clearance_mm"),
    ("[[0, 0], [1000, 0]]", 0, "belly_clearance_mm"),
])
def test_absurd_courses_are_refused_in_one_line(tmp_path, capsys, points, belly, words):
    """Issue 12 items 6 and 7: coordinates near ±1e308 and an unbounded belly clearance are
    refused by the loader (one line naming the key, exit 2) before any arithmetic."""
    path = _course_file(tmp_path, points, belly)
    assert main(["walk", str(RIG), "--course", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and words in err and "c.toml:" in err


def test_step_longer_than_the_course_says_so(capsys):
    code = main(["walk", str(RIG), "--course", str(ROOT / "setups" / "course-kestrel-knuckle.toml"),
                 "--step", "5000"])
    captured = capsys.readouterr()
    assert code == 0 and "longer than" in captured.err and "1 positions" in captured.out


def test_a_course_inside_the_setup_still_walks(tmp_path, capsys):
    """A [course] table inside a setup file (format 1 as before) walks without --course, and
    gives the same walk as the same table in a course file."""
    course_text = (ROOT / "setups" / "course-kestrel-knuckle.toml").read_text()
    table = course_text[course_text.index("[course]"):]
    inside = tmp_path / "with-course.toml"
    inside.write_text(RIG.read_text() + "\n" + table)
    assert main(["walk", str(inside), "--json"]) == 0
    a = json.loads(capsys.readouterr().out)
    assert main(["walk", str(RIG), "--course", str(ROOT / "setups" / "course-kestrel-knuckle.toml"), "--json"]) == 0
    b = json.loads(capsys.readouterr().out)
    assert a["positions"] == b["positions"] and a["events"] == b["events"]


# ----- path ratio on the demo course, a tyre in a V, memory ---------------------------------------

def test_kestrel_ramp_foot_kinematics_worked_by_hand():
    """The demo rig on Kestrel Knuckle with the rear on the flat and the front on the 28.03° ramp
    (atan(213/400)), worked by hand (MODEL §4 and §6; a rigid link's ends have equal velocity
    components along it, Meriam & Kraige, *Dynamics*, ch. 5):
    rear centre (x, 56); the front centre on the line 57 mm above the ramp, D = √(313² + 1²) from
    it; ψ its direction; ρ = cos ψ / cos(α − ψ); dψ/ds_r = ρ sin(α − ψ) + sin ψ, over D;
    g = 40/38, K = g·114/112 = 1.07143; s_f/s_r = (K + (g − 1)·57·dψ/ds_r)/ρ.
    At x = 100: ψ = 2.80°, ρ = 1.1042 > K, dψ/ds_r = 0.00166 /mm, s_f/s_r = 0.9749: the front,
    overdriven by its gears, is kinematically underdriven here, so the rear is the faster axle
    (the walk before the path ratio called this stretch a handover to the front). At x = 300:
    ψ = 20.80°, ρ = 0.9423, s_f/s_r = 1.1418: the front is the faster axle."""
    setup = load_setup(RIG).setup.rigid_tyres()  # tyre diameters: K = 1.07143 as worked above
    walk = walk_course(setup, rear_x_mm=[100.0, 300.0],
                       course=load_course(ROOT / "setups" / "course-kestrel-knuckle.toml").course)
    alpha = math.atan2(213.0, 400.0)
    g = 40.0 / 38.0
    k = g * 114.0 / 112.0
    reach = math.hypot(313.0, 1.0)
    u = np.array([math.cos(alpha), math.sin(alpha)])
    p0 = np.array([400.0 - 57.0 * math.sin(alpha), 57.0 * math.cos(alpha)])  # offset line through the foot
    expected = {100.0: (1.1042, 0.9749, "rear"), 300.0: (0.9423, 1.1418, "front")}
    for i, x in enumerate((100.0, 300.0)):
        d = p0 - np.array([x, 56.0])
        b, c = 2.0 * (d @ u), d @ d - reach ** 2
        front = p0 + (-b + math.sqrt(b * b - 4.0 * c)) / 2.0 * u
        psi = math.atan2(front[1] - 56.0, front[0] - x)
        rho = math.cos(psi) / math.cos(alpha - psi)
        rate = (rho * math.sin(alpha - psi) + math.sin(psi)) / reach
        ratio = (k + (g - 1.0) * 57.0 * rate) / rho
        assert walk.pose.front_angle_deg[i] == pytest.approx(math.degrees(alpha))
        assert_allclose(walk.path_ratio[i], rho, rtol=1e-9)
        assert_allclose(walk.mismatch[i], ratio, rtol=1e-9)
        assert (rho, ratio) == pytest.approx(expected[x][:2], abs=1e-4)
        assert walk.overdriven_here[i] == expected[x][2]


def test_a_tyre_in_a_v_is_outside_the_model_and_said_so():
    """Issue 11 item 4: a symmetric 45° notch narrower than the tyre. Where the rear tyre sits in
    it (both faces touch, x = 150), the walk gives no forces, the state "outside", and an event that
    says so; a position either side is solved normally."""
    setup = load_setup(RIG).setup
    course = Course("notch", ((0.0, 0.0), (100.0, 0.0), (150.0, -50.0), (200.0, 0.0), (900.0, 0.0)), 44.0)
    walk = walk_course(setup, 5.0, course=course)
    at = int(np.flatnonzero(np.isclose(walk.rear_x_mm, 150.0))[0])
    assert walk.slipping[at] == "outside" and walk.in_v[at] == "rear"
    assert math.isnan(walk.front_normal_g[at]) and math.isnan(walk.traction.rear_force_g[at])
    assert walk.slipping[at - 1] != "outside" and walk.slipping[at + 1] != "outside"
    texts = [e.text for e in walk.events if e.index == at]
    assert any("rear tyre sits in a V" in t for t in texts)


def test_walk_memory_follows_the_course_not_positions_times_points():
    """Issue 12 item 7: a 10,000-point course (0.1 mm apart) walked every 2 mm: the traced peak
    stays under 40 MB (before chunking, positions × points in view made it hundreds of MB), and
    a walk with four times the positions peaks within 2× of it (chunks, not the product)."""
    import tracemalloc

    setup = load_setup(RIG).setup
    x = np.arange(10_000) * 0.1
    z = 20.0 * np.sin(x / 37.0) + 5.0 * np.sin(x / 3.1)
    course = Course("fine", tuple(zip(x.tolist(), z.tolist())), 44.0)
    peaks = []
    for step in (8.0, 2.0):
        tracemalloc.start()
        walk = walk_course(setup, step, course=course)
        peaks.append(tracemalloc.get_traced_memory()[1])
        tracemalloc.stop()
        assert len(walk) > 80
    assert peaks[1] < 40e6
    assert peaks[1] < 2.0 * peaks[0]


def test_speed_ratio_follows_the_loads_through_the_rolling_diameters(monkeypatch):
    """MODEL §4: with a rear tyre that loses 0.5 mm of rolling diameter per 100 g, K at each
    position is g·D_f(N_f)/D_r(N_r) with D_i(N) = D_i − d_i (N − N_i,level)/100 at that position's
    own loads (written out here; level loads W b/L and W − W b/L of the effective rig, worked by
    hand in test_kestrel_knuckle_states_worked_by_hand: b = 186.15 mm of 313)."""
    import slopetune.engine.course_walk as cw

    real = cw._tyre_keys
    monkeypatch.setattr(cw, "_tyre_keys", lambda s: ((114.0, 112.0), (0.0, 0.5), (20.0, 20.0)))
    setup = load_setup(RIG).setup
    walk = cw.walk_course(setup, 20.0, course=load_course(ROOT / "setups" / "course-kestrel-knuckle.toml").course)
    w, b = 2438.0, 453828.5 / 2438.0
    level_r = w - w * b / 313.0
    d_r = np.minimum(112.0 - 0.5 * (walk.rear_normal_g - level_r) / 100.0, 112.0)
    k = (40.0 / 38.0) * 114.0 / d_r
    ok = np.isfinite(walk.rear_normal_g)
    assert ok.sum() > 30
    assert_allclose(walk.speed_ratio[ok], k[ok], rtol=1e-6)  # the fixed point has converged
    assert np.ptp(walk.speed_ratio[ok]) > 0.005  # the loads really move K along the course
    assert real is not None
