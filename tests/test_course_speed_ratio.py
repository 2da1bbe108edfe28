"""The speed ratio K under load along a course walk: a fixed point, decided at the onset.

The walk solves each position's statics at ``K = g D_f(N_f)/D_r(N_r)`` with the loads ``N`` that
statics gives (MODEL §4), so the loads it reports must reproduce their own K. Every state is the
onset from an unwound driveline (MODEL §5: the rig set down, before any axle lets go): the
gripping solution at the K of its own loads. Where no axle saturates there, both grip, even where
an axle that had already let go would stay let go (a second self-consistent answer: the
persistence band's). Where the slip state flips with K no loads reproduce their own K: the
gripping solution's loads give a K at which an axle lets go, and the loads after it let go give a
K at which it would grip; the onset's state stands, flagged.

Sources named beside each check:
- K and the pitch term written out here from MODEL §4 and §6 (roll-out diameter
  ``D_i(N) = D_i − d_i (N − N_i,level)/100``, clamped at the tyre's free diameter);
- tests/course_reference.py, a per-position solver with different equations and root finder
  (3×3 equilibrium about the CG, Meriam & Kraige, *Engineering Mechanics: Statics*, ch. 3; brush
  model, Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3), for the gripping loads and
  the states;
- scipy.optimize.root (MINPACK hybrd) for the gripping loads that reproduce their own K.
"""

from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest
import scipy.optimize
from numpy.testing import assert_allclose

from slopetune.engine import load_setup
from slopetune.engine.contact_statics import solve_contacts
from slopetune.engine.course_file import load_course
from slopetune.engine.course_walk import walk_course, walk_span_mm
from slopetune.engine.traction import STATES
from slopetune.tui.cli import main

from course_reference import gripping_normals, solve_position

ROOT = Path(__file__).resolve().parent.parent
RIG = ROOT / "setups" / "marmot-overdrive.toml"
BRAMBLE = ROOT / "setups" / "course-bramble-steps.toml"
KESTREL = ROOT / "setups" / "course-kestrel-knuckle.toml"
POSITIONS = 2000  # as bench/bench_course.py; at this spacing some positions' state flips with K


class _SpeedRatio:
    """K and the pitch term ``(g − 1) r_f dφ/ds_r`` at given axle loads, from the setup's keys."""

    def __init__(self, setup):
        r = setup.rig
        self.weight = r.mass_g + sum(b.mass_g for b in r.ballast)
        # moments about the rear axle: W b = m f L + Σ m_i x_i; level front load W b/L (Gillespie ch. 2)
        moment = r.mass_g * r.front_bias_pct / 100.0 * r.wheelbase_mm + sum(i.mass_g * i.x_mm for i in r.ballast)
        self.level = (moment / r.wheelbase_mm, self.weight - moment / r.wheelbase_mm)
        d = setup.driveline
        reduction = lambda stages: math.prod(driven / driver for driver, driven in stages)  # noqa: E731
        self.gear = reduction(d.rear_stages) / reduction(d.front_stages)  # R_rear / R_front (MODEL §4)
        self.dia = (r.rolling_dia_front_mm, r.rolling_dia_rear_mm)
        self.loss = (r.rolling_dia_loss_front_mm_per_100g, r.rolling_dia_loss_rear_mm_per_100g)
        self.free = (r.tire_dia_front_mm, r.tire_dia_rear_mm)

    def __call__(self, n_f, n_r, pitch_rate):
        d_f, d_r = (np.minimum(self.dia[i] - self.loss[i] * (n - self.level[i]) / 100.0, self.free[i])
                    for i, n in enumerate((n_f, n_r)))
        return self.gear * d_f / d_r, (self.gear - 1.0) * d_f / 2.0 * pitch_rate


def _walk(course_path=BRAMBLE, stiffness=None):
    """The demo rig over a course at `POSITIONS` positions; `stiffness` replaces both axles' c."""
    setup = load_setup(RIG).setup
    if stiffness is not None:
        setup = dataclasses.replace(setup, grip=dataclasses.replace(
            setup.grip, slip_stiffness=stiffness, front_slip_stiffness=None, rear_slip_stiffness=None))
    course = load_course(course_path).course
    x0, x1 = walk_span_mm(setup, course)
    return walk_course(setup, rear_x_mm=np.linspace(x0, x1, POSITIONS), course=course)


def _args(walk, i):
    """The reference solver's pose arguments at position `i` (the walk's own geometry)."""
    p = walk.pose
    return (walk.setup.rig.mass_g + sum(b.mass_g for b in walk.setup.rig.ballast), p.front_contact_mm[i],
            p.rear_contact_mm[i], p.cg_mm[i], p.front_angle_deg[i], p.rear_angle_deg[i], p.pitch_deg[i])


def _reference_at(walk, i, speed, n_g, solver=solve_position):
    """The reference solver at position `i`, at K and the pitch term of the loads `n_g` (MODEL §4)."""
    grip = walk.setup.grip
    fs, fk, rs, rk = grip.axle_mu()
    c_f, c_r = grip.axle_stiffness()
    k, q = speed(n_g[0], n_g[1], walk.pose.pitch_rate_rad_per_mm[i])
    return solver(*_args(walk, i), (fs, fk), (rs, rk), c_f, c_r, k, q, walk.pose.path_ratio[i],
                  grip.rolling_resistance, walk.setup.terrain.accel_g)


def test_level_loads_are_those_worked_by_hand():
    """The written-out level loads agree with test_course_walk's hand figures (W 2438 g, b 186.15 mm)."""
    speed = _SpeedRatio(load_setup(RIG).setup)
    assert speed.weight == 2438.0
    assert_allclose(speed.level, (2438.0 * 186.15 / 313.0, 2438.0 - 2438.0 * 186.15 / 313.0), rtol=1e-4)
    assert_allclose(speed.gear, 40.0 / 38.0, rtol=1e-12)


@pytest.mark.parametrize("course_path, stiffness", [(BRAMBLE, None), (KESTREL, 200.0)])
def test_every_other_position_reproduces_its_own_speed_ratio(course_path, stiffness):
    """Everywhere the walk does not flag, its loads give back its K (MODEL §4, written out) and the
    statics solved again at that K give back its loads and state to 1e-8 of the weight: a fixed
    point, not a pass count. (Eight plain passes left some positions 2e-5 of the weight short.)
    With stiff tyres (c = 200) the loads swing more than K from pass to pass, so plain passes,
    even extrapolated, left about 50 positions of Kestrel Knuckle hundreds of grams off."""
    walk = _walk(course_path, stiffness)
    speed = _SpeedRatio(walk.setup)
    grip = walk.setup.grip
    fs, fk, rs, rk = grip.axle_mu()
    c_f, c_r = grip.axle_stiffness()
    p = walk.pose
    ok = np.isfinite(walk.front_normal_g) & np.isfinite(walk.rear_normal_g) & (p.path_ratio > 0)
    flagged = walk.no_fixed_point
    k, q = speed(walk.front_normal_g, walk.rear_normal_g, p.pitch_rate_rad_per_mm)
    assert_allclose(walk.speed_ratio[ok], k[ok], rtol=1e-9)  # flagged ones too: K at the loads shown
    again = solve_contacts(speed.weight, p.front_contact_mm, p.rear_contact_mm, p.cg_mm, p.front_angle_deg,
                           p.rear_angle_deg, p.pitch_deg, (fs, fk), (rs, rk), c_f, c_r, np.where(ok, k, 1.0),
                           np.where(ok, q, 0.0), np.where(ok, p.path_ratio, 1.0), grip.rolling_resistance,
                           walk.setup.terrain.accel_g)
    fixed = ok & ~flagged
    assert fixed.sum() > 0.9 * POSITIONS
    assert (again.traction.state[fixed] == walk.traction.state[fixed]).all()
    for a, b in ((again.front_normal_g, walk.front_normal_g), (again.rear_normal_g, walk.rear_normal_g)):
        assert np.max(np.abs(a - b)[fixed]) < 1e-8 * speed.weight
    # a flagged position, solved again at the K of its loads, comes out in another state
    assert (again.traction.state[ok & flagged] != walk.traction.state[ok & flagged]).all()


def test_a_state_that_flips_with_k_is_decided_at_the_onset():
    """Where no loads reproduce their own K, the walk gives the state of the gripping solution at
    the K of its own loads (MODEL §5 onset), found here with the independent reference solver and
    MINPACK: an axle lets go there, so the walk must show it letting go, with the loads that
    leave (reference, to 1e-7), and K at those loads. Solved again at that K, the reference grips
    differently: no loads reproduce their own K, as flagged."""
    walk = _walk()
    speed = _SpeedRatio(walk.setup)
    grip = walk.setup.grip
    fs, fk, rs, rk = grip.axle_mu()
    c_f, c_r = grip.axle_stiffness()
    flagged = np.flatnonzero(walk.no_fixed_point)
    assert flagged.size >= 1, "the demo walk no longer has a position whose state flips with K"
    for i in (flagged[0], flagged[-1]):
        rate, rho = walk.pose.pitch_rate_rad_per_mm[i], walk.pose.path_ratio[i]

        def solve(n_g, solver=solve_position):
            k, q = speed(n_g[0], n_g[1], rate)
            return solver(*_args(walk, i), (fs, fk), (rs, rk), c_f, c_r, k, q, rho, grip.rolling_resistance,
                          walk.setup.terrain.accel_g)

        shown = np.array([walk.front_normal_g[i], walk.rear_normal_g[i]])
        onset = scipy.optimize.root(lambda n_g: np.asarray(solve(n_g, gripping_normals)) - n_g, shown,
                                    method="hybr", options={"xtol": 1e-12})
        assert onset.success, onset.message
        expected = solve(onset.x)
        assert expected[0] in ("front", "rear", "both")  # at the onset an axle lets go
        assert STATES[walk.traction.state[i]] == expected[0]
        if expected[1] is not None:
            assert_allclose(shown, expected[1:3], rtol=1e-7)
        assert solve(shown)[0] != expected[0]  # after it let go, a fresh onset would not let it go


def test_two_self_consistent_answers_are_decided_at_the_onset():
    """At positions 470 and 471 (rear x about 291 mm, the front going up the first ledge) two
    answers reproduce their own K, both found here with the reference solver alone, from the
    level loads: the gripping solution at its own K (MINPACK) saturates no axle, so both grip; and
    plain passes N <- S(K(N)) reach the rear letting go, which stays let go at the K of the loads
    it leaves. MODEL §5 decides at the onset from a gripping start (the second answer is a scrub
    that has already started: the persistence band), so the walk must say both grip, with the
    gripping loads (to 1e-7) and their K, unflagged. Resolving to the letting-go answer fails."""
    walk = _walk()
    speed = _SpeedRatio(walk.setup)
    level = np.array(speed.level)
    for i in (470, 471):
        onset = scipy.optimize.root(lambda n_g: np.asarray(_reference_at(walk, i, speed, n_g, gripping_normals)) - n_g,
                                    level, method="hybr", options={"xtol": 1e-12})
        assert onset.success, onset.message
        gripping = _reference_at(walk, i, speed, onset.x)
        assert gripping[0] == "none"  # nothing saturates at the gripping solution's own K
        assert_allclose(gripping[1:3], onset.x, rtol=1e-9)

        n_g = level
        for _ in range(12):  # plain passes from the level loads, until the loads give back their K
            state, *after = _reference_at(walk, i, speed, n_g)[:3]
            if np.allclose(after, n_g, rtol=1e-12):
                break
            n_g = np.asarray(after)
        else:
            pytest.fail(f"position {i}: plain passes from the level loads do not settle")
        assert state in ("front", "rear")  # an axle that has let go stays let go at its own K
        assert not np.allclose(n_g, onset.x, rtol=1e-3)  # a second answer, not the first again

        assert STATES[walk.traction.state[i]] == "none"
        assert_allclose((walk.front_normal_g[i], walk.rear_normal_g[i]), onset.x, rtol=1e-7)
        assert_allclose(walk.speed_ratio[i], speed(*onset.x, walk.pose.pitch_rate_rad_per_mm[i])[0], rtol=1e-9)
        assert not walk.no_fixed_point[i]


def test_walk_json_names_the_positions_with_no_steady_speed_ratio(capsys):
    """`walk --json`: `no_fixed_point` per position and `no_fixed_point_count`. Checked with the
    reference solver at the K of each row's own loads (MODEL §4, written out here): at a flagged
    row a fresh onset gives another state than the row's, at the rows either side the same."""
    assert main(["walk", str(RIG), "--course", str(KESTREL), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    rows = data["positions"]
    flags = [row["no_fixed_point"] for row in rows]
    assert all(isinstance(f, bool) for f in flags)
    assert data["no_fixed_point_count"] == sum(flags) >= 1
    setup = load_setup(RIG).setup
    walk = walk_course(setup, course=load_course(KESTREL).course)
    assert flags == walk.no_fixed_point.tolist()
    speed = _SpeedRatio(setup)
    flagged = flags.index(True)
    for i in (flagged - 1, flagged, flagged + 1):
        n_g = np.array([rows[i]["front_normal_g"], rows[i]["rear_normal_g"]])
        fresh = _reference_at(walk, i, speed, n_g)[0]
        assert (fresh != rows[i]["slipping"]) == flags[i], (i, fresh, rows[i]["slipping"])
