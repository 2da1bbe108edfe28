"""Two contacts on uneven ground (engine.contact_statics, engine.contact_rigid): the equilibrium equations.

Sources named beside each check:
- an independent per-position solver (tests/course_reference.py: other equations, a plain scan
  and `scipy.optimize.brentq`, one position at a time);
- planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics:
  Statics*, ch. 3), written out in tests/contact_equations.py and solved with `scipy.linalg.solve`;
- Coulomb friction bounds |F| <= μ_s N while gripping, F = ±μ_k N while sliding (Serway &
  Beichner, 5th ed., ch. 5);
- crest, wall and step-edge poses worked by hand from those three equations.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg
from hypothesis import assume, example, given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine.contact_statics import solve_contacts as solve_slip
from slopetune.engine.traction import FRONT, NONE, REAR, STATES

from contact_equations import equilibrium_loads, equilibrium_rows, solve_contacts
from course_reference import solve_position

# ----- uneven ground: an independent solver and the equilibrium equations --------------------------

def _random_pose(rng):
    w = 2000.0
    length = rng.uniform(200, 400)
    b, h = rng.uniform(0.3, 0.7) * length, rng.uniform(40, 150)
    chord = math.radians(rng.uniform(-30, 40))
    along, up = np.array([math.cos(chord), math.sin(chord)]), np.array([-math.sin(chord), math.cos(chord)])
    mu = rng.uniform(0.6, 1.2)
    mu_r = mu * rng.uniform(0.8, 1.2)
    return dict(weight=w, pf=length * along, pr=np.zeros(2), cg=b * along + h * up,
                af=rng.uniform(-40, 60), ar=rng.uniform(-40, 60), pitch=math.degrees(chord),
                mu_f=(mu, 0.8 * mu), mu_r=(mu_r, 0.8 * mu_r), c_f=rng.uniform(4, 30), c_r=rng.uniform(4, 30),
                k=rng.uniform(0.9, 1.2), q=rng.uniform(-0.02, 0.02), rho=rng.uniform(0.8, 1.3), crr=0.03)


def test_uneven_ground_agrees_with_an_independent_per_position_solver():
    """300 random poses (seeded): the vectorised solve and tests/course_reference.py (different
    equations, plain scan and brentq per position) give the same state and, where a tyre grips,
    the same forces to 1e-6 of the weight. Poses where the plain scan finds no finite equilibrium
    are left to the binds test (test_contact_first_to_let_go.py)."""
    rng = np.random.default_rng(20261202)
    poses = [_random_pose(rng) for _ in range(300)]
    stack = {k: np.array([p[k] for p in poses]) for k in ("pf", "pr", "cg", "af", "ar", "pitch", "k", "q", "rho")}
    compared = 0
    for p in poses:
        out = solve_slip(p["weight"], p["pf"][None], p["pr"][None], p["cg"][None], [p["af"]], [p["ar"]], [p["pitch"]],
                         p["mu_f"], p["mu_r"], p["c_f"], p["c_r"], [p["k"]], [p["q"]], [p["rho"]], p["crr"])
        ref = solve_position(p["weight"], p["pf"], p["pr"], p["cg"], p["af"], p["ar"], p["pitch"], p["mu_f"],
                             p["mu_r"], p["c_f"], p["c_r"], p["k"], p["q"], p["rho"], p["crr"])
        if ref[0] is None:
            continue
        compared += 1
        assert STATES[int(out.traction.state[0])] == ref[0], p
        if ref[1] is not None:
            t = out.traction
            got = [out.front_normal_g[0], out.rear_normal_g[0], t.front_force_g[0], t.rear_force_g[0]]
            assert_allclose(got, ref[1:], rtol=1e-7, atol=1e-6 * p["weight"])
    assert compared > 250
    assert stack["k"].size == 300


def test_gripping_states_satisfy_the_three_equilibrium_equations():
    """Every state where both or one tyre grips satisfies Σx, Σz and Σ moments about the CG
    (Meriam & Kraige ch. 3, written out in contact_equations.py), the gripping tyre within μ_s N, a sliding one at
    ±μ_k N (Serway & Beichner ch. 5)."""
    rng = np.random.default_rng(7)
    checked = 0
    for _ in range(400):
        p = _random_pose(rng)
        out = solve_slip(p["weight"], p["pf"][None], p["pr"][None], p["cg"][None], [p["af"]], [p["ar"]], [p["pitch"]],
                         p["mu_f"], p["mu_r"], p["c_f"], p["c_r"], [p["k"]], [p["q"]], [p["rho"]], p["crr"])
        state = int(out.traction.state[0])
        if state not in (NONE, FRONT, REAR):
            continue
        checked += 1
        t = out.traction
        x = np.array([out.front_normal_g[0], t.front_force_g[0], out.rear_normal_g[0], t.rear_force_g[0]])
        a = equilibrium_rows(p["pf"] - p["cg"], p["pr"] - p["cg"], math.radians(p["af"]), math.radians(p["ar"]),
                             p["crr"])
        b = equilibrium_loads(p["weight"], math.radians(p["pitch"]), 0.0)
        assert_allclose(a @ x, b, atol=1e-6 * p["weight"])
        assert x[0] > 0 and x[2] > 0
        for i, (ms, mk), slides in ((0, p["mu_f"], state == FRONT), (2, p["mu_r"], state == REAR)):
            if slides:
                assert_allclose(abs(x[i + 1]), mk * x[i], rtol=1e-9)
            else:
                assert abs(x[i + 1]) <= ms * x[i] * (1 + 1e-9)
    assert checked > 200


geometry = st.fixed_dictionaries({
    "alpha_f": st.floats(-60.0, 75.0), "alpha_r": st.floats(-60.0, 75.0), "pitch": st.floats(-40.0, 40.0),
    "fx": st.floats(60.0, 250.0), "fz": st.floats(-150.0, -20.0), "rx": st.floats(-250.0, -60.0),
    "rz": st.floats(-150.0, -20.0), "mu_s": st.floats(0.4, 1.6), "mu_k_share": st.floats(0.5, 1.0),
    "mu_r_scale": st.floats(0.7, 1.3), "crr": st.sampled_from([0.0, 0.03]), "accel": st.sampled_from([0.0, 0.15]),
    "od": st.sampled_from(["front", "rear", None]), "weight": st.floats(500.0, 5000.0),
})


def _solve_one(g):
    mu_f = (g["mu_s"], g["mu_s"] * g["mu_k_share"])
    mu_r = (g["mu_s"] * g["mu_r_scale"], g["mu_s"] * g["mu_r_scale"] * g["mu_k_share"])
    out = solve_contacts(g["weight"], np.array([[g["fx"], g["fz"]]]), np.array([[g["rx"], g["rz"]]]),
                         [g["alpha_f"]], [g["alpha_r"]], [g["pitch"]], mu_f, mu_r, g["od"], g["crr"], g["accel"])
    a = equilibrium_rows((g["fx"], g["fz"]), (g["rx"], g["rz"]), math.radians(g["alpha_f"]),
                         math.radians(g["alpha_r"]), g["crr"])
    b = equilibrium_loads(g["weight"], math.radians(g["pitch"]), g["accel"])
    return out, a, b, mu_f, mu_r


@given(g=geometry)
# rear on a 71° face, front on the flat, rear overdriven: wind-up grows towards lower P (see
# test_wall_rear_overdriven_hand_worked); found by hypothesis
@example(g={"alpha_f": 0.0, "alpha_r": 71.0, "pitch": 0.0, "fx": 60.0, "fz": -62.0, "rx": -60.0, "rz": -20.0,
            "mu_s": 1.0, "mu_k_share": 1.0, "mu_r_scale": 1.0, "crr": 0.0, "accel": 0.0, "od": "rear",
            "weight": 500.0})
def test_holding_states_solve_the_equilibrium_system(g):
    """Every holding state's forces are the scipy.linalg.solve solution of the three equilibrium
    equations plus that state's slip condition, and keep the other axle within μ_s N."""
    out, a, b, mu_f, mu_r = _solve_one(g)
    state = int(out.traction.state[0])
    assume(state in (FRONT, REAR, NONE))
    x = np.array([out.front_normal_g[0], out.traction.front_force_g[0],
                  out.rear_normal_g[0], out.traction.rear_force_g[0]])
    scale = g["weight"]
    if state == NONE:
        # no overdrive: both axles at the same share of static grip (the share taken from the result)
        s = x[1] / (mu_f[0] * x[0])
        row = np.array([-s * mu_f[0], 1.0, 0.0, 0.0])
        assert abs(x[3] - s * mu_r[0] * x[2]) <= 1e-9 * scale
        assert abs(s) <= 1.0 + 1e-12
    else:
        slipping_front = state == FRONT
        sign = 1.0 if slipping_front == (g["od"] == "front") else -1.0  # overdriven spins forward
        mu_k = mu_f[1] if slipping_front else mu_r[1]
        row = np.array([-sign * mu_k, 1.0, 0.0, 0.0]) if slipping_front else np.array([0.0, 0.0, -sign * mu_k, 1.0])
        grip_n, grip_f, grip_mu = (x[2], x[3], mu_r[0]) if slipping_front else (x[0], x[1], mu_f[0])
        assert abs(grip_f) <= grip_mu * grip_n * (1 + 1e-9) + 1e-9 * scale  # Coulomb: gripping axle
    ref = scipy.linalg.solve(np.vstack((a, row)), np.append(b, 0.0))
    assert_allclose(x, ref, rtol=1e-8, atol=1e-8 * scale)
    assert_allclose(a @ x, b, atol=1e-8 * scale)  # all three equilibrium equations
    assert x[0] > 0 and x[2] > 0


# ----- poses worked by hand ---------------------------------------------------------------------

def test_crest_hand_worked():
    """Front on flat ground, rear on a 45° face: hand-worked three-equation solution.

    W = 1000 gf, μ_s = 1, μ_k = 0.8 both axles, front overdriven, no rolling resistance. Contacts
    relative to the CG: front (150, −50) mm, α_f = 0; rear (−150, −150) mm, α_r = 45°.
    With u = N_r sin45, v = F_r sin45 the equations are
        Σx: F_f − u + v = 0;   Σz: N_f + u + v = 1000;   M: 150 N_f + 50 F_f − 300 u = 0.
    A (front at +μ_s N_f): N_f = 750, F_f = 750 = P_A.
    B (rear at −μ_s N_r, v = −u): N_f = 1000, u = 750, F_f = 1500 = P_B > P_A: the front lets go.
    C (front spins, F_f = 0.8 N_f): 1.8 N_f + 2v = 1000 and 0.2 N_f + 2u = 1000 with u = 19/30 N_f:
        N_f = 7500/11 = 681.82, F_f = 6000/11 = 545.45,
        N_r = 4750√2/11 = 610.69, F_r = −1250√2/11 = −160.71;
    |F_r| <= μ_s N_r: the rear grips, state "front", reserve 3500√2/11 = 449.97.
    """
    out = solve_contacts(1000.0, [[150.0, -50.0]], [[-150.0, -150.0]], [0.0], [45.0], [0.0],
                         (1.0, 0.8), (1.0, 0.8), "front")
    t = out.traction
    r2 = math.sqrt(2.0)
    assert int(t.state[0]) == FRONT
    assert_allclose(out.front_normal_g[0], 7500 / 11, rtol=1e-12)
    assert_allclose(t.front_force_g[0], 6000 / 11, rtol=1e-12)
    assert_allclose(out.rear_normal_g[0], 4750 * r2 / 11, rtol=1e-12)
    assert_allclose(t.rear_force_g[0], -1250 * r2 / 11, rtol=1e-12)
    assert_allclose(t.reserve_g[0], 3500 * r2 / 11, rtol=1e-12)


def test_crest_rear_overdriven_hand_worked():
    """The same crest with the rear overdriven (μ_s = 1, μ_k = 0.8): hand-worked.

    A (rear at +μ_s N_r, v = u): Σx: F_f = 0; Σz: N_f + 2u = 1000; M: 150 N_f − 300 u − 0 = 0
    (the rear's F term has arm h_r − a_r = 0) → N_f = 500, u = 250, F_r = 250√2 = P_A = 353.55.
    B (front at −μ_s N_f): Σx: −N_f − u + v = 0; M: 100 N_f − 300 u = 0 → u = N_f/3,
    v = 4/3 N_f; Σz: N_f (1 + 1/3 + 4/3) = 1000 → N_f = 375, F_r = v√2 = 500√2 = 707.1 > P_A:
    the rear lets go. C (F_r = 0.8 N_r, v = 0.8u): Σx: F_f = 0.2u; Σz: N_f + 1.8u = 1000;
    M: 150 N_f + 10 u − 300 u = 0 → N_f = 29/15 u, u = 1000/(29/15 + 1.8) = 15000/56;
    F_f = 0.2u = 3000/56 = 53.57 within μ_s N_f = 29000/56: state "rear".
    """
    out = solve_contacts(1000.0, [[150.0, -50.0]], [[-150.0, -150.0]], [0.0], [45.0], [0.0],
                         (1.0, 0.8), (1.0, 0.8), "rear")
    t = out.traction
    u = 15000 / 56
    assert int(t.state[0]) == REAR
    assert_allclose(out.front_normal_g[0], 29 / 15 * u, rtol=1e-12)
    assert_allclose(t.front_force_g[0], 0.2 * u, rtol=1e-12)
    assert_allclose(out.rear_normal_g[0], u * math.sqrt(2.0), rtol=1e-12)
    assert_allclose(t.rear_force_g[0], 0.8 * u * math.sqrt(2.0), rtol=1e-12)


def test_wall_rear_overdriven_hand_worked():
    """Rear tyre on a 71° face, front on the flat, rear overdriven, μ_s = μ_k = 1: hand-worked.

    W = 500 gf, contacts relative to the CG: front (60, −62) mm, α_f = 0; rear (−60, −20) mm,
    α_r = 71° (c = cos 71°, s = sin 71°). Three equations (Meriam & Kraige ch. 3):
        Σx: F_f − s N_r + c F_r = 0;   Σz: N_f + c N_r + s F_r = 500;
        M:  60 N_f + 62 F_f + N_r (−60c − 20s) + F_r (20c − 60s) = 0.
    Kinematics (MODEL §5, s_f = (K/ρ) s_r with K/ρ < 1): with rigid tyres an axle lets go alone
    only with the rear driving forward or the front dragged backward (the front sliding forward
    would put the rear's slip beyond it, sliding too).
    Rear lets go (F_r = +N_r): F_f = (s − c) N_r, N_f = 500 − (s + c) N_r and the moment gives
        N_r = 30000/(162c + 78s) = 237.168, F_f = 147.033, N_f = 198.539,
    front within μ_s N_f (reserve 51.506): state "rear". The front dragged backward
    (F_f = −N_f) needs N_r < 0 (scipy.linalg.solve below): not a state. Raising the rear's force
    here presses it into the face (N_r grows 197× as fast), so its grip share falls: growing the
    pair along +P is unwinding, and the front's forward limit at the top of that interval
    (F_f = +N_f, the answer before this was fixed) is no solution. The slip model at c = 1e7
    (MODEL §5: the rigid rule is its limit) gives the same forces.
    """
    args = (500.0, [[60.0, -62.0]], [[-60.0, -20.0]], [0.0], [71.0], [0.0], (1.0, 1.0), (1.0, 1.0), "rear")
    out = solve_contacts(*args)
    t = out.traction
    c, s = math.cos(math.radians(71.0)), math.sin(math.radians(71.0))
    nr = 30000.0 / (162.0 * c + 78.0 * s)
    assert int(t.state[0]) == REAR
    got = [out.front_normal_g[0], t.front_force_g[0], out.rear_normal_g[0], t.rear_force_g[0]]
    assert_allclose(got, [500.0 - (s + c) * nr, (s - c) * nr, nr, nr], rtol=1e-9)
    assert_allclose(t.reserve_g[0], 500.0 - 2.0 * s * nr, rtol=1e-9)
    a = equilibrium_rows((60.0, -62.0), (-60.0, -20.0), 0.0, math.radians(71.0), 0.0)
    b = equilibrium_loads(500.0, 0.0, 0.0)
    front_back = scipy.linalg.solve(np.vstack((a, [1.0, 1.0, 0.0, 0.0])), np.append(b, 0.0))
    assert front_back[2] < 0
    slip = solve_slip(500.0, np.array(args[1]), np.array(args[2]), np.zeros((1, 2)), [0.0], [71.0], [0.0],
                      (1.0, 1.0), (1.0, 1.0), 1e7, 1e7, [0.95], [0.0], [1.0])
    assert int(slip.traction.state[0]) == REAR
    assert_allclose(slip.traction.front_force_g[0], (s - c) * nr, rtol=1e-6)


def test_tyre_pushed_into_an_edge_grips_harder():
    """Rear tyre against a step edge (contact 65°), front on level ground, front overdriven.

    The front's push presses the rear onto the edge (the margin μ N_r + F_r grows with the pair),
    so the rear can never be the first to let go: the front spins. Forces still satisfy the
    three equilibrium equations (Meriam & Kraige ch. 3) and the rear stays within μ_s N_r.
    """
    out = solve_contacts(2400.0, [[130.0, -88.0]], [[-205.0, -35.0]], [0.0], [65.0], [6.0],
                         (1.05, 0.85), (1.0, 0.8), "front", 0.03)
    t = out.traction
    assert int(t.state[0]) == FRONT
    x = np.array([out.front_normal_g[0], t.front_force_g[0], out.rear_normal_g[0], t.rear_force_g[0]])
    a = equilibrium_rows((130.0, -88.0), (-205.0, -35.0), 0.0, math.radians(65.0), 0.03)
    assert_allclose(a @ x, equilibrium_loads(2400.0, math.radians(6.0), 0.0), atol=1e-8 * 2400)
    assert abs(x[3]) <= 1.0 * x[2]
    assert_allclose(x[1], 0.85 * x[0], rtol=1e-12)
