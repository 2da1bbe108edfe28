"""Tyre slip through the whole slope analysis: named angles, roll-out under load, throttle angles,
the persistence band and `report --json` (MODEL sections 3, 4 and 5).

Sources named beside each check:
- T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, 1992, ch. 2: grade loads (moments about the
  rear contact) and the load a steady climb needs.
- H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2: brush model.
- Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5: static and kinetic
  friction (μ_k < μ_s is what lets a scrub outlast its onset).
- MODEL section 5's persistence example (rigid limit, demo rig, μ 1.0/0.8): onset 6.97°, a rear
  scrub lasts to about 10.2°, a front scrub down to about 2.7°.
Independent solvers: `scipy.optimize.brentq` on the grade-load equations written out here, and the
per-slope brentq slip solver of `test_tyre_slip.reference_state`.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import pytest
from scipy.optimize import brentq

from slopetune.engine import Grip, analyse, load_setup
from slopetune.engine.overdrive import rolling_dia_under_load_mm

from test_tyre_slip import reference_state

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"


def _demo(stiffness=math.inf, crr=0.0, tyre_dias=True, **grip):
    s = load_setup(DEMO).setup
    if tyre_dias:
        s = s.on_tyre_diameters()
    return replace(s, grip=Grip(1.0, 0.8, crr, slip_stiffness=stiffness, **grip))


def _grade(setup, theta_deg, accel_g=0.0):
    """(W, N_f, N_r, F_req) from the grade-load equations (Gillespie ch. 2), written out."""
    r = setup.rig
    w = r.mass_g + sum(i.mass_g for i in r.ballast)
    b = (r.mass_g * r.front_bias_pct / 100 * r.wheelbase_mm + sum(i.mass_g * i.x_mm for i in r.ballast)) / w
    h = (r.mass_g * r.cg_height_mm + sum(i.mass_g * i.z_mm for i in r.ballast)) / w
    t = math.radians(theta_deg)
    nf = w * (b * math.cos(t) - h * (math.sin(t) + accel_g)) / r.wheelbase_mm
    nr = w * math.cos(t) - nf
    return w, nf, nr, w * (math.sin(t) + setup.grip.rolling_resistance * math.cos(t) + accel_g)


# --- the persistence band (MODEL section 5) ----------------------------------------------------

def test_persistence_band_example_of_model_section_5():
    a = analyse(_demo())  # rigid limit, 7.1 % overdrive, μ 1.0/0.8, no rolling resistance
    assert a.angles_deg["handover"] == pytest.approx(6.97, abs=0.05)
    bands = a.scrub_bands()
    assert bands["rear"][1] == pytest.approx(10.2, abs=0.1)
    assert bands["front"][0] == pytest.approx(2.7, abs=0.1)


def test_persistence_band_ends_where_the_other_axle_stops_holding():
    """Rigid limit, worked with brentq: a front scrub (front at +μ_k N_f) lasts down to where the rear
    must brake with its whole static grip, F_req − μ_k N_f = −μ_s N_r; a rear scrub (rear dragged at
    −μ_k N_r) lasts up to where the front must drive with all of its, F_req + μ_k N_r = μ_s N_f."""
    s = _demo()

    def front_end(t):
        w, nf, nr, f = _grade(s, t)
        return (f - 0.8 * nf + 1.0 * nr) / w

    def rear_end(t):
        w, nf, nr, f = _grade(s, t)
        return (1.0 * nf - f - 0.8 * nr) / w

    bands = analyse(s).scrub_bands()
    assert bands["front"][0] == pytest.approx(brentq(front_end, -20.0, 6.9), abs=0.06)
    assert bands["rear"][1] == pytest.approx(brentq(rear_end, 0.0, 40.0), abs=0.06)


# --- the amount of overdrive now matters --------------------------------------------------------

def test_handover_moves_with_the_amount_of_overdrive_with_tyre_slip():
    """MODEL section 5: a small mismatch is absorbed as slip, a large one makes an axle let go
    sooner. With c = 20 the handover falls as the overdrive grows; in the rigid limit only the sign
    of the overdrive counts (the same handover for every amount)."""
    def handover(stiffness, pct):
        s = _demo(stiffness, crr=0.03)
        s = replace(s, driveline=replace(s.driveline, overdrive_pct=pct, front_stages=None, rear_stages=None))
        return analyse(s).angles_deg["handover"]

    slip = [handover(20.0, p) for p in (4.0, 8.0, 15.0, 30.0)]
    assert slip[0] is None  # 4 % is absorbed as slip all the way to the max grade
    assert slip[1] > slip[2] + 5.0 > slip[3] + 10.0
    rigid = {round(handover(math.inf, p), 9) for p in (4.0, 8.0, 15.0, 30.0)}
    assert len(rigid) == 1


@pytest.mark.parametrize("pct", [5.0, 12.0, 25.0])
def test_handover_never_rises_as_the_slip_stiffness_rises(pct):
    # MODEL section 5 (calibrating c): "the handover never rises as c rises"
    out = []
    for c in (6.0, 10.0, 20.0, 40.0, 80.0, 400.0, math.inf):
        s = _demo(c, crr=0.03)
        s = replace(s, driveline=replace(s.driveline, overdrive_pct=pct, front_stages=None, rear_stages=None))
        h = analyse(s).angles_deg["handover"]
        out.append(math.inf if h is None else h)
    assert all(a >= b - 1e-6 for a, b in zip(out, out[1:])), out


def test_named_angles_sit_where_the_slip_states_change():
    """With tyre slip the handover and max grade are the first slopes where the onset solve (the
    brentq reference) gives the overdriven axle letting go and the rig no longer holding."""
    s = _demo(25.0, crr=0.03)
    a = analyse(s)
    k = a.overdrive.ratio

    def state(t):
        _, nf, nr, f = _grade(s, t)
        return reference_state(nf, nr, f, (1.0, 0.8), (1.0, 0.8), 25.0, 25.0, k)[0]

    h, m = a.angles_deg["handover"], a.angles_deg["max_grade"]
    assert state(h - 0.02) != "front" and state(h + 0.02) == "front"
    assert state(m - 0.02) in ("none", "front", "rear") and state(m + 0.02) == "both"


# --- roll-out diameter under load (MODEL section 4) ---------------------------------------------

def test_roll_out_diameter_under_load_worked_by_hand():
    # D(N) = D − d (N − N_level)/100, the change held within ±N_level, at most the free diameter
    assert rolling_dia_under_load_mm(111.2, 0.35, 1650.0, 1450.0, 114.0) == pytest.approx(111.2 - 0.35 * 2.0)
    assert rolling_dia_under_load_mm(111.2, 0.35, 1150.0, 1450.0, 114.0) == pytest.approx(111.2 + 0.35 * 3.0)
    assert rolling_dia_under_load_mm(111.2, 0.35, 9000.0, 1450.0, 114.0) == pytest.approx(111.2 - 0.35 * 14.5)
    assert rolling_dia_under_load_mm(111.2, 0.35, -500.0, 1450.0, 114.0) == 114.0  # clamped: free diameter


def test_speed_ratio_follows_the_axle_loads_on_a_climb():
    """K = (1 + p/100) D_f(N_f)/D_r(N_r) (MODEL section 4), recomputed here from the file's numbers:
    a climb unloads the front and loads the rear, so a rear tyre that shrinks under load adds front
    overdrive on the way up."""
    s = load_setup(DEMO).setup
    a = analyse(s, [0.0, 20.0, 35.0])
    g = 40 / 38  # gear stages [[13, 38]] front, [[13, 40]] rear: R_rear / R_front
    _, nf0, nr0, _ = _grade(s, 0.0)
    for i, t in enumerate((0.0, 20.0, 35.0)):
        _, nf, nr, _ = _grade(s, t)
        d_f = min(111.2 - 0.35 * max(-nf0, min(nf0, nf - nf0)) / 100, 114.0)
        d_r = min(109.4 - 0.4 * max(-nr0, min(nr0, nr - nr0)) / 100, 112.0)
        assert a.sweep.speed_ratio[i] == pytest.approx(g * d_f / d_r, rel=1e-12)
    assert a.sweep.speed_ratio[0] < a.sweep.speed_ratio[1] < a.sweep.speed_ratio[2]


# --- named angles are a steady climb; the throttle gets its own set -----------------------------

def test_throttle_angles_beside_the_steady_ones_and_a_hard_brake_finds_the_descent_root():
    """A hard brake at −1.2 g: the rear lifts on a descent. Reference: brentq on N_r(θ) = 0 of the
    grade loads with the inertia term (Gillespie ch. 2), searched on descents only."""
    s = load_setup(DEMO).setup
    s = replace(s, terrain=replace(s.terrain, accel_g=-1.2))
    a = analyse(s)
    assert a.angles_deg["rear_lift"] == pytest.approx(-55.6, abs=0.1)  # steady: atan(−a/h)
    want = brentq(lambda t: _grade(s, t, -1.2)[2], -89.0, 0.0)
    assert a.angles_with_throttle_deg["rear_lift"] == pytest.approx(want, abs=1e-6)
    assert -20.0 < want < -10.0
    assert analyse(replace(s, terrain=replace(s.terrain, accel_g=0.0))).angles_with_throttle_deg is None


# --- report --json, version 2 fields ------------------------------------------------------------

RIG = """schema = 1
name = "Jackdaw 290 invented test rig"
[rig]
mass_g = 1900
wheelbase_mm = 290
front_bias_pct = 56
cg_height_mm = 80
track_mm = 230
tire_dia_front_mm = 108
tire_dia_rear_mm = 106
[driveline]
overdrive_pct = 9
[grip]
mu_static = 1.1
mu_kinetic = 0.85
rolling_resistance = 0.02
slip_stiffness = 40
[terrain]
slope_deg = 20
"""


def test_report_json_slip_rows_match_an_independent_solver(tmp_path):
    """Every sweep row against the brentq onset solver (0.1 % of W; states away from transitions),
    with the JSON conventions: κ null on a sliding axle, grip used 1 there, null when lifted."""
    path = tmp_path / "jackdaw.toml"
    path.write_text(RIG, encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "slopetune.tui.cli", "report", str(path), "--json", "--from",
                          "-60", "--to", "80", "--step", "1"], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    rep = json.loads(out.stdout)
    setup = load_setup(path).setup
    k = 1.09 * 108 / 106
    assert rep["slip_stiffness"] == {"front": 40, "rear": 40}
    assert rep["angles_with_throttle_deg"] is None and set(rep["scrub_band_deg"]) == {"front", "rear"}
    seen = set()
    for row in rep["sweep"]:
        t = row["slope_deg"]
        w, nf, nr, f = _grade(setup, t)
        assert row["speed_ratio"] == pytest.approx(k, rel=1e-6)
        near = {reference_state(*_grade(setup, t + d)[1:], (1.1, 0.85), (1.1, 0.85), 40, 40, k)[0] for d in (-0.05, 0.05)}
        state, ff, fr = reference_state(nf, nr, f, (1.1, 0.85), (1.1, 0.85), 40, 40, k)
        if near != {state}:
            continue
        seen.add(state)
        assert row["slipping"] == state, t
        if state == "lifted":
            assert row["front_grip_used"] is None and row["front_slip_pct"] is None
            continue
        assert row["front_force_g"] == pytest.approx(ff, abs=1e-3 * w)
        assert row["rear_force_g"] == pytest.approx(fr, abs=1e-3 * w)
        for axle, force, n in (("front", ff, nf), ("rear", fr, nr)):
            sliding = state in (axle, "both")
            assert (row[f"{axle}_slip_pct"] is None) == sliding
            want = 1.0 if sliding else abs(force) / (1.1 * n)
            assert row[f"{axle}_grip_used"] == pytest.approx(want, abs=1e-3)
    assert {"none", "front", "rear", "both"} <= seen


def test_throttle_named_angles_sit_where_the_slip_states_change():
    """With a 0.3 g punch the throttle set of angles are the state changes of the onset solve under
    that acceleration (the brentq reference, grade loads with the inertia term of Gillespie ch. 2)."""
    s = _demo(25.0, crr=0.03)
    s = replace(s, terrain=replace(s.terrain, accel_g=0.3))
    a = analyse(s)
    k = a.overdrive.ratio

    def state(t):
        _, nf, nr, f = _grade(s, t, 0.3)
        return reference_state(nf, nr, f, (1.0, 0.8), (1.0, 0.8), 25.0, 25.0, k)[0]

    thr = a.angles_with_throttle_deg
    h, m = thr["handover"], thr["max_grade"]
    assert m < a.angles_deg["max_grade"] - 5.0  # the punch costs grade
    assert state(m - 0.02) in ("none", "front", "rear") and state(m + 0.02) == "both"
    assert state(h - 0.02) != "front" and state(h + 0.02) == "front"


def test_rigid_handover_of_a_rear_overdrive_sits_where_the_rear_rule_changes():
    """Rigid limit with the REAR overdriven (gear overdrive -8 %) on a rear-heavy rig (40 % front):
    the rear (fast) axle lets go first where μ_s,r N_r − μ_s,f N_f < F_req (MODEL section 5's rigid
    rule), with N_f, N_r and F_req from the grade-load equations written out (Gillespie ch. 2) and
    the crossing found by brentq. The left side starts above F_req on the flat and grows slower
    than it, so the handover is an interior crossing (about 22 deg, worked with h/L ≈ 0.28)."""
    from slopetune.engine import Driveline

    s = _demo(crr=0.03)
    s = replace(s, driveline=Driveline(overdrive_pct=-8.0)).with_value("rig.front_bias_pct", 40.0)
    a = analyse(s)
    assert a.overdrive.overdriven_axle == "rear"

    def rear_rule(t):
        _w, nf, nr, f = _grade(s, t)
        return 1.0 * nr - 1.0 * nf - f

    expected = brentq(rear_rule, 0.0, 40.0, xtol=1e-10)
    assert 10.0 < expected < 35.0
    assert a.angles_deg["handover"] == pytest.approx(expected, abs=0.01)
