"""Two-contact statics (engine.contact_statics) against the uniform-slope model, scipy and a hand case.

Sources named beside each check:
- uniform slope: the contact statics must reduce exactly to `engine.analyse` (Gillespie,
  *Fundamentals of Vehicle Dynamics*, ch. 2 loads; the wind-up rule of `engine.traction`);
- planar rigid-body equilibrium, three equations (Meriam & Kraige, *Engineering Mechanics:
  Statics*, ch. 3), written out again here and solved with `scipy.linalg.solve`;
- Coulomb friction bounds |F| <= μ_s N while gripping, F = ±μ_k N while sliding (Serway &
  Beichner, 5th ed., ch. 5);
- which axle lets go first: the feasible interval of the friction cone along the line of
  equilibrium solutions, found here with `scipy.linalg.null_space` and plain inequalities.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg
from hypothesis import assume, given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine import analyse
from slopetune.engine.contact_statics import solve_contacts
from slopetune.engine.traction import BOTH, FRONT, LIFTED, NONE, REAR

from conftest import rig_setups


def _uniform_arms(slope_deg, wheelbase_mm, b_mm, h_mm):
    """Contact points minus CG for a rig on a plane at `slope_deg` (rear contact at the origin)."""
    th = np.radians(slope_deg)
    along = np.stack((np.cos(th), np.sin(th)), -1)
    up = np.stack((-np.sin(th), np.cos(th)), -1)
    cg = b_mm * along + h_mm * up
    return wheelbase_mm * along - cg, -cg


def _model_inputs(setup):
    a = analyse(setup, [0.0], load="climb")
    fs, fk, rs, rk = setup.grip.axle_mu()
    return a, (fs, fk), (rs, rk), a.overdrive.overdriven_axle, setup.grip.rolling_resistance


# ----- uniform slope: exact reduction to engine.analyse ---------------------------------------

@given(setup=rig_setups(), slopes=st.lists(st.floats(-70.0, 70.0), min_size=1, max_size=8))
def test_uniform_slope_matches_the_slope_model(setup, slopes):
    """Both contacts on one plane: same states and forces as engine.analyse to 1e-9 of the weight."""
    a, mu_f, mu_r, od, crr = _model_inputs(setup)
    sweep = a.at(slopes)
    rig = a.rig
    t = sweep.traction
    w = rig.mass_g
    # states can differ only on a boundary (ties broken by rounding): keep clear of them
    (msf, _), (msr, _) = mu_f, mu_r
    margin = np.abs(msf * sweep.front_normal_g - msr * sweep.rear_normal_g - sweep.required_g)
    if od == "rear":
        margin = np.abs(msr * sweep.rear_normal_g - msf * sweep.front_normal_g - sweep.required_g)
    clear = (np.abs(sweep.front_normal_g) > 1e-7 * w) & (np.abs(sweep.rear_normal_g) > 1e-7 * w)
    clear &= np.where(np.isnan(t.reserve_g), True, np.abs(t.reserve_g) > 1e-7 * w)
    if od is not None:
        clear &= margin > 1e-7 * w
    assume(clear.all())

    front_arm, rear_arm = _uniform_arms(sweep.slope_deg, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm)
    out = solve_contacts(w, front_arm, rear_arm, sweep.slope_deg, sweep.slope_deg, sweep.slope_deg,
                         mu_f, mu_r, od, crr, a.accel_g)
    assert out.traction.state.tolist() == t.state.tolist()
    tol = dict(rtol=1e-9, atol=1e-9 * w)
    assert_allclose(out.front_normal_g, sweep.front_normal_g, **tol)
    assert_allclose(out.rear_normal_g, sweep.rear_normal_g, **tol)
    for name in ("front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        assert_allclose(getattr(out.traction, name), getattr(t, name), equal_nan=True, err_msg=name, **tol)


# ----- general geometry: equilibrium (scipy) and friction bounds --------------------------------

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
    system), P the overdriven axle's force. Each Coulomb margin μ_s N ∓ F is linear in P; from
    any split where both grip, raising P stops at the first margin that shrinks to zero.
    None when no split grips on both axles or two limits tie.
    """
    x0 = scipy.linalg.lstsq(a, b)[0]
    d = scipy.linalg.null_space(a)[:, 0]
    d = d / d[fast + 1]
    lows, ups = [], []
    for i, mu in ((0, mu_f), (2, mu_r)):
        for sign in (1.0, -1.0):
            value, slope = mu * x0[i] - sign * x0[i + 1], mu * d[i] - sign * d[i + 1]
            (lows if slope > 0 else ups).append((-value / slope, i))
    if not ups:
        return None
    ups.sort()
    lo = max((p for p, _ in lows), default=-np.inf)
    scale = float(np.abs(b).max())
    if ups[0][0] <= lo + 1e-6 * scale or (len(ups) > 1 and ups[1][0] - ups[0][0] < 1e-6 * scale):
        return None
    return FRONT if ups[0][1] == 0 else REAR


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
