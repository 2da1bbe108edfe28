"""One axle's static mu by slide angle, the other axle on a low-friction sheet (MODEL section 7).

Expected values come from outside the code under test: a hand-worked rig, sympy solving the full
planar equilibrium of the rig on the board, the fore-aft mirror of the statics, and the setup file
as written by the command line.
"""

from __future__ import annotations

import math
import re
import shutil
from functools import lru_cache
from pathlib import Path

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from board_rigs import board_rigs

from slopetune.engine import load_setup
from slopetune.engine.measure import (
    MU_STATIC_MAX, mu_from_slide_angle, mu_one_axle_from_slide_angle, one_axle_top_angle_deg, slide_angle_checks,
)
from slopetune.tui.cli import main

from conftest import examples

ROOT = Path(__file__).resolve().parents[1]
OVERDRIVE = ROOT / "setups" / "marmot-overdrive.toml"
CASES = [("front", "up"), ("front", "down"), ("rear", "up"), ("rear", "down")]


# ---- a rig worked by hand -------------------------------------------------------------------
# W 2000 g, L 300 mm, front bias 60 % (b 180 mm ahead of the rear axle, a 120 mm behind the
# front), CG h 100 mm. Board at α with tan α = 0.5 exactly (α = 26.5651 deg): sin α = 1/√5 =
# 0.447214, cos α = 2/√5 = 0.894427. Along the board the weight pulls W sin α = 894.43 g; the
# blocked axle alone must hold that (the sheet under the other axle holds nothing).
# Normal loads, grade-load equation (Gillespie ch. 2, moments about the rear contact):
#   facing up   (θ = +α): N_f = 2000 (180·0.894427 − 100·0.447214)/300 = 2000·116.276/300 = 775.17 g
#                          N_r = 2000·0.894427 − 775.17 = 1013.69 g
#   facing down (θ = −α): N_f = 2000 (180·0.894427 + 100·0.447214)/300 = 2000·205.719/300 = 1371.46 g
#                          N_r = 1788.85 − 1371.46 = 417.39 g
# At the slide μ = W sin α / N (Coulomb, Serway & Beichner ch. 5):
#   front, up 894.43/775.17 = 1.153846 (= 300·0.5/(180 − 50) = 150/130)
#   rear,  up 894.43/1013.69 = 0.882353 (= 150/(120 + 50) = 150/170)
#   front, down 894.43/1371.46 = 0.652174 (= 150/(180 + 50) = 150/230)
#   rear,  down 894.43/417.39 = 2.142857 (= 150/(120 − 50) = 150/70)
HAND = dict(wheelbase_mm=300.0, cg_from_rear_mm=180.0, cg_height_mm=100.0)
HAND_ANGLE_DEG = math.degrees(math.atan(0.5))
HAND_MU = {("front", "up"): 150 / 130, ("rear", "up"): 150 / 170,
           ("front", "down"): 150 / 230, ("rear", "down"): 150 / 70}


@pytest.mark.parametrize("axle, facing", CASES)
def test_hand_worked_rig(axle, facing):
    # Worked by hand above (grade loads: Gillespie ch. 2; slide: Serway & Beichner ch. 5).
    got = mu_one_axle_from_slide_angle(HAND_ANGLE_DEG, axle=axle, facing=facing, **HAND)
    assert got == pytest.approx(HAND_MU[axle, facing], rel=1e-12)
    # to the 4 figures of the hand sums
    written = {("front", "up"): 1.1538, ("rear", "up"): 0.8824, ("front", "down"): 0.6522, ("rear", "down"): 2.1429}
    assert got == pytest.approx(written[axle, facing], abs=5e-5)


def test_hand_worked_rig_is_not_tan_alpha():
    # The point of the one-axle statics (MODEL section 7): tan α = 0.5 here, none of the four is.
    for axle, facing in CASES:
        got = mu_one_axle_from_slide_angle(HAND_ANGLE_DEG, axle=axle, facing=facing, **HAND)
        assert abs(got - 0.5) > 0.15


def test_vectorised_over_angles_and_rigs():
    # Same hand-worked rig; a second rig with h → 0.001 mm where the load transfer vanishes and
    # μ = L tan α / d (worked by hand: 300·0.5/180 = 0.8333). Broadcasting: one call, two rigs.
    got = mu_one_axle_from_slide_angle([HAND_ANGLE_DEG, HAND_ANGLE_DEG], 300.0, 180.0, [100.0, 1e-3], "front", "up")
    assert got.shape == (2,)
    assert got[0] == pytest.approx(150 / 130, rel=1e-12) and got[1] == pytest.approx(150 / 180, rel=1e-5)


# ---- refusals ---------------------------------------------------------------------------------
# Hand-worked rig: the front lifts facing up at tan α = b/h = 1.8 (60.945 deg), the rear lifts
# facing down at tan α = a/h = 1.2 (50.194 deg) (Gillespie ch. 2 lift angles, worked by hand).


@pytest.mark.parametrize("axle, facing, angle, why", [
    ("rear", "up", 61.0, "the front lifts: the rig tips over backwards before sliding on the rear"),
    ("front", "down", 50.3, "the rear lifts: the rig tips over its nose before sliding on the front"),
    ("front", "up", 0.0, "a level board needs no friction"),
    ("front", "up", -5.0, "not a slide angle"),
    ("rear", "down", 90.0, "the board on end"),
])
def test_impossible_cases_are_nan(axle, facing, angle, why):
    assert math.isnan(mu_one_axle_from_slide_angle(angle, axle=axle, facing=facing, **HAND)), why


def test_just_short_of_the_tip_is_finite():
    # 60.9 deg facing up on the rear: tan = 1.7966 < 1.8, the front still touches (by hand).
    got = mu_one_axle_from_slide_angle(60.9, axle="rear", facing="up", **HAND)
    t = math.tan(math.radians(60.9))
    assert got == pytest.approx(300 * t / (120 + 100 * t), rel=1e-12)


@pytest.mark.parametrize("rig", [dict(wheelbase_mm=300.0, cg_from_rear_mm=0.0, cg_height_mm=100.0),
                                 dict(wheelbase_mm=300.0, cg_from_rear_mm=300.0, cg_height_mm=100.0),
                                 dict(wheelbase_mm=300.0, cg_from_rear_mm=150.0, cg_height_mm=0.0)])
def test_a_geometry_that_is_no_rig_is_nan_and_refused_by_name(rig):
    assert math.isnan(mu_one_axle_from_slide_angle(20.0, axle="front", facing="up", **rig))
    (check,) = slide_angle_checks(20.0, axle="front", facing="up", **rig)
    assert check.refuse and check.reading == "rig"


def test_unknown_axle_or_facing_raises():
    with pytest.raises(ValueError):
        mu_one_axle_from_slide_angle(20.0, axle="both", facing="up", **HAND)
    with pytest.raises(ValueError):
        mu_one_axle_from_slide_angle(20.0, axle="front", facing="sideways", **HAND)


# ---- an independent solution: sympy, the full planar equilibrium -----------------------------


@lru_cache(maxsize=None)
def sympy_case(axle: str, facing: str):
    """(μ, N_measured, N_other) as functions of (W, L, b, h, α [rad]), from sympy solving the rig's
    planar equilibrium on the board (Meriam & Kraige, *Engineering Mechanics: Statics*, ch. 3).

    Board frame: x up the board, y out of it. Rear contact at x = 0; the front at x = ±L and the CG
    at (±b, h), + facing up. Gravity (−W sin α, −W cos α) at the CG. Normal forces at both
    contacts; friction F along x at the measured contact only. Three equations — forces along and
    normal to the board, moments about the CG (not about a contact, as the code does) — for N_f,
    N_r, F; then the slide condition F = μ N_measured gives μ.
    """
    import sympy as sp

    W, L, b, h, al = sp.symbols("W L b h alpha", positive=True)
    nf, nr, f = sp.symbols("N_f N_r F", real=True)
    n = 1 if facing == "up" else -1
    x_rear, x_front, x_cg = 0, n * L, n * b
    equations = [
        sp.Eq(f - W * sp.sin(al), 0),  # along the board
        sp.Eq(nf + nr - W * sp.cos(al), 0),  # normal to it
        # moments about the CG, z out of the page: (x_i − x_cg)·N_i for the normals, +h·F for the
        # friction acting h below the CG; gravity acts at the CG
        sp.Eq((x_front - x_cg) * nf + (x_rear - x_cg) * nr + h * f, 0),
    ]
    sol = sp.solve(equations, [nf, nr, f], dict=True)[0]
    measured, other = (sol[nf], sol[nr]) if axle == "front" else (sol[nr], sol[nf])
    args = (W, L, b, h, al)
    return (sp.lambdify(args, sol[f] / measured, "math"), sp.lambdify(args, measured, "math"),
            sp.lambdify(args, other, "math"))


rigs = board_rigs


@settings(max_examples=examples(300))
@given(rigs, st.floats(0.5, 89.5), st.sampled_from(CASES))
def test_matches_sympy_planar_equilibrium(rig, angle_deg, case):
    # sympy's solution of the full equilibrium (Meriam & Kraige ch. 3) over many rigs and angles:
    # where both axles stand on the board the code's μ equals sympy's; elsewhere it is NaN.
    w, wheelbase, share, h_frac = rig
    b, h = share * wheelbase, h_frac * wheelbase
    mu_s, n_measured, n_other = sympy_case(*case)
    al = math.radians(angle_deg)
    got = mu_one_axle_from_slide_angle(angle_deg, wheelbase, b, h, *case)
    if n_measured(w, wheelbase, b, h, al) > 1e-9 * w and n_other(w, wheelbase, b, h, al) > 1e-9 * w:
        assert got == pytest.approx(mu_s(w, wheelbase, b, h, al), rel=1e-9)
    elif n_measured(w, wheelbase, b, h, al) < -1e-9 * w or n_other(w, wheelbase, b, h, al) < -1e-9 * w:
        assert math.isnan(got)


@settings(max_examples=examples(200))
@given(rigs, st.sampled_from(CASES))
def test_plausibility_bound_matches_sympy(rig, case):
    # The steepest angle `slide_angle_checks` takes: sympy's μ there is the file's limit of 5
    # ("mu"), or sympy's load on the other axle is zero there ("tip", the rig tips over the
    # measured axle). Just inside it is taken, just outside refused (Meriam & Kraige ch. 3).
    w, wheelbase, share, h_frac = rig
    b, h = share * wheelbase, h_frac * wheelbase
    rig_kw = dict(wheelbase_mm=wheelbase, cg_from_rear_mm=b, cg_height_mm=h)
    top, limit = one_axle_top_angle_deg(wheelbase, b, h, *case)
    assume(0.02 < top < 89.98)
    mu_s, _n_measured, n_other = sympy_case(*case)
    al = math.radians(top)
    if limit == "mu":
        assert mu_s(w, wheelbase, b, h, al) == pytest.approx(MU_STATIC_MAX, rel=1e-9)
        assert n_other(w, wheelbase, b, h, al) > 0
    else:
        assert n_other(w, wheelbase, b, h, al) == pytest.approx(0.0, abs=1e-9 * w)
        assert mu_s(w, wheelbase, b, h, al) <= MU_STATIC_MAX * (1 + 1e-12)
    axle, facing = case
    inside, outside = top - 0.01, top + 0.01
    assert slide_angle_checks(inside, axle=axle, facing=facing, **rig_kw) == []
    assert 0 < mu_one_axle_from_slide_angle(inside, axle=axle, facing=facing, **rig_kw) <= MU_STATIC_MAX
    (check,) = slide_angle_checks(outside, axle=axle, facing=facing, **rig_kw)
    assert check.refuse and check.reading == "angle" and f"{top:.1f} deg" in check.why


def test_one_axle_bound_is_not_atan_mu_max():
    # Hand-worked rig: front blocked uphill reaches μ 5 at tan α = 5·180/(300 + 5·100) = 1.125,
    # 48.37 deg (worked by hand from μ = L t/(b − h t)); atan 5 = 78.69 deg would let through
    # angles whose μ is far above 5. Rear blocked downhill (facing up): the front lifts at
    # tan α = 1.8, 60.95 deg, first (L = 300 < 5 h = 500, so μ never reaches 5 there).
    top, limit = one_axle_top_angle_deg(300.0, 180.0, 100.0, "front", "up")
    assert (round(top, 2), limit) == (48.37, "mu")
    top, limit = one_axle_top_angle_deg(300.0, 180.0, 100.0, "rear", "up")
    assert (round(top, 2), limit) == (60.95, "tip")
    (check,) = slide_angle_checks(60.0, axle="front", facing="up", **HAND)
    assert check.refuse and "48.4 deg" in check.why
    (check,) = slide_angle_checks(61.0, axle="rear", facing="up", **HAND)
    assert check.refuse and "below 60.9 deg" in check.why and "tips over backwards" in check.why


# ---- mirror relations -----------------------------------------------------------------------


@settings(max_examples=examples(200))
@given(rigs, st.floats(0.5, 89.5))
def test_front_rear_and_up_down_mirror(rig, angle_deg):
    # Turn the rig end for end (b → L − b): the front facing up is the rear facing down of the
    # mirrored rig, and the other way round (the planar statics are symmetric fore-aft; Meriam &
    # Kraige ch. 3). At one angle and facing the two axles' loads add to W cos α (Gillespie ch. 2),
    # so 1/μ_front + 1/μ_rear = 1/tan α: both blocked together give back tan α.
    _w, wheelbase, share, h_frac = rig
    b, h = share * wheelbase, h_frac * wheelbase
    one = lambda axle, facing, cg=b: mu_one_axle_from_slide_angle(angle_deg, wheelbase, cg, h, axle, facing)  # noqa: E731
    for facing, mirrored in (("up", "down"), ("down", "up")):
        for axle, other in (("front", "rear"), ("rear", "front")):
            mine, theirs = one(axle, facing), one(other, mirrored, wheelbase - b)
            assert (math.isnan(mine) and math.isnan(theirs)) or mine == pytest.approx(theirs, rel=1e-12)
        front, rear = one("front", facing), one("rear", facing)
        if not (math.isnan(front) or math.isnan(rear)):
            assert 1 / front + 1 / rear == pytest.approx(1 / math.tan(math.radians(angle_deg)), rel=1e-9)
    # facing up unloads the front, facing down the rear (Gillespie ch. 2): the uphill axle reads higher
    for axle, uphill, downhill in (("front", "up", "down"), ("rear", "down", "up")):
        high, low = one(axle, uphill), one(axle, downhill)
        if not (math.isnan(high) or math.isnan(low)):
            assert high > low


def test_blocked_axle_downhill_is_less_sensitive_to_the_reading():
    # What help and README say. Worked by hand from μ = L t/(d − s h t): dμ/dα = d μ²/(L sin²α).
    # Hand-worked rig, front μ 1: facing up t = 180/(300 + 100) = 0.45 (24.228 deg), sin²α = 0.16838,
    # 0.0622 per deg; facing down t = 180/(300 − 100) = 0.9 (41.987 deg), sin²α = 0.44751, 0.0234 per deg.
    for facing, t, per_deg in (("up", 0.45, 0.0622), ("down", 0.9, 0.0234)):
        angle = math.degrees(math.atan(t))
        assert mu_one_axle_from_slide_angle(angle, axle="front", facing=facing, **HAND) == pytest.approx(1.0, rel=1e-12)
        step = 1e-4
        slope = (mu_one_axle_from_slide_angle(angle + step, axle="front", facing=facing, **HAND)
                 - mu_one_axle_from_slide_angle(angle - step, axle="front", facing=facing, **HAND)) / (2 * step)
        assert slope == pytest.approx(per_deg, abs=5e-4)


def test_a_cg_on_the_board_makes_up_and_down_the_same():
    # h → 0: no load transfer with the grade (Gillespie ch. 2), so μ = L tan α/d either way;
    # 300·tan 20°/180 = 0.60657 (tan 20° = 0.36397, four-figure tables).
    up = mu_one_axle_from_slide_angle(20.0, 300.0, 180.0, 1e-9, "front", "up")
    down = mu_one_axle_from_slide_angle(20.0, 300.0, 180.0, 1e-9, "front", "down")
    assert up == pytest.approx(down, rel=1e-9) and up == pytest.approx(0.6066, abs=5e-5)


# ---- both axles: unchanged ---------------------------------------------------------------------


def test_both_axles_is_still_tan_alpha():
    # Serway & Beichner ch. 5: μ_s = tan α; tan 40 deg = 0.8391 (four-figure tables).
    assert mu_from_slide_angle(40.0) == pytest.approx(0.8391, abs=5e-5)
    assert slide_angle_checks(78.6) == [] and slide_angle_checks(78.8)[0].refuse


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_cli_both_axles_unchanged_and_ignores_the_rig(tmp_path, capsys):
    # tan 40 deg = 0.8391 → 0.84, into grip.mu_static (four-figure tables); the facing and the rig
    # change nothing when all four wheels stand on the board, and a warning says so.
    f = tmp_path / "rig.toml"
    shutil.copy(OVERDRIVE, f)
    code, out, err = run(capsys, "measure", "mu", "--angle", "40", "--axle", "both", "--write", str(f))
    assert code == 0 and err == "" and out.startswith("static mu 0.84 (tan 40 deg)\n")
    assert re.search(r"^mu_static = 0\.84$", f.read_text(), re.M)
    code, out, err = run(capsys, "measure", "mu", "--angle", "40", "--facing", "down", "--cg-height", "30")
    assert code == 0 and out == "static mu 0.84 (tan 40 deg)\n"
    assert err.count("\n") == 1 and "--facing, --cg-height not used with --axle both" in err
    # a refused angle is still one line, without the warning
    err = one_line_error(capsys, "measure", "mu", "--angle", "80", "--facing", "up")
    assert "at most 78.7 deg" in err


# ---- the command line, round trip into a copy of the overdrive demo -----------------------------
# marmot-overdrive.toml: 2380 g, L 313 mm, front bias 57.5 % (b 179.975 mm), h 88 mm, plus two
# ballast items, +96 g at x 313, z 40 and −38 g at x 120, z 45. The rig on the board (Jazar ch. 2,
# mass-weighted mean, worked by hand): 2438 g; b = (428340.5 + 30048 − 4560)/2438 = 186.148 mm;
# h = (209440 + 3840 − 1710)/2438 = 86.780 mm. Rear blocked, facing up, 30 deg (tan = 0.57735):
# μ = 313·0.57735/((313 − 186.148) + 86.780·0.57735) = 180.711/(126.852 + 50.103) = 1.0212 → 1.02.
EFFECTIVE_B, EFFECTIVE_H = 453828.5 / 2438, 211570 / 2438


def test_cli_round_trip_writes_the_rear_key(tmp_path, capsys):
    f = tmp_path / "rig.toml"
    shutil.copy(OVERDRIVE, f)
    before = f.read_text()
    t = math.tan(math.radians(30.0))
    want = 313 * t / ((313 - EFFECTIVE_B) + EFFECTIVE_H * t)  # the hand sum above
    assert want == pytest.approx(1.0212, abs=5e-5)
    code, out, err = run(capsys, "measure", "mu", "--angle", "30", "--axle", "rear", "--facing", "up", "--write", str(f))
    assert code == 0 and err == "", err
    lines = out.splitlines()
    assert lines[0].startswith("rear static mu 1.02 (W sin a / N_rear: rear axle alone, front on the sheet, "
                               "rig facing up the board)")
    assert lines[1] == "  mu = L tan a / (L - b + h tan a) with a 30 deg, L 313 mm, b 186.1 mm, h 86.8 mm"
    assert "2 ballast items included" in lines[2]
    assert lines[-1] == f"wrote grip.rear_mu_static = 1.02 to {f}"
    after = f.read_text()
    assert re.search(r"^rear_mu_static = 1\.02$", after, re.M)
    # nothing else moved: the common and the front mu, and every line but the new one
    assert re.search(r"^mu_static = 1\.0$", after, re.M) and re.search(r"^front_mu_static = 1\.05$", after, re.M)
    assert [l for l in after.splitlines() if not l.startswith("rear_mu_static")] == before.splitlines()
    grip = load_setup(str(f)).setup.grip
    assert grip.rear_mu_static == 1.02 and grip.axle_mu()[2] == 1.02


def test_cli_front_facing_down_with_given_rig_needs_no_file(capsys):
    # The hand-worked rig, given on the command line: front blocked, facing down: 150/230 = 0.652 → 0.65.
    code, out, err = run(capsys, "measure", "mu", "--angle", f"{HAND_ANGLE_DEG:.10f}", "--axle", "front",
                         "--facing", "down", "--wheelbase", "300", "--front-bias", "60", "--cg-height", "100")
    assert code == 0 and err == ""
    assert out.startswith("front static mu 0.65 (W sin a / N_front:")
    assert "mu = L tan a / (b + h tan a)" in out and "b 180.0 mm, h 100.0 mm" in out


def test_cli_an_option_overrides_the_file(capsys):
    # --cg-height 100 with the file's L 313, effective b 186.148: front, up, 25 deg (tan 0.46631):
    # 313·0.46631/(186.148 − 46.631) = 145.955/139.517 = 1.0461 → 1.05 (worked by hand).
    code, out, err = run(capsys, "measure", "mu", "--angle", "25", "--axle", "front", "--facing", "up",
                         "--from", str(OVERDRIVE), "--cg-height", "100")
    assert code == 0 and err == "" and out.startswith("front static mu 1.05 ")
    assert "h 100.0 mm" in out and "(the wheelbase, the front bias from" in out


def one_line_error(capsys, *argv) -> str:
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == "", (argv, out, err)
    assert err.count("\n") == 1 and "Traceback" not in err and "usage:" not in err
    return err


@pytest.mark.parametrize("argv, words", [
    (["--angle", "30", "--axle", "rear", "--from", str(OVERDRIVE)], ["--facing up|down is needed"]),
    (["--angle", "30", "--axle", "front", "--facing", "up"], ["--wheelbase is needed", "--from FILE"]),
    (["--angle", "30", "--axle", "front", "--facing", "sideways"], ["--facing 'sideways'", "up, down"]),
    # the hand-worked rig: the front lifts facing up at 60.95 deg; μ 5 at 48.37 deg (worked above)
    (["--angle", "61", "--axle", "rear", "--facing", "up", "--wheelbase", "300", "--front-bias", "60",
      "--cg-height", "100"], ["--angle: 61 deg", "below 60.9 deg", "tips over backwards"]),
    (["--angle", "50", "--axle", "front", "--facing", "up", "--wheelbase", "300", "--front-bias", "60",
      "--cg-height", "100"], ["--angle: 50 deg", "at most 48.4 deg", "mu_static 5"]),
    (["--angle", "20", "--axle", "front", "--facing", "up", "--wheelbase", "300", "--front-bias", "100",
      "--cg-height", "100"], ["--front-bias 100", "< 100"]),
    (["--angle", "20", "--axle", "front", "--facing", "up", "--wheelbase", "300", "--front-bias", "60",
      "--cg-height", "0"], ["--cg-height 0"]),
])
def test_cli_refusals_are_one_line(capsys, argv, words):
    err = one_line_error(capsys, "measure", "mu", *argv)
    for w in words:
        assert w in err, (w, err)


def test_cli_refusal_leaves_the_file_alone(tmp_path, capsys):
    # 5 deg on the front facing up gives about 0.15 (313·0.0875/(186.1 − 7.6)), below the file's front
    # kinetic mu 0.85: refused by the file's own rule, nothing written.
    f = tmp_path / "rig.toml"
    shutil.copy(OVERDRIVE, f)
    before = f.read_bytes()
    err = one_line_error(capsys, "measure", "mu", "--angle", "5", "--axle", "front", "--facing", "up",
                         "--write", str(f))
    assert "front_mu_static 0.15" in err and "kinetic mu 0.85" in err
    assert f.read_bytes() == before


def test_help_explains_the_one_axle_set_up(capsys):
    code, out, _ = run(capsys, "measure", "mu", "--help")
    assert code == 0
    flat = " ".join(out.split())
    for words in ("low-friction sheet", "smooth plastic sheet on a glass pane", "Block the wheels",
                  "--facing up", "No default", "W sin(a) / N_axle", "ballast"):
        assert words in flat, words


def test_exactly_at_the_tip_angle_every_case_is_refused_alike():
    """b = h = L/2 at 45 deg: tan α = b/h, the uphill axle's load is exactly zero (Gillespie ch. 2
    grade loads, worked by hand: b cos 45 − h sin 45 = 0). Rounding leaves ±1e-17 W there; no case
    may read that as a μ of 1e16 while its mirror says the rig tips (found by hypothesis in CI)."""
    for axle in ("front", "rear"):
        for facing in ("up", "down"):
            assert math.isnan(float(mu_one_axle_from_slide_angle(45.0, 300.0, 150.0, 150.0, axle, facing)))
    # a hair below the tip the uphill-blocked front still reads, and high: L tan α/(b − h tan α)
    tan_a = math.tan(math.radians(44.0))
    assert float(mu_one_axle_from_slide_angle(44.0, 300.0, 150.0, 150.0, "front", "up")) == pytest.approx(
        300.0 * tan_a / (150.0 - 150.0 * tan_a), rel=1e-12)
