"""Calibrating the slip stiffness c: the slip test's closed form and the ramp test's range.

Sources: the brush model with parabolic pressure (Pacejka, *Tire and Vehicle Dynamics*, 3rd ed.,
2012, sec. 3.2: ψ(λ) = 3λ − 3λ² + λ³ on [0, 1]); the grade-load equation (Gillespie, *Fundamentals
of Vehicle Dynamics*, 1992, ch. 2). Expected values are worked by hand (steps in the comments) or
come from a different method (scipy's root finder on the forward brush curve).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from slopetune.engine.slip_calibration import slip_test, stiffness_range

# Hand-worked rig: W 2000 g, L 300 mm, b 150 mm, h 100 mm, c_rr 0.03, mu_s 1.0, board at 10 deg.
#   sin 10 = 0.173648, cos 10 = 0.984808 (four-figure tables)
#   F   = 2000 (0.173648 + 0.03 * 0.984808)            = 406.38 g    (the rear alone climbs)
#   N_f = 2000 (150 * 0.984808 - 100 * 0.173648) / 300 = 869.04 g    (Gillespie ch. 2)
#   N_r = 2000 * 0.984808 - 869.04                     = 1100.57 g
#   u   = 406.38 / 1100.57                             = 0.36925
#   λ   = 1 - (1 - u)^(1/3) = 1 - 0.63075^(1/3)         = 0.14240    (ψ inverted by hand)
#   10 turns of a 100 mm tyre roll out 3141.59 mm; the rig went 3000 mm:
#   σ   = 1 - 3000 / 3141.59                           = 0.045070
#   c   = 3 * 1.0 * 0.14240 / 0.045070                 = 9.478
RIG = dict(weight_g=2000.0, wheelbase_mm=300.0, cg_from_rear_mm=150.0, cg_height_mm=100.0,
           rolling_resistance=0.03, mu_static=1.0, rolling_dia_mm=100.0)


def test_slip_test_hand_worked():
    r = slip_test(**RIG, slope_deg=10.0, turns=10.0, distance_mm=3000.0)
    assert r.problems == []
    assert r.force_g[0] == pytest.approx(406.38, abs=0.01)
    assert r.normal_g[0] == pytest.approx(1100.57, abs=0.01)
    assert r.sigma[0] == pytest.approx(0.045070, abs=1e-6)
    assert r.stiffness[0] == pytest.approx(9.478, abs=0.002)
    assert r.stiffness_fit == pytest.approx(9.478, abs=0.002)


def test_slip_test_front_axle_uses_the_front_load():
    # Rear driveshaft out: the front alone climbs on N_f = 869.04 g (hand-worked above):
    # u = 406.38 / 869.04 = 0.46762, λ = 1 - 0.53238^(1/3) = 1 - 0.81047 = 0.18953,
    # c = 3 * 0.18953 / 0.045070 = 12.615
    r = slip_test(**RIG, slope_deg=10.0, turns=10.0, distance_mm=3000.0, axle="front")
    assert r.stiffness[0] == pytest.approx(12.615, abs=0.003)


def psi(lam):
    return 3 * lam - 3 * lam * lam + lam ** 3  # Pacejka sec. 3.2, 0 <= λ <= 1


@pytest.mark.parametrize("c_true", [4.0, 7.5, 15.0, 60.0])
def test_slip_test_recovers_c_from_a_forward_brush_run(c_true):
    # A different method: for a tyre of stiffness c_true find, with scipy's brentq on the forward
    # brush curve, the slip at which it carries the climb; the distance that slip gives over three
    # board angles must give c_true back.
    t = np.radians([6.0, 10.0, 14.0])
    F = 2000 * (np.sin(t) + 0.03 * np.cos(t))
    Nf = 2000 * (150 * np.cos(t) - 100 * np.sin(t)) / 300
    Nr = 2000 * np.cos(t) - Nf
    sig = [brentq(lambda s: Nr[i] * psi(c_true * s / 3.0) - F[i], 0.0, 3.0 / c_true) for i in range(3)]
    turns = 10.0
    x = turns * math.pi * 100.0 * (1 - np.array(sig))
    r = slip_test(**RIG, slope_deg=[6.0, 10.0, 14.0], turns=turns, distance_mm=x)
    assert r.problems == []
    np.testing.assert_allclose(r.stiffness, c_true, rtol=1e-7)
    assert r.stiffness_fit == pytest.approx(c_true, rel=1e-7)


def test_slip_test_names_runs_it_cannot_use():
    r = slip_test(**RIG, slope_deg=[10.0, 10.0, 40.0, 10.0], turns=10.0, distance_mm=[3000.0, 3200.0, 3000.0, 2000.0])
    why = dict(r.problems)
    assert set(why) == {1, 2, 3}
    assert "no slip shows" in why[1]  # 3200 mm > 3141.6 mm roll-out
    # at 40 deg: F = 2000 (0.6428 + 0.03 * 0.7660) = 1331.6 g; N_r = 2000 (150 * 0.7660 + 100 * 0.6428)/300
    # = 1194.5 g (hand-worked): more than mu N_r, the rear would spin
    assert "cannot carry" in why[2] and "1332 g" in why[2]
    assert "spinning" in why[3]  # σ = 0.363: c = 1.18 < 3 mu_s
    assert math.isnan(r.stiffness[1]) and r.stiffness_fit == pytest.approx(9.478, abs=0.002)


# ---- ramp test: the range of c that fits a reading --------------------------------------------
# A made-up handover curve with the shape MODEL section 5 gives (never rising with c, flat at both
# ends): 8 deg for a rigid tyre, 8 + 40/c, never scrubbing once that passes the 30 deg max grade.


def curve(c):
    if math.isinf(c):
        return 8.0, 30.0
    h = 8.0 + 40.0 / c
    return (h if h < 30.0 else None), 30.0


def test_range_fits_the_reading_plus_minus_one_degree():
    # 8 + 40/c = 13 +- 1 -> c from 40/6 = 6.667 to 40/4 = 10 (hand); exact 40/5 = 8
    r = stiffness_range(curve, 13.0, floor=3.0)
    assert r.fits and r.low == pytest.approx(40 / 6, rel=1e-3) and r.high == pytest.approx(10.0, rel=1e-3)
    assert r.exact == pytest.approx(8.0, rel=1e-3)
    assert "from 6.67 to 10 fits" in r.words


def test_a_reading_near_the_rigid_handover_fits_every_stiff_tyre():
    r = stiffness_range(curve, 8.5, floor=3.0)  # 8 + 40/c <= 9.5 -> c >= 26.67
    assert r.fits and math.isinf(r.high) and r.low == pytest.approx(40 / 1.5, rel=1e-3)
    assert "every c above 26.7" in r.words


def test_never_scrubs_fits_every_soft_tyre():
    r = stiffness_range(curve, None, floor=1.5)  # 8 + 40/c >= 30 -> c <= 1.818
    assert r.fits and r.low == pytest.approx(1.5, rel=1e-2) and r.high == pytest.approx(40 / 22, rel=1e-3)
    assert "every c up to 1.82" in r.words


def test_no_c_fits_below_the_rigid_handover_or_above_the_max_grade():
    below = stiffness_range(curve, 5.0, floor=3.0)
    assert not below.fits and "below the rigid handover 8.0 deg" in below.words
    above = stiffness_range(curve, 35.0, floor=3.0)
    assert not above.fits and "above the max grade 30.0 deg" in above.words


# ---- the command line ----------------------------------------------------------------------

HAND_RIG = """\
schema = 1
name = "hand-worked rig"
[rig]
mass_g = 2000
wheelbase_mm = 300
front_bias_pct = 50
cg_height_mm = 100
track_mm = 200
tire_dia_front_mm = 100
tire_dia_rear_mm = 100
[grip]
mu_static = 1.0
mu_kinetic = 0.8
rolling_resistance = 0.03
[terrain]
slope_deg = 10
"""


def test_cli_slip_test_hand_worked(tmp_path, capsys):
    from slopetune.tui.cli import main

    f = tmp_path / "rig.toml"
    f.write_text(HAND_RIG)
    code = main(["measure", "slip-test", "--from", str(f), "--axle", "rear", "--run", "10:10:3000"])
    out, err = capsys.readouterr()
    assert code == 0 and err == ""
    # worked by hand at the top of this file: c = 9.478, shown to 0.1
    assert out.startswith("rear slip stiffness c 9.5 (slip test, 1 run, front driveshaft out)")
    assert "slip 4.5 %" in out and "3142 mm roll-out" in out


def test_cli_slip_test_refuses_a_run_that_shows_no_slip(tmp_path, capsys):
    from slopetune.tui.cli import main

    f = tmp_path / "rig.toml"
    f.write_text(HAND_RIG)
    code = main(["measure", "slip-test", "--from", str(f), "--axle", "rear", "--run", "10:10:3200"])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1 and "--run 10:10:3200" in err and "no slip shows" in err



# ---- ramp test through the analysis: round trip -----------------------------------------------


@pytest.mark.parametrize("c_true", [19.0, 40.0])
def test_ramp_round_trip_a_handover_gives_back_a_range_holding_its_c(c_true):
    # The handover the analysis gives at c_true, read as a ramp test would (to 0.1 deg), must give a
    # range of c that holds c_true: the calibration inverts the analysis it is built on.
    from pathlib import Path

    from slopetune.engine import analyse, load_setup
    from slopetune.engine.slip_calibration import handover_range, one_stiffness

    setup = load_setup(Path(__file__).resolve().parents[1] / "setups" / "marmot-overdrive.toml").setup
    seen = round(analyse(one_stiffness(setup, c_true)).angles_deg["handover"], 1)
    found = handover_range(setup, seen)
    assert found.fits and found.low <= c_true <= found.high, (seen, found)
    assert math.isfinite(found.high) and found.exact == pytest.approx(c_true, rel=0.02)
