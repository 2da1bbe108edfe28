"""Goal seek (engine.goal_seek) checked against closed forms and scipy's root finder.

The expected values here never come from `engine.analyse`: each is a closed form written out in
the test (with its published source) or a root found by `scipy.optimize.brentq` on such a form.
"""

from __future__ import annotations

import math
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from conftest import rig_setups
from slopetune.engine import BallastItem, Driveline, Grip, Rig, Setup, Terrain, load_setup
from slopetune.engine.goal_seek import (
    AddBallast, CgHeight, Compound, LeverError, MoveBallast, Overdrive, Target, brent_root, plan,
)

SETUPS = Path(__file__).resolve().parent.parent / "setups"


def bare_rig(**over) -> Setup:
    """A rig with no ballast, equal mu, no throttle: the closed forms below apply as written."""
    rig = dict(mass_g=2380.0, wheelbase_mm=313.0, front_bias_pct=57.5, cg_height_mm=88.0, track_mm=252.0,
               tire_dia_front_mm=112.0, tire_dia_rear_mm=112.0)
    rig.update(over)
    return Setup("bare", Rig(**rig), Driveline(0.0), Grip(1.0, 0.8, 0.03, slip_stiffness=math.inf), Terrain(30.0))


def mass_centre(W, b, h, m, x, z):
    """Rig plus one mass: mass-weighted mean position (Jazar 2008, ch. 2, mass centre)."""
    return W + m, (W * b + m * x) / (W + m), (W * h + m * z) / (W + m)


def ballast_for_balance_g(W, L, b, h, x, z, beta_deg, rho=0.5):
    """Mass m at (x, z) that puts the no-load balance at β; linear in m.

    No-load balance (equal mu, rho = 1/2): N_f = N_r on the grade. From the grade-load moment
    balance N_f = W (b cos θ − h sin θ)/L, N_r = W cos θ − N_f (Gillespie 1992, ch. 2):
        tan β = (b_cg − L/2)/h_cg.
    With the mass added (Jazar 2008, ch. 2, mass centre)
        b_cg = (W b + m x)/(W + m),  h_cg = (W h + m z)/(W + m),
    the (W + m) cancels:
        tan β (W h + m z) = W b + m x − (L/2)(W + m)
        m (z tan β − x + L/2) = W (b − L/2 − h tan β)
        m = W (b − L/2 − h tan β)/(z tan β − x + L/2).
    With unequal mu the no-load handover is where μ_f N_f = μ_r N_r (the overdriven axle slips
    first when μ_s,fast N_fast − μ_s,slow N_slow < F_req = 0), i.e. L/2 becomes ρ L with
    ρ = μ_r/(μ_f + μ_r); the same algebra gives m = W (b − ρL − h tan β)/(z tan β − x + ρL).
    """
    t = math.tan(math.radians(beta_deg))
    return W * (b - rho * L - h * t) / (z * t - x + rho * L)


def handover_closed_deg(b, h, L, mu_f, mu_r, crr):
    """Climbing handover of a front-overdriven rig, no throttle, closed form.

    The front slips first when μ_f N_f − μ_r N_r < W (sin θ + c_rr cos θ) (Coulomb wind-up rule;
    Gillespie 1992 ch. 2 grade and rolling resistance). With N_f = W (b cos θ − h sin θ)/L and
    N_r = W cos θ − N_f (Gillespie ch. 2), equality gives
        tan θ = ((μ_f + μ_r) b/L − μ_r − c_rr)/((μ_f + μ_r) h/L + 1).
    """
    s = mu_f + mu_r
    return math.degrees(math.atan2(s * b / L - mu_r - crr, s * h / L + 1.0))


# ---------------------------------------------------------------- the root finder itself


@pytest.mark.parametrize(
    "fn, a, b",
    [
        (lambda x: x**3 - 2 * x - 5, 2.0, 3.0),  # Wallis's cubic, the classic Newton-method example
        (lambda x: math.cos(x) - x, 0.0, 1.0),  # the Dottie number
        (lambda x: math.exp(x) - 10.0, 0.0, 5.0),
    ],
)
def test_brent_root_matches_scipy_brentq(fn, a, b):
    # reference: scipy.optimize.brentq (the same Brent-Dekker method, independent code)
    ref = brentq(fn, a, b, xtol=1e-14)
    x, fx, other, f_other, _ = brent_root(fn, a, b, fn(a), fn(b), xtol=1e-14)
    assert x == pytest.approx(ref, abs=1e-12)
    assert fx == 0 or f_other == 0 or (fx > 0) != (f_other > 0)  # still a bracket


def test_brent_root_known_values():
    # Wallis's cubic x³ − 2x − 5 = 0 has the real root 2.0945514815423265 (value recalled from memory,
    # the textbook figure quoted with Newton's method); the Dottie number cos x = x is 0.7390851332151607.
    x, *_ = brent_root(lambda x: x**3 - 2 * x - 5, 2.0, 3.0, -1.0, 16.0, xtol=1e-14)
    assert x == pytest.approx(2.0945514815423265, abs=1e-12)
    x, *_ = brent_root(lambda x: math.cos(x) - x, 0.0, 1.0, 1.0, math.cos(1.0) - 1.0, xtol=1e-14)
    assert x == pytest.approx(0.7390851332151607, abs=1e-12)


def test_brent_root_closes_on_a_jump_and_keeps_the_bracket():
    # a step is not a root; the method must still shrink onto it and keep one end on each side
    fn = lambda x: -5.0 if x < 0.3 else 7.0  # noqa: E731
    x, fx, other, f_other, calls = brent_root(fn, 0.0, 1.0, -5.0, 7.0, xtol=1e-12)
    assert abs(x - 0.3) < 1e-9 and abs(other - 0.3) < 1e-9
    assert (fx > 0) != (f_other > 0)
    assert calls < 100


def test_brent_root_refuses_no_bracket():
    with pytest.raises(ValueError):
        brent_root(lambda x: x + 1.0, 0.0, 1.0, 1.0, 2.0, xtol=1e-9)


# ---------------------------------------------------------------- ballast: closed forms


@pytest.mark.parametrize(
    "x, z, beta",
    [(313.0, 40.0, 20.0), (300.0, 40.0, 18.0), (250.0, 120.0, 16.0), (0.0, 30.0, 10.0), (60.0, 20.0, 12.0)],
)
def test_ballast_for_balance_matches_linear_closed_form(x, z, beta):
    s = bare_rig()
    W, L, h = 2380.0, 313.0, 88.0
    b = 0.575 * L
    m_ref = ballast_for_balance_g(W, L, b, h, x, z, beta)
    op = ">=" if beta > 14.94 else "<="  # stock balance is atan((b − L/2)/h) = 14.94°
    p = plan(s, Target("balance", op, beta), AddBallast(x, z, 0.0, 500.0))
    assert 0 < m_ref < 500
    assert p.reached and not p.already_met
    # rounded to the 0.1 g display step, away from the unmet side
    assert p.value == pytest.approx(m_ref, abs=0.1 + 1e-9)
    assert p.added_mass_g == p.value
    # the resulting balance from the mass-centre formula, not from the code under test
    _, bc, hc = mass_centre(W, b, h, p.value, x, z)
    got = math.degrees(math.atan2(bc - L / 2, hc))
    assert got == pytest.approx(beta, abs=0.01)
    assert p.after.angles_deg["balance"] == pytest.approx(got, abs=1e-9)
    assert p.method == "bracket"
    assert p.setup.rig.ballast[-1].mass_g == p.value


def test_ballast_for_no_load_handover_with_unequal_mu_matches_closed_form():
    # front overdriven, front tyres grippier: handover_weight_only is where μ_f N_f = μ_r N_r
    s = replace(bare_rig(), driveline=Driveline(5.0), grip=Grip(1.0, 0.8, 0.03, front_mu_static=1.2, slip_stiffness=math.inf))
    W, L, h, b = 2380.0, 313.0, 88.0, 0.575 * 313.0
    rho = 1.0 / (1.2 + 1.0)
    t0 = math.degrees(math.atan2(b - rho * L, h))
    beta = t0 + 3.0
    m_ref = ballast_for_balance_g(W, L, b, h, 313.0, 40.0, beta, rho)
    p = plan(s, Target("handover_weight_only", ">=", beta), AddBallast(313.0, 40.0))
    assert p.reached and p.value == pytest.approx(m_ref, abs=0.1 + 1e-9)
    assert p.angle_after_deg == pytest.approx(beta, abs=0.01) and p.angle_after_deg >= beta


def test_ballast_for_climbing_handover_matches_brentq_on_closed_form():
    # the scanned (non-monotone) case, on the demo rig with brass and tyre overdrive
    loaded = load_setup(SETUPS / "marmot-overdrive.toml")
    # the closed form is the rigid rule with the tyre diameters: no slip, no roll-out under load
    s = loaded.setup.rigid_tyres()
    # effective rig from the file's numbers by hand (Jazar ch. 2 mass centre)
    masses = [2380.0, 96.0, -38.0]
    xs = [0.575 * 313.0, 313.0, 120.0]
    zs = [88.0, 40.0, 45.0]
    W = sum(masses)
    b = sum(m * x for m, x in zip(masses, xs)) / W
    h = sum(m * z for m, z in zip(masses, zs)) / W

    def handover_with(m):
        _, bc, hc = mass_centre(W, b, h, m, 300.0, 40.0)
        return handover_closed_deg(bc, hc, 313.0, 1.05, 1.0, 0.03)

    m_ref = brentq(lambda m: handover_with(m) - 9.0, 0.0, 500.0, xtol=1e-10)
    p = plan(s, Target("handover", ">=", 9.0), AddBallast(300.0, 40.0))
    assert p.method == "scan"
    assert p.reached and p.value == pytest.approx(m_ref, abs=0.1 + 1e-9)
    assert handover_with(p.value) == pytest.approx(9.0, abs=0.01)
    assert handover_with(p.value) >= 9.0
    # smallest mass: one display step less misses the target
    assert handover_with(p.value - 0.1) < 9.0
    assert p.before.angles_deg["handover"] == pytest.approx(handover_with(0.0), abs=1e-9)


def test_unreachable_ballast_reports_best_at_the_limit():
    s = bare_rig()
    W, L, h, b = 2380.0, 313.0, 88.0, 0.575 * 313.0
    p = plan(s, Target("balance", ">=", 40.0), AddBallast(313.0, 40.0, 0.0, 500.0))
    assert not p.reached
    assert p.value == 500.0  # balance grows with front mass (monotone): best at the top limit
    _, bc, hc = mass_centre(W, b, h, 500.0, 313.0, 40.0)
    assert p.angle_after_deg == pytest.approx(math.degrees(math.atan2(bc - L / 2, hc)), abs=1e-9)
    assert p.margin_deg < 0


def test_already_met_changes_nothing():
    s = bare_rig()
    p = plan(s, Target("balance", "<=", 20.0), AddBallast(313.0, 40.0))
    assert p.reached and p.already_met and p.value == 0.0 and p.added_mass_g == 0.0
    assert p.setup is s


def test_handover_without_overdrive_cannot_be_reached_by_ballast():
    # no overdriven axle: no handover at any mass (MODEL: handover needs a speed mismatch)
    p = plan(bare_rig(), Target("handover", ">=", 12.0), AddBallast(313.0, 40.0))
    assert not p.reached and math.isnan(p.angle_after_deg) and p.value == 0.0


# ---------------------------------------------------------------- other levers


def test_cg_height_for_balance_matches_closed_form():
    # tan β = (b − L/2)/h  ->  h = (b − L/2)/tan β   (Gillespie 1992, ch. 2)
    s = bare_rig()
    b, L = 0.575 * 313.0, 313.0
    for beta in (12.0, 17.0):
        h_ref = (b - L / 2) / math.tan(math.radians(beta))
        op = "<=" if beta < 14.94 else ">="
        p = plan(s, Target("balance", op, beta), CgHeight(-30.0, 30.0))
        assert p.reached and p.method == "bracket"
        assert p.setup.rig.cg_height_mm == pytest.approx(h_ref, abs=0.1 + 1e-9)
        assert p.change == pytest.approx(h_ref - 88.0, abs=0.1 + 1e-9)
        assert math.degrees(math.atan2(b - L / 2, p.setup.rig.cg_height_mm)) == pytest.approx(beta, abs=0.01)


def test_move_ballast_for_balance_matches_closed_form():
    # moving item i from x_i to x' shifts the CG by m_i (x' − x_i)/M, h unchanged (Jazar ch. 2), so
    # tan β = (b + m_i (x' − x_i)/M − L/2)/h  ->  x' = x_i + (L/2 + h tan β − b) M/m_i
    s = replace(bare_rig(), rig=replace(bare_rig().rig, ballast=(
        BallastItem("battery", 320.0, 150.0, 50.0),)))
    W, L = 2380.0 + 320.0, 313.0
    b = (2380.0 * 0.575 * L + 320.0 * 150.0) / W
    h = (2380.0 * 88.0 + 320.0 * 50.0) / W
    beta = 17.0
    x_ref = 150.0 + (L / 2 + h * math.tan(math.radians(beta)) - b) * W / 320.0
    p = plan(s, Target("balance", ">=", beta), MoveBallast(0))
    assert p.reached and p.value == pytest.approx(x_ref, abs=0.1 + 1e-9)
    assert p.added_mass_g == 0.0 and p.setup.rig.ballast[0].x_mm == p.value


def test_overdrive_lever_steps_onto_the_front_overdriven_side():
    # handover_weight_only exists only with an overdriven axle; with equal mu it equals the balance
    # angle tan β = (b − L/2)/h (Gillespie ch. 2) for ANY front overdrive, so the smallest change
    # from 0 % is the smallest overdrive above 0 at the display step.
    s = bare_rig()
    p = plan(s, Target("handover_weight_only", ">=", 10.0), Overdrive(-10.0, 20.0))
    assert p.reached and p.method == "scan"
    assert 0 < p.value <= 0.01 + 1e-12
    b, L, h = 0.575 * 313.0, 313.0, 88.0
    assert p.angle_after_deg == pytest.approx(math.degrees(math.atan2(b - L / 2, h)), abs=1e-9)


def test_compound_lever_matches_brentq_on_closed_form_handover():
    s = replace(bare_rig(), driveline=Driveline(6.0))
    b, L, h = 0.575 * 313.0, 313.0, 88.0
    mu_ref = brentq(lambda mu: handover_closed_deg(b, h, L, mu, mu, 0.03) - 5.0, 0.3, 1.5, xtol=1e-12)
    p = plan(s, Target("handover", ">=", 5.0), Compound(0.3, 1.5))
    assert p.reached and p.value == pytest.approx(mu_ref, abs=0.001 + 1e-12)
    assert p.setup.grip.mu_kinetic == pytest.approx(0.8 * p.value / 1.0)
    assert handover_closed_deg(b, h, L, p.value, p.value, 0.03) >= 5.0


def test_balance_does_not_depend_on_tyre_mu():
    # tan β = (b − L/2)/h has no mu in it (Gillespie ch. 2): the planner says the lever does nothing
    p = plan(bare_rig(), Target("balance", ">=", 20.0), Compound())
    assert not p.reached and p.insensitive and p.value == 1.0


@pytest.mark.parametrize(
    "lever, words",
    [
        (MoveBallast(0), "no ballast items"),
        (AddBallast(313.0, 40.0, 100.0, 50.0), "above max"),
        (CgHeight(10.0, -10.0), "above max"),
        (Compound(0.0, 1.0), "must be > 0"),
    ],
)
def test_bad_levers_are_one_line_errors(lever, words):
    with pytest.raises(LeverError) as exc:
        plan(bare_rig(), Target("balance", ">=", 20.0), lever)
    assert words in str(exc.value) and "\n" not in str(exc.value)


def test_bad_target_is_refused():
    with pytest.raises(LeverError):
        Target("wheelie", ">=", 3.0)
    with pytest.raises(LeverError):
        Target("balance", "==", 3.0)


# ---------------------------------------------------------------- property: reach and minimality


@settings(max_examples=25, deadline=None)
@given(
    x=st.floats(0.0, 313.0),
    z=st.floats(10.0, 150.0),
    beta=st.floats(5.0, 30.0),
)
def test_ballast_plan_agrees_with_linear_closed_form_everywhere(x, z, beta):
    W, L, h, b = 2380.0, 313.0, 88.0, 0.575 * 313.0
    t0 = math.degrees(math.atan2(b - L / 2, h))
    op = ">=" if beta > t0 else "<="
    p = plan(bare_rig(), Target("balance", op, beta), AddBallast(x, z, 0.0, 500.0))

    def bal(m):
        _, bc, hc = mass_centre(W, b, h, m, x, z)
        return math.degrees(math.atan2(bc - L / 2, hc))

    meets = (lambda a: a >= beta) if op == ">=" else (lambda a: a <= beta)
    m_ref = ballast_for_balance_g(W, L, b, h, x, z, beta)
    reachable = meets(bal(500.0))
    assert p.reached == reachable
    if reachable:
        assert meets(bal(p.value)) and abs(bal(p.value) - beta) <= 0.01
        if 0.0 <= m_ref <= 500.0 and abs(z * math.tan(math.radians(beta)) - x + L / 2) > 1e-6:
            assert p.value == pytest.approx(m_ref, abs=0.1 + 1e-6)


def test_goal_seek_imports_no_ui_package():
    code = ("import sys, engine.goal_seek; bad = [m for m in ('textual', 'plotext', 'tomlkit', 'rich', 'scipy')"
            " if m in sys.modules]; print(bad); sys.exit(1 if bad else 0)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=Path(__file__).resolve().parent.parent)
    assert out.returncode == 0, out.stdout + out.stderr


@settings(max_examples=30, deadline=None)
@given(
    setup=rig_setups(),
    angle=st.sampled_from(["handover", "handover_weight_only", "balance", "max_grade", "front_lift"]),
    delta=st.floats(-6.0, 6.0),
    which=st.integers(0, 4),
)
def test_any_rig_any_lever_answer_meets_target_or_says_why(setup, angle, delta, which):
    # Whatever the rig: a reached answer meets the target in an independent re-analysis of the
    # returned setup (the setup, not the planner's cache), stays within the lever's limits, and
    # an unreached one never meets it at the value it reports.
    from slopetune.engine import analyse
    from slopetune.engine.goal_seek import angle_value_deg

    levers = [AddBallast(setup.rig.wheelbase_mm * 0.9, 40.0), CgHeight(), Overdrive(), Compound(),
              MoveBallast(0) if setup.rig.ballast else AddBallast(10.0, 30.0, -100.0, 0.0)]
    lever = levers[which]
    now = angle_value_deg(analyse(setup), angle)
    # targets a few degrees either side of where the rig is now, so many are reachable
    target = Target(angle, ">=" if delta > 0 else "<=", (now if math.isfinite(now) else 20.0) + delta)
    p = plan(setup, target, lever)
    lo, hi = p.limits
    assert lo <= p.value <= hi or p.already_met
    got = angle_value_deg(analyse(p.setup), angle)
    met = target.margin_deg(got) >= 0
    assert met == p.reached
    if p.reached and not p.already_met and p.method == "bracket" and math.isfinite(now) and got > 0.0:
        # the monotone cases are continuous in the lever: the answer lands on the target
        # (not where the angle is clamped at 0 deg or appears from "never below 90 deg")
        assert 0.0 <= target.margin_deg(got) <= 0.01


def test_overdrive_lever_finds_the_single_no_windup_gear_setting():
    # Taller front tyres (114/112 mm) add their own overdrive: only p = 100 (D_r/D_f − 1) gives equal
    # ground speeds (MODEL §4: k = (1 + p/100) D_f/D_r = 1). With no wind-up and equal mu the rig
    # holds while W (sin θ + c_rr cos θ) <= μ W cos θ (Gillespie 1992 ch. 2, traction-limited
    # grade), so max grade = atan(μ − c_rr) = atan(0.97) = 44.13°, above any overdriven setting here.
    s = replace(bare_rig(tire_dia_front_mm=114.0), driveline=Driveline(5.0))
    p = plan(s, Target("max_grade", ">=", 44.0), Overdrive(-10.0, 20.0))
    assert p.before.angles_deg["max_grade"] < 44.0
    assert p.reached
    # to 1e-6 %: the engine counts ratios within 1e-9 of 1 as equal speeds
    assert p.value == pytest.approx(100.0 * (112.0 / 114.0 - 1.0), abs=1e-6)
    assert p.after.angles_deg["max_grade"] == pytest.approx(math.degrees(math.atan(0.97)), abs=1e-6)
    assert p.after.overdrive.overdriven_axle is None
