"""The planner's answer does not depend on limits wider than needed (issue 12, item 14), and its
scan-then-bracket search finds roots of margins that move continuously with the lever (the tyre
slip model makes the handover and the max grade move with the amount of overdrive).

Expected values are closed forms worked by hand (Gillespie, *Fundamentals of Vehicle Dynamics*,
1992, ch. 2, axle loads on a grade; Jazar, *Vehicle Dynamics*, 2008, ch. 2, mass centre) or roots
from `scipy.optimize.brentq`; none comes from the planner itself.
"""

from __future__ import annotations

import math
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.optimize import brentq

from slopetune.engine import Driveline, Grip, Rig, Setup, Terrain
from slopetune.engine import goal_seek
from slopetune.engine.goal_roots import nearest_roots, outward_margins, scan_points
from slopetune.engine.goal_seek import AddBallast, CgHeight, Compound, Overdrive, Target, plan

W, L, B, H = 2380.0, 313.0, 0.575 * 313.0, 88.0


def bare_rig() -> Setup:
    rig = Rig(W, L, 57.5, H, 252.0, 112.0, 112.0)
    return Setup("bare", rig, Driveline(0.0), Grip(1.0, 0.8, 0.03), Terrain(30.0))


def balance_mass_g(x, z, beta_deg):
    """Mass at (x, z) putting the balance angle at β: tan β = (b − L/2)/h with the mass-weighted
    centre b = (W B + m x)/(W + m), h = (W H + m z)/(W + m), solved for m (linear)."""
    t = math.tan(math.radians(beta_deg))
    return W * (B - L / 2 - H * t) / (z * t - x + L / 2)


@pytest.mark.parametrize("lo, hi", [(0.0, 500.0), (0.0, 1e9), (-1e9, 500.0), (-1e9, 1e9), (-1e6, 1e6)])
def test_ballast_answer_ignores_wide_limits(lo, hi):
    m_ref = balance_mass_g(300.0, 40.0, 20.0)  # about 37 g (hand-worked from the form above)
    p = plan(bare_rig(), Target("balance", ">=", 20.0), AddBallast(300.0, 40.0, lo, hi))
    assert p.reached and p.value == pytest.approx(m_ref, abs=0.1 + 1e-9)


@pytest.mark.parametrize("lo, hi", [(-30.0, 30.0), (-1e9, 1e9), (-1e9, 30.0), (-30.0, 1e9)])
def test_cg_height_answer_ignores_wide_limits(lo, hi):
    # h = (b − L/2)/tan β: lowering the CG raises the balance angle (Gillespie ch. 2)
    h_ref = (B - L / 2) / math.tan(math.radians(20.0))
    p = plan(bare_rig(), Target("balance", ">=", 20.0), CgHeight(lo, hi))
    assert p.reached and p.setup.rig.cg_height_mm == pytest.approx(h_ref, abs=0.1 + 1e-9)
    assert p.change < 0  # the way that reaches it, whatever the limits


@pytest.mark.parametrize("lever", [Overdrive(-1e9, 1e9), Compound(1e-9, 1e9), AddBallast(300.0, 40.0, -1e9, 1e9)])
def test_limits_beyond_what_the_file_allows_still_give_a_valid_setup(lever):
    from slopetune.engine.goal_seek import setup_is_valid

    s = replace(bare_rig(), driveline=Driveline(6.0))
    p = plan(s, Target("max_grade", ">=", 40.0), lever)
    assert setup_is_valid(p.setup)


def _fake_analysis(setup, angle_of_p):
    """An analysis whose named angle is a given function of the overdrive [%] (None: no angle)."""
    p = setup.driveline.overdrive_pct
    v = angle_of_p(p)
    angles = {name: None for name in goal_seek.TARGET_ANGLES}
    name = "handover" if "handover" in angle_of_p.__name__ else "max_grade"
    angles[name] = v
    od = SimpleNamespace(overdriven_axle="front" if p > 0 else ("rear" if p < 0 else None))
    return SimpleNamespace(angles_deg=angles, overdrive=od)


def handover_continuous(p):
    # more overdrive, earlier handover, smoothly: 40 − 25 (1 − e^(−p/8)) deg for p > 0
    return None if p <= 0 else 40.0 - 25.0 * (1.0 - math.exp(-p / 8.0))


def max_grade_hump(p):
    # not monotone: best at 3 % (44 deg), falling off both ways
    return 44.0 - 0.02 * (p - 3.0) ** 2


@pytest.fixture
def continuous_overdrive(monkeypatch):
    def use(fn):
        monkeypatch.setattr(goal_seek, "analyse", lambda setup, slopes=None: _fake_analysis(setup, fn))
    return use


def test_overdrive_search_follows_a_continuous_handover(continuous_overdrive):
    continuous_overdrive(handover_continuous)
    # 40 − 25 (1 − e^(−p/8)) = 30  ->  e^(−p/8) = 0.6  ->  p = −8 ln 0.6 = 4.0866 % (by hand)
    for lever in (Overdrive(), Overdrive(-1e9, 1e9), Overdrive(-50.0, 99.0)):
        result = plan(bare_rig(), Target("handover", "<=", 30.0), lever)
        assert result.reached and result.value == pytest.approx(-8.0 * math.log(0.6), abs=0.01 + 1e-9)


@pytest.mark.parametrize("start, expected", [(0.0, 3.0 - math.sqrt(5.0)), (10.0, 3.0 + math.sqrt(5.0))])
def test_overdrive_search_finds_the_nearest_side_of_a_hump(continuous_overdrive, start, expected):
    continuous_overdrive(max_grade_hump)
    # 44 − 0.02 (p − 3)² >= 43.9  <=>  |p − 3| <= √5 (by hand): the nearest edge from each start
    s = replace(bare_rig(), driveline=Driveline(start))
    result = plan(s, Target("max_grade", ">=", 43.9), Overdrive(-1e9, 1e9))
    assert result.reached and result.value == pytest.approx(expected, abs=0.01 + 1e-9)


def test_scan_then_bracket_agrees_with_brentq_on_a_wavy_margin():
    def g(v):
        return math.sin(v / 7.0) + 0.3 * math.sin(v / 1.3) - 0.4  # several roots, not monotone
    calls = []

    def margin(v):
        calls.append(v)
        return g(v)

    pts = scan_points(0.0, -1e6, 1e6, 60.0, 49)
    vals = outward_margins(margin, pts, 0.0)
    roots = nearest_roots(margin, pts, vals, 0.0, 0.0, 1e-10)
    # the first sign change either side of 0, found by brentq on a fine grid (scipy)
    grid = np.linspace(0.0, 60.0, 60001)
    up = next(i for i in range(len(grid) - 1) if g(grid[i + 1]) >= 0 > g(grid[i]))
    down = next(i for i in range(len(grid) - 1) if g(-grid[i + 1]) >= 0 > g(-grid[i]))
    expect = {brentq(g, grid[up], grid[up + 1], xtol=1e-12), brentq(g, -grid[down + 1], -grid[down], xtol=1e-12)}
    assert sorted(roots) == pytest.approx(sorted(expect), abs=1e-8)
    assert len(calls) < 200  # outward scan: cost set by the distance to the roots, not by ±1e6
