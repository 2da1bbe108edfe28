"""Two-contact statics (engine.contact_statics, engine.contact_rigid) against independent checks.

Sources named beside each check:
- uniform slope: the contact statics must reduce exactly to MODEL sections 2 and 5: the grade-load
  equations written out here (Gillespie, *Fundamentals of Vehicle Dynamics*, ch. 2) and the
  onset slip solve `engine.traction.slip_traction_state` (brush model, Pacejka, *Tire and Vehicle
  Dynamics*, 3rd ed., 2012, ch. 3; itself tested against Pacejka's curve in test_tyre_slip.py);
- an independent per-position solver (tests/course_reference.py: other equations, a plain scan
  and `scipy.optimize.brentq`, one position at a time);
- planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics:
  Statics*, ch. 3), written out again here and solved with `scipy.linalg.solve`;
- Coulomb friction bounds |F| <= μ_s N while gripping, F = ±μ_k N while sliding (Serway &
  Beichner, 5th ed., ch. 5);
- rigid limit: which axle lets go first from the feasible interval of the friction cone along the
  line of equilibria (`scipy.linalg.null_space`), and "binds" where maximising the wind-up is an
  unbounded linear program (`scipy.optimize.linprog`).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg
import scipy.optimize
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine.contact_rigid import BINDS
from slopetune.engine.contact_statics import solve_contacts as solve_slip
from slopetune.engine.traction import BOTH, FRONT, LIFTED, NONE, REAR, STATES, slip_traction_state, traction_state

from course_reference import solve_position

RIGID = math.inf
_OD_RATIO = {"front": 1.05, "rear": 0.95, None: 1.0}


def solve_contacts(weight, front_arm, rear_arm, af, ar, pitch, mu_f, mu_r, od, crr=0.0, accel=0.0):
    """The rigid limit with contact points given relative to the CG (CG at the origin) and the
    overdriven axle named: K/ρ above, below or at 1."""
    front_arm, rear_arm = np.atleast_2d(np.asarray(front_arm, float)), np.atleast_2d(np.asarray(rear_arm, float))
    n = front_arm.shape[0]
    return solve_slip(weight, front_arm, rear_arm, np.zeros((n, 2)), af, ar, pitch, mu_f, mu_r, RIGID, RIGID,
                      np.full(n, _OD_RATIO[od]), np.zeros(n), np.ones(n), crr, accel)


def _uniform_arms(slope_deg, wheelbase_mm, b_mm, h_mm):
    """Contact points minus CG for a rig on a plane at `slope_deg` (rear contact at the origin)."""
    th = np.radians(slope_deg)
    along = np.stack((np.cos(th), np.sin(th)), -1)
    up = np.stack((-np.sin(th), np.cos(th)), -1)
    cg = b_mm * along + h_mm * up
    return wheelbase_mm * along - cg, -cg


# ----- uniform slope: exact reduction to sections 2 and 5 ---------------------------------------

uniform = st.fixed_dictionaries({
    "slope": st.floats(-60.0, 70.0), "wheelbase": st.floats(150.0, 500.0), "bias": st.floats(0.25, 0.75),
    "h": st.floats(30.0, 200.0), "weight": st.floats(500.0, 5000.0), "mu_f": st.floats(0.4, 1.5),
    "mu_r": st.floats(0.4, 1.5), "k_share": st.floats(0.6, 1.0), "crr": st.sampled_from([0.0, 0.03]),
    "accel": st.sampled_from([0.0, 0.2]), "c_f": st.one_of(st.just(RIGID), st.floats(5.0, 60.0)),
    "c_r": st.one_of(st.just(RIGID), st.floats(5.0, 60.0)), "k": st.floats(0.8, 1.3),
})


def _section_5(g, slope):
    """Sections 2 and 5 written out: grade loads (Gillespie ch. 2) and the onset slip solve."""
    th = math.radians(slope)
    w, L, b, h = g["weight"], g["wheelbase"], g["bias"] * g["wheelbase"], g["h"]
    nf = w * (b * math.cos(th) - h * math.sin(th) - h * g["accel"]) / L
    nr = w * math.cos(th) - nf
    f_req = w * (math.sin(th) + g["crr"] * math.cos(th) + g["accel"])
    mu_f, mu_r = (g["mu_f"], g["mu_f"] * g["k_share"]), (g["mu_r"], g["mu_r"] * g["k_share"])
    c_f, c_r = max(g["c_f"], 3.5 * g["mu_f"]), max(g["c_r"], 3.5 * g["mu_r"])
    return nf, nr, slip_traction_state(nf, nr, f_req, mu_f, mu_r, c_f, c_r, g["k"]), mu_f, mu_r, c_f, c_r


@given(g=uniform)
def test_uniform_slope_reduces_to_sections_2_and_5(g):
    """Both contacts on one plane (ρ = 1, no pitch term): same normal forces as the grade-load
    equations and the same state, tyre forces, slips, grip used, wind-up and reserve as
    `slip_traction_state`, to 1e-6 of the weight; a state may differ only on a transition (where a
    slope 1e-6° away gives the section 5 solve the other state)."""
    slope = g["slope"]
    nf, nr, ts, mu_f, mu_r, c_f, c_r = _section_5(g, slope)
    w = g["weight"]
    front_arm, rear_arm = _uniform_arms(np.array([slope]), g["wheelbase"], g["bias"] * g["wheelbase"], g["h"])
    out = solve_slip(w, front_arm, rear_arm, np.zeros((1, 2)), [slope], [slope], [slope], mu_f, mu_r, c_f, c_r,
                     [g["k"]], [0.0], [1.0], g["crr"], g["accel"])
    t = out.traction
    if int(t.state[0]) != int(ts.state):
        near = {int(_section_5(g, slope + d)[2].state) for d in (-1e-6, 1e-6)}
        assert int(t.state[0]) in near, (STATES[int(t.state[0])], STATES[int(ts.state)])
        return
    tol = dict(rtol=1e-9, atol=1e-6 * w)
    if int(ts.state) != LIFTED:
        assert_allclose(out.front_normal_g[0], nf, **tol)
        assert_allclose(out.rear_normal_g[0], nr, **tol)
    for name in ("front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        assert_allclose(getattr(t, name)[0], float(getattr(ts, name)), equal_nan=True, err_msg=name, **tol)
    for name in ("front_slip_pct", "rear_slip_pct", "front_grip_used", "rear_grip_used"):
        assert_allclose(getattr(t, name)[0], float(getattr(ts, name)), equal_nan=True, err_msg=name,
                        rtol=1e-6, atol=1e-6)


@pytest.mark.parametrize("slope", [0.0, 15.0, 30.0, 44.0])
def test_no_mismatch_is_the_grip_proportional_split_up_to_tan_mu(slope):
    """K = ρ, equal mu and stiffness, no rolling resistance: both grip with the grip-proportional
    split F_i = F_req μ N_i/(μ N_f + μ N_r) up to tan θ = μ = 1 (Gillespie ch. 2, traction-limited
    grade); at 46° it cannot hold."""
    w, L, b, h = 2000.0, 300.0, 170.0, 90.0
    th = math.radians(slope)
    front_arm, rear_arm = _uniform_arms(np.array([slope]), L, b, h)
    out = solve_slip(w, front_arm, rear_arm, np.zeros((1, 2)), [slope], [slope], [slope], (1.0, 0.8), (1.0, 0.8),
                     20.0, 20.0, [1.0], [0.0], [1.0])
    nf = w * (b * math.cos(th) - h * math.sin(th)) / L
    assert int(out.traction.state[0]) == NONE
    assert_allclose(out.traction.front_force_g[0], w * math.sin(th) * nf / (w * math.cos(th)), rtol=1e-9, atol=1e-6)
    out = solve_slip(w, *_uniform_arms(np.array([46.0]), L, b, h), np.zeros((1, 2)), [46.0], [46.0], [46.0],
                     (1.0, 0.8), (1.0, 0.8), 20.0, 20.0, [1.0], [0.0], [1.0])
    assert int(out.traction.state[0]) == BOTH


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
    are left to the binds tests below."""
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
    (Meriam & Kraige ch. 3, written out here), the gripping tyre within μ_s N, a sliding one at
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
        a = _equilibrium_rows(p["pf"] - p["cg"], p["pr"] - p["cg"], math.radians(p["af"]), math.radians(p["ar"]),
                              p["crr"])
        assert_allclose(a @ x, _loads(p["weight"], math.radians(p["pitch"]), 0.0), atol=1e-6 * p["weight"])
        assert x[0] > 0 and x[2] > 0
        for i, (ms, mk), slides in ((0, p["mu_f"], state == FRONT), (2, p["mu_r"], state == REAR)):
            if slides:
                assert_allclose(abs(x[i + 1]), mk * x[i], rtol=1e-9)
            else:
                assert abs(x[i + 1]) <= ms * x[i] * (1 + 1e-9)
    assert checked > 200


def _equilibrium_rows(front_arm, rear_arm, alpha_f, alpha_r, crr):
    """3x4 matrix of Σx, Σz and Σ moment about the CG for (N_f, F_f, N_r, F_r), from the model:
    contact force N n + (F − c_rr N) t with n = (−sin α, cos α), t = (cos α, sin α)."""
    cols = []
    for arm, alpha in ((front_arm, alpha_f), (rear_arm, alpha_r)):
        n = np.array([-math.sin(alpha), math.cos(alpha)])
        t = np.array([math.cos(alpha), math.sin(alpha)])
        for f in (n - crr * t, t):
            cols.append([f[0], f[1], arm[0] * f[1] - arm[1] * f[0]])
    return np.array(cols).T


def _loads(weight, pitch, accel):
    return np.array([weight * accel * math.cos(pitch), weight * (1 + accel * math.sin(pitch)), 0.0])


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
    a = _equilibrium_rows((g["fx"], g["fz"]), (g["rx"], g["rz"]), math.radians(g["alpha_f"]),
                          math.radians(g["alpha_r"]), g["crr"])
    b = _loads(g["weight"], math.radians(g["pitch"]), g["accel"])
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


def _first_to_let_go(a, b, fast, mu_f, mu_r):
    """Reference: which axle a growing wind-up pair brings to its limit first, or None.

    The equilibrium solutions are x0 + P d (scipy.linalg.lstsq and null_space of the 3x4
    system), P the overdriven axle's force. Each Coulomb margin μ_s N ∓ F is linear in P; the
    splits where both grip are the interval between the last growing margin's zero and the first
    shrinking one's. Raising P normally stops at the top. But the driveline forces the slips
    apart (MODEL §5: s_f = (K/ρ) s_r), so an axle can only let go alone with the fast one driving
    forward or the slow one dragged backward (with rigid tyres the other would have to slide
    too); where the top limit is the other kind, P also loads the fast axle's own normal force
    and its grip share falls as P grows: the wind-up grows towards the bottom, which is then the
    limit reached (hand-worked in test_wall_rear_overdriven_hand_worked).
    None when no split grips on both axles or two limits tie.
    """
    x0 = scipy.linalg.lstsq(a, b)[0]
    d = scipy.linalg.null_space(a)[:, 0]
    d = d / d[fast + 1]
    lows, ups = [], []
    for i, mu in ((0, mu_f), (2, mu_r)):
        for sign in (1.0, -1.0):
            value, slope = mu * x0[i] - sign * x0[i + 1], mu * d[i] - sign * d[i + 1]
            (lows if slope > 0 else ups).append((-value / slope, i, (i == fast) == (sign > 0)))
    if not ups:
        return None
    ups.sort()
    lows.sort(reverse=True)
    lo = lows[0][0] if lows else -np.inf
    scale = float(np.abs(b).max())
    if ups[0][0] <= lo + 1e-6 * scale or (len(ups) > 1 and ups[1][0] - ups[0][0] < 1e-6 * scale):
        return None
    first = ups[0]
    if not first[2] and lows and lows[0][2]:
        if len(lows) > 1 and lows[0][0] - lows[1][0] < 1e-6 * scale:
            return None
        first = lows[0]
    return FRONT if first[1] == 0 else REAR


def test_first_to_let_go_follows_the_friction_cone():
    """3,000 random contact geometries (seeded): the reported slipping axle is the reference's
    first to let go, including tyres pressed into an edge, whose margin grows with the pair."""
    rng = np.random.default_rng(20261201)
    n = 1500
    checked = pressed = 0
    for od, fast in (("front", 0), ("rear", 2)):
        af, ar = rng.uniform(-60.0, 88.0, n), rng.uniform(-60.0, 88.0, n)
        arm_f = np.stack((rng.uniform(60, 250, n), rng.uniform(-150, -20, n)), -1)
        arm_r = np.stack((rng.uniform(-250, -60, n), rng.uniform(-150, -20, n)), -1)
        pitch = rng.uniform(-40, 40, n)
        mu = rng.uniform(0.4, 1.6)
        mu_f, mu_r = (mu, 0.8 * mu), (1.2 * mu, 0.96 * mu)
        out = solve_contacts(1000.0, arm_f, arm_r, af, ar, pitch, mu_f, mu_r, od, 0.03)
        for k in np.flatnonzero(np.isin(out.traction.state, (FRONT, REAR))):
            a = _equilibrium_rows(arm_f[k], arm_r[k], math.radians(af[k]), math.radians(ar[k]), 0.03)
            ref = _first_to_let_go(a, _loads(1000.0, math.radians(pitch[k]), 0.0), fast, mu_f[0], mu_r[0])
            if ref is None:
                continue
            checked += 1
            d = scipy.linalg.null_space(a)[:, 0]
            d = d / d[fast + 1]
            slow = 2 - fast
            pressed += (mu_r[0] if slow == 2 else mu_f[0]) * d[slow] + d[slow + 1] > 0
            assert int(out.traction.state[k]) == ref, (od, af[k], ar[k], arm_f[k], arm_r[k], pitch[k], mu)
    assert checked > 1000 and pressed > 100  # the test reached both regimes


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
    a = _equilibrium_rows((60.0, -62.0), (-60.0, -20.0), 0.0, math.radians(71.0), 0.0)
    front_back = scipy.linalg.solve(np.vstack((a, [1.0, 1.0, 0.0, 0.0])), np.append(_loads(500.0, 0.0, 0.0), 0.0))
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
    a = _equilibrium_rows((130.0, -88.0), (-205.0, -35.0), 0.0, math.radians(65.0), 0.03)
    assert_allclose(a @ x, _loads(2400.0, math.radians(6.0), 0.0), atol=1e-8 * 2400)
    assert abs(x[3]) <= 1.0 * x[2]
    assert_allclose(x[1], 0.85 * x[0], rtol=1e-12)


def test_lifted_outranks_slip_and_has_no_forces():
    """A 70° plane with b = 100, h = 90: past the front-lift angle atan(b/h) = 48° (Gillespie
    ch. 2) the front would need a pull (N_f < 0): lifted, whatever the friction says."""
    front_arm, rear_arm = _uniform_arms(np.array([70.0]), 300.0, 100.0, 90.0)
    out = solve_contacts(1000.0, front_arm, rear_arm, [70.0], [70.0], [70.0], (1.0, 0.8), (1.0, 0.8), "front")
    assert int(out.traction.state[0]) == LIFTED
    assert out.front_normal_g[0] <= 0 < out.rear_normal_g[0]
    assert math.isnan(out.traction.front_force_g[0]) and math.isnan(out.traction.rear_force_g[0])


@pytest.mark.parametrize("slope", [10.0, 50.0])
def test_no_overdrive_is_the_grip_proportional_split(slope):
    """e = 0 on a plane: holds while F_req <= μ_f N_f + μ_r N_r, split in proportion (MODEL §5
    rule, Coulomb limits from Serway & Beichner ch. 5); at 50° with μ = 0.8 it cannot (tan 50° >
    0.8): both slip."""
    w, L, b, h = 1000.0, 300.0, 150.0, 80.0
    front_arm, rear_arm = _uniform_arms(np.array([slope]), L, b, h)
    out = solve_contacts(w, front_arm, rear_arm, [slope], [slope], [slope], (0.8, 0.6), (0.8, 0.6), None)
    th = math.radians(slope)
    nf = w * (b * math.cos(th) - h * math.sin(th)) / L  # Gillespie ch. 2 grade loads
    nr = w * math.cos(th) - nf
    assert_allclose(out.front_normal_g[0], nf, rtol=1e-12)
    if math.tan(th) <= 0.8:
        assert int(out.traction.state[0]) == NONE
        assert_allclose(out.traction.front_force_g[0], w * math.sin(th) * nf / (nf + nr), rtol=1e-12)
    else:
        assert int(out.traction.state[0]) == BOTH
        assert_allclose(out.traction.front_force_g[0], 0.6 * nf, rtol=1e-12)


# ----- rigid limit: the Coulomb rule, and binds --------------------------------------------------

@given(g=uniform)
def test_rigid_limit_on_a_plane_is_the_coulomb_rule(g):
    """Stiffness "rigid" on both axles, one plane: exactly `engine.traction.traction_state` (the
    rigid rule, fast axle first ⇔ μ_s,fast N_fast − μ_s,slow N_slow < F_req), to 1e-9 of W."""
    slope, w = g["slope"], g["weight"]
    th = math.radians(slope)
    L, b, h = g["wheelbase"], g["bias"] * g["wheelbase"], g["h"]
    nf = w * (b * math.cos(th) - h * math.sin(th) - h * g["accel"]) / L
    nr = w * math.cos(th) - nf
    f_req = w * (math.sin(th) + g["crr"] * math.cos(th) + g["accel"])
    mu_f, mu_r = (g["mu_f"], g["mu_f"] * g["k_share"]), (g["mu_r"], g["mu_r"] * g["k_share"])
    od = "front" if g["k"] > 1 else ("rear" if g["k"] < 1 else None)
    fast_margin = (mu_f[0] * nf - mu_r[0] * nr) if od == "front" else (mu_r[0] * nr - mu_f[0] * nf)
    assume(od is None or abs(fast_margin - f_req) > 1e-7 * w)
    assume(min(abs(nf), abs(nr)) > 1e-7 * w)
    ref = traction_state(nf, nr, f_req, mu_f, mu_r, od)
    assume(np.isnan(ref.reserve_g) or abs(float(ref.reserve_g)) > 1e-7 * w)
    front_arm, rear_arm = _uniform_arms(np.array([slope]), L, b, h)
    out = solve_slip(w, front_arm, rear_arm, np.zeros((1, 2)), [slope], [slope], [slope], mu_f, mu_r, RIGID, RIGID,
                     [g["k"]], [0.0], [1.0], g["crr"], g["accel"])
    assert int(out.traction.state[0]) == int(ref.state)
    for name in ("front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        assert_allclose(getattr(out.traction, name)[0], float(getattr(ref, name)), rtol=1e-9, atol=1e-9 * w,
                        equal_nan=True, err_msg=name)


def _wind_up_is_unbounded(a, b, fast, mu_f, mu_r):
    """scipy.optimize.linprog: maximise the fast axle's force over the equilibria inside both
    friction cones. Returns True (unbounded: binds), False (bounded) or None (no such equilibrium)."""
    # variables (N_f, F_f, N_r, F_r); cones −μ N <= F <= μ N, N >= 0
    a_ub = np.array([[-mu_f, 1, 0, 0], [-mu_f, -1, 0, 0], [0, 0, -mu_r, 1], [0, 0, -mu_r, -1]], float)
    c = np.zeros(4)
    c[fast + 1] = -1.0
    res = scipy.optimize.linprog(c, A_ub=a_ub, b_ub=np.zeros(4), A_eq=a, b_eq=b,
                                 bounds=[(0, None), (None, None), (0, None), (None, None)], method="highs")
    if res.status == 3:
        return True
    if res.status == 0:
        return False
    return None


def test_binds_exactly_where_the_wind_up_is_unbounded():
    """4,000 random contact geometries (seeded), rigid tyres: the state is `binds` exactly where
    the linear program "maximise the wind-up pair over the equilibria within both friction cones"
    is unbounded (no friction limit is ever reached, all four checked), and never "both grip"."""
    rng = np.random.default_rng(20261203)
    n = 2000
    binds = bounded = 0
    for od, fast in (("front", 0), ("rear", 2)):
        af, ar = rng.uniform(-60.0, 88.0, n), rng.uniform(-60.0, 88.0, n)
        arm_f = np.stack((rng.uniform(60, 250, n), rng.uniform(-150, -20, n)), -1)
        arm_r = np.stack((rng.uniform(-250, -60, n), rng.uniform(-150, -20, n)), -1)
        pitch = rng.uniform(-40, 40, n)
        mu_f, mu_r = (1.0, 0.8), (0.9, 0.72)
        out = solve_contacts(1000.0, arm_f, arm_r, af, ar, pitch, mu_f, mu_r, od, 0.03)
        for k in range(n):
            a = _equilibrium_rows(arm_f[k], arm_r[k], math.radians(af[k]), math.radians(ar[k]), 0.03)
            lp = _wind_up_is_unbounded(a, _loads(1000.0, math.radians(pitch[k]), 0.0), fast, mu_f[0], mu_r[0])
            state = int(out.traction.state[k])
            if lp is None or state == LIFTED:
                continue
            assert (state == BINDS) == lp, (od, af[k], ar[k], arm_f[k], arm_r[k], pitch[k])
            binds += lp
            bounded += not lp
    assert binds > 20 and bounded > 1000  # both regimes reached
