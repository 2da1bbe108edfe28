"""Course walk (engine.course_walk) and `slopetune walk`: uniform ground, a crest, events, CLI.

Sources named beside each check:
- on a straight incline the walk must give what the uniform-slope model gives (`engine.analyse`,
  Gillespie, *Fundamentals of Vehicle Dynamics*, ch. 2, and the wind-up rule of MODEL §5);
- planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics:
  Statics*, ch. 3) and Coulomb limits (Serway & Beichner, 5th ed., ch. 5), written out here;
- events are defined as the positions where a per-position state changes: recomputed here from
  the per-position arrays with a plain loop.
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
from slopetune.engine.course_walk import walk_course
from slopetune.engine.traction import BOTH, FRONT, LIFTED, REAR
from slopetune.tui.cli import main

from conftest import rig_setups

ROOT = Path(__file__).resolve().parent.parent
DEMOS = sorted((ROOT / "setups").glob("course-*.toml"))


def _with_course(setup, points, belly=40.0, load="climb"):
    setup = setup.with_value("terrain.load", load)
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
    setup = load_setup(ROOT / "setups" / "marmot-overdrive.toml").setup
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
        slipping, gripping = ((t.front_force_g[i], fk * walk.front_normal_g[i]),
                              (t.rear_force_g[i], rs * walk.rear_normal_g[i]))
        if state == REAR:  # the rear is dragged back, the overdriven front grips
            slipping = (t.rear_force_g[i], -rk * walk.rear_normal_g[i])
            gripping = (t.front_force_g[i], fs * walk.front_normal_g[i])
        assert_allclose(slipping[0], slipping[1], rtol=1e-9)
        assert abs(gripping[0]) <= gripping[1] * (1 + 1e-12)


def _changes(values):
    return [i for i in range(1, len(values)) if values[i] != values[i - 1]]


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.name)
def test_events_are_where_the_states_change(path):
    """Each event sits at the first position of a new state, and every change has its event
    (definition of the event list, recomputed with a plain loop)."""
    walk = walk_course(load_setup(path).setup, 2.0)
    by_kind = {}
    for e in walk.events:
        by_kind.setdefault(e.kind, []).append(e.index)
        assert walk.rear_x_mm[e.index] == e.rear_x_mm
    lifted = walk.lifted
    lift_changes = _changes(lifted)
    assert sorted(by_kind.get("front_lifts", []) + by_kind.get("rear_lifts", [])
                  + by_kind.get("front_down", []) + by_kind.get("rear_down", [])) == sorted(
        [i for i in lift_changes if lifted[i]] + [i for i in lift_changes if lifted[i - 1]])
    grounded = [i for i, up in enumerate(lifted) if up is None]
    slips = [walk.slipping[i] for i in grounded]
    slip_changes = [grounded[k] for k in _changes(slips)]
    slip_kinds = ("handover", "hand_back", "cannot_hold", "holds_again")
    assert sorted(i for k in slip_kinds for i in by_kind.get(k, [])) == slip_changes
    for i in by_kind.get("cannot_hold", []):
        assert walk.slipping[i] == "both"
    for i in by_kind.get("handover", []):
        assert walk.slipping[i] == walk.overdriven
    touch = walk.belly_touch.tolist()
    assert sorted(by_kind.get("belly_touches", []) + by_kind.get("belly_clear", [])) == _changes(touch)
    for i in by_kind.get("belly_touches", []):
        assert touch[i] and not touch[i - 1]


def test_demo_courses_show_what_they_were_built_for():
    """Kestrel Knuckle: handover on the ramp, the belly on the knuckle, and no hold on the 55° face,
    which is steeper than the uniform model's max grade (engine.analyse); Bramble Steps: the
    front spins up the ledges and the rig high-centres on the boulder."""
    kinds = {}
    for path in DEMOS:
        walk = walk_course(load_setup(path).setup)
        kinds[path.stem] = {e.kind for e in walk.events}
    assert {"handover", "cannot_hold", "belly_touches"} <= kinds["course-kestrel-knuckle"]
    assert {"handover", "belly_touches"} <= kinds["course-bramble-steps"]
    setup = load_setup(ROOT / "setups" / "course-kestrel-knuckle.toml").setup
    face, ramp = math.degrees(math.atan2(314, 220)), math.degrees(math.atan2(213, 400))  # from the file
    a = analyse(setup, [face, ramp])
    assert a.angles_deg["max_grade"] < face
    walk = walk_course(setup, 5.0)
    p = walk.pose
    on_face = (np.abs(p.front_angle_deg - face) < 1e-6) & (np.abs(p.rear_angle_deg - face) < 1e-6)
    on_ramp = (np.abs(p.front_angle_deg - ramp) < 1e-6) & (np.abs(p.rear_angle_deg - ramp) < 1e-6)
    assert on_face.any() and on_ramp.any()
    assert set(walk.traction.state[on_face].tolist()) == {int(a.sweep.traction.state[0])} == {BOTH}
    assert set(walk.traction.state[on_ramp].tolist()) == {int(a.sweep.traction.state[1])}


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
    code = main(["walk", str(ROOT / "setups" / "course-kestrel-knuckle.toml")])
    out = capsys.readouterr().out
    assert code == 0
    assert max(len(line) for line in out.splitlines()) <= 80
    assert "handover" in out and "cannot hold" in out and "belly touches" in out


def test_walk_json(capsys):
    path = ROOT / "setups" / "course-bramble-steps.toml"
    assert main(["walk", str(path), "--json", "--step", "10"]) == 0
    data = json.loads(capsys.readouterr().out)
    walk = walk_course(load_setup(path).setup, 10.0)
    assert len(data["positions"]) == len(walk)
    assert data["positions"][3]["rear_x_mm"] == pytest.approx(30.0)
    assert [e["kind"] for e in data["events"]] == [e.kind for e in walk.events]
    assert {"pitch_deg", "front_angle_deg", "rear_angle_deg", "front_normal_g", "rear_force_g", "slipping",
            "belly_touch"} <= set(data["positions"][0])


@pytest.mark.parametrize("args, words", [
    (["setups/marmot-stock.toml"], "no [course]"),
    (["setups/course-bramble-steps.toml", "--step", "0"], "--step"),
    (["setups/course-bramble-steps.toml", "--step", "nan"], "--step"),
    (["setups/course-bramble-steps.toml", "--step", "1e-6"], "positions"),
    (["no-such-file.toml"], "no such file"),
])
def test_walk_bad_input_is_one_line_exit_2(args, words, capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    assert main(["walk", *args]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and words in err


def test_course_shorter_than_the_wheelbase_names_the_field(tmp_path, capsys):
    text = (ROOT / "setups" / "course-bramble-steps.toml").read_text()
    start = text.index("points_mm = [")
    end = text.index("]\n", text.index("[1120, 92]")) + 2
    short = tmp_path / "short.toml"
    short.write_text(text[:start] + "points_mm = [[0, 0], [200, 0]]\n" + text[end:])
    assert main(["walk", str(short)]) == 2
    err = capsys.readouterr().err
    assert "course.points_mm" in err and "short.toml:" in err
