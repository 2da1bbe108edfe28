"""Driveline wind-up and which axle lets go, against independent methods: a brute-force simulation
of the wind-up pair (Coulomb friction, Serway & Beichner ch. 5) and the plain-Python reference
model of MODEL sections 2-5 (tests/reference_model.py: scalar loop, 0.01 deg scan, brentq).

The published rules are checked in test_traction_published.py, `report --json` against the
reference in test_report_reference.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from slopetune import engine
from slopetune.engine import traction as tr

import reference_model as ref
from conftest import examples, rig_setups


# --- wind-up simulated directly ----------------------------------------------------------------

def simulate_windup(n_fast, n_slow, f_req, mu_fast, mu_slow, start_fast, step):
    """Grow the internal pair P from a starting split until a contact reaches μ_s N.

    Coulomb static friction (Serway & Beichner ch. 5): a contact holds while |F| <= μ_s N. The fast
    axle carries start + P, the slow one (F_req − start) − P. Returns "fast" or "slow".
    """
    fast, slow = start_fast, f_req - start_fast
    while True:
        fast += step
        slow -= step
        if fast >= mu_fast * n_fast:
            return "fast"
        if slow <= -mu_slow * n_slow:
            return "slow"


@settings(max_examples=examples(150))
@given(rig_setups(), st.floats(-60.0, 60.0))
def test_windup_simulation_agrees_with_closed_form(setup, slope_deg):
    # Coulomb friction + wind-up pair grown in steps from five starting splits (MODEL §5 criterion
    # checked by brute force): the contact that reaches its static limit first is the one that
    # lets go; the closed form says the starting split does not matter.
    a = engine.analyse(setup, [slope_deg])
    od = a.overdrive.overdriven_axle
    assume(od is not None)
    s = a.sweep
    nf, nr, f_req = float(s.front_normal_g[0]), float(s.rear_normal_g[0]), float(s.required_g[0])
    assume(nf > 0 and nr > 0)
    (msf, mkf, msr, mkr) = setup.grip.axle_mu()
    n_fast, n_slow, ms_fast, ms_slow, mk_fast, mk_slow = (
        (nf, nr, msf, msr, mkf, mkr) if od == "front" else (nr, nf, msr, msf, mkr, mkf))
    # a starting split must itself be within both static limits
    lo = max(-ms_fast * n_fast, f_req - ms_slow * n_slow)
    hi = min(ms_fast * n_fast, f_req + ms_slow * n_slow)
    assume(hi - lo > 1e-3 * a.rig.mass_g)
    step = 2e-4 * a.rig.mass_g
    tie = ms_fast * n_fast - ms_slow * n_slow - f_req
    assume(abs(tie) > 4 * step)  # closer than a step or two the simulation cannot tell

    firsts = {simulate_windup(n_fast, n_slow, f_req, ms_fast, ms_slow, lo + frac * (hi - lo), step)
              for frac in (0.02, 0.25, 0.5, 0.75, 0.98)}
    assert len(firsts) == 1  # the starting split drops out
    first = firsts.pop()
    assert bool(tr.fast_slips_first(n_fast, n_slow, f_req, ms_fast, ms_slow)) == (first == "fast")

    # after it lets go the loose axle carries μ_k N; the other must hold the rest within μ_s N
    if first == "fast":
        other_needs, other_cap = f_req - mk_fast * n_fast, ms_slow * n_slow
        letting_go = od
    else:
        other_needs, other_cap = f_req + mk_slow * n_slow, ms_fast * n_fast
        letting_go = "rear" if od == "front" else "front"
    assume(abs(abs(other_needs) - other_cap) > 1e-9 * a.rig.mass_g)
    expected = letting_go if abs(other_needs) <= other_cap else "both"
    assert s.slipping[0] == expected
    if expected != "both":
        front, rear = float(s.traction.front_force_g[0]), float(s.traction.rear_force_g[0])
        assert front + rear == pytest.approx(f_req, abs=1e-9 * a.rig.mass_g)  # Newton along the slope


# --- the independent reference model -----------------------------------------------------------

SWEEP_DEG = np.arange(-89.0, 89.5, 0.5)


def _expected_accel(setup):
    """Named angles are for a steady climb (MODEL section 5): no throttle."""
    return 0.0


@settings(max_examples=examples(100))
@given(rig_setups())
def test_named_traction_angles_and_states_match_reference(setup):
    # MODEL §3–5 recomputed by tests/reference_model.py (scalar loop, 0.01 deg scan, brentq).
    # Tolerances from the issue: handover and max grade within 0.1 deg; state identical at every
    # sweep row farther than 0.2 deg from a transition.
    a = engine.analyse(setup, SWEEP_DEG)
    r = ref.ref_rig_from_setup(setup)
    climb = ref.ref_rig_from_setup(setup, accel_g=_expected_accel(setup))
    coast = ref.ref_rig_from_setup(setup, load="none")
    assert a.overdrive.overdriven_axle == r.overdriven

    want_grade, _ = ref.max_grade_deg(climb)
    for name, rig in (("handover", climb), ("handover_weight_only", coast)):
        want, got = ref.handover_deg(rig), a.angles_deg[name]
        if name == "handover" and want is not None and want > want_grade - 0.1:
            # MODEL section 5: a handover is only one below the max grade; where the fast axle's
            # letting go is itself the end of the grade (the other cannot hold), there is none
            assert got is None or got == pytest.approx(want, abs=0.1)
            continue
        if want is None:
            assert got is None, name
        else:
            assert got == pytest.approx(want, abs=0.1), name

    want_grade, want_limit = ref.max_grade_deg(climb)
    assert a.angles_deg["max_grade"] == pytest.approx(want_grade, abs=0.1)
    assert a.max_grade_limit == want_limit

    angles, names = ref.state_grid(r)
    changes = np.array(ref.transitions(angles, names) or [1e9])
    got_states = a.sweep.slipping
    for i, t in enumerate(SWEEP_DEG):
        if np.min(np.abs(changes - t)) <= 0.2:
            continue
        want = ref.state_at(r, t)
        assert got_states[i] == want.name, f"slope {t}"
        if want.name in ("front", "rear"):
            W = r.weight_g
            assert a.sweep.traction.front_force_g[i] == pytest.approx(want.front_force, abs=1e-6 * W)
            assert a.sweep.traction.rear_force_g[i] == pytest.approx(want.rear_force, abs=1e-6 * W)
            assert a.sweep.traction.reserve_g[i] == pytest.approx(want.reserve, abs=1e-6 * W)


@given(rig_setups(), st.lists(st.floats(-89.0, 89.0), min_size=1, max_size=30))
def test_holding_axles_carry_the_required_force(setup, slopes):
    # Newton along the slope (Gillespie ch. 2): while the rig holds, the two ground forces add up to
    # F_req, and neither exceeds its static limit μ_s N (Coulomb, Serway & Beichner ch. 5).
    s = engine.analyse(setup, slopes).sweep
    fs, _, rs, _ = setup.grip.axle_mu()
    W = setup.rig.mass_g
    for i, state in enumerate(s.slipping):
        if state in ("none", "front", "rear"):
            f, r_ = s.traction.front_force_g[i], s.traction.rear_force_g[i]
            assert f + r_ == pytest.approx(s.required_g[i], abs=1e-9 * W)
            assert abs(f) <= fs * s.front_normal_g[i] + 1e-9 * W
            assert abs(r_) <= rs * s.rear_normal_g[i] + 1e-9 * W
        if state == "lifted":
            assert min(s.front_normal_g[i], s.rear_normal_g[i]) <= 0


# --- named traction angles sit where the sweep changes ------------------------------------------

@given(rig_setups())
def test_handover_and_max_grade_are_where_the_sweep_changes(setup):
    # Definitions (MODEL §5): just past the handover the overdriven axle is the first to let go
    # (alone, or with the other following: both); just before it, it is not. Just below the max
    # grade the rig holds; just above, it does not.
    eps = 0.01
    a = engine.analyse(setup)
    od = a.overdrive.overdriven_axle
    climb = engine.analyse(setup, accel_g=_expected_accel(setup))  # named angles: a steady climb
    h = a.angles_deg["handover"]
    if h is not None and eps < h < 90 - eps:
        before, after = climb.at([h - eps, h + eps]).slipping
        assert after in (od, "both")
        assert before != od
    m = a.angles_deg["max_grade"]
    if eps < m < 90 - eps:
        before, after = climb.at([m - eps, m + eps]).slipping
        assert before in ("none", "front", "rear")
        assert after == ("lifted" if a.max_grade_limit == "lift" else "both")
