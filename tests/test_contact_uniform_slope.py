"""Two contacts on one plane (engine.contact_statics) reduce to the uniform-slope model exactly.

Sources named beside each check:
- the grade-load equations of MODEL sections 2 and 5, written out here (Gillespie, *Fundamentals of
  Vehicle Dynamics*, ch. 2), and the onset slip solve `engine.traction.slip_traction_state` (brush
  model, Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3; itself tested against
  Pacejka's curve in test_tyre_slip.py);
- Coulomb friction bounds |F| <= μ_s N while gripping, F = ±μ_k N while sliding (Serway &
  Beichner, 5th ed., ch. 5);
- rigid limit: the rigid Coulomb rule `engine.traction.traction_state` (fast axle first ⇔
  μ_s,fast N_fast − μ_s,slow N_slow < F_req).

Uneven ground is in test_contact_equilibrium.py, which axle lets go first and binds in
test_contact_first_to_let_go.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine.contact_statics import solve_contacts as solve_slip
from slopetune.engine.traction import BOTH, LIFTED, NONE, STATES, slip_traction_state, traction_state

from contact_equations import RIGID, solve_contacts


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


# ----- rigid limit: the Coulomb rule -------------------------------------------------------------

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
