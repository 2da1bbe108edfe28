"""Both axles blocked on the tilt board: a slide angle past the one where the rig tips over first is
refused when the rig is known (MODEL section 7; Gillespie ch. 2 lift angles).

Expected values come from outside the code under test: a rig worked by hand and sympy solving the
rig's full planar equilibrium on the board with Coulomb friction at both contacts.
"""

from __future__ import annotations

import math
import shutil
from functools import lru_cache
from pathlib import Path

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from board_rigs import board_rigs

from slopetune.engine.measure import (
    MU_STATIC_MAX, blocked_tip_angle_deg, both_axles_top_angle_deg, slide_angle_checks,
)
from slopetune.tui.cli import main

from conftest import examples

ROOT = Path(__file__).resolve().parents[1]
OVERDRIVE = ROOT / "setups" / "marmot-overdrive.toml"

# ---- a rig worked by hand -------------------------------------------------------------------
# L 300 mm, front bias 60 % (b 180 mm ahead of the rear axle, L - b = 120 mm), h 100 mm.
# All four wheels blocked; the uphill axle's load (Gillespie ch. 2, moments about the downhill
# contact) reaches zero at
#   nose up:   N_f = W (180 cos a - 100 sin a)/300 = 0  at tan a = 1.8, a = 60.945 deg
#   nose down: N_r = W (120 cos a - 100 sin a)/300 = 0  at tan a = 1.2, a = 50.194 deg
# (atan 1.8 = 60.95 deg, atan 1.2 = 50.19 deg, four-figure tables). Both below atan 5 = 78.69 deg,
# the file's mu limit, so the tip sets the bound here.
HAND = dict(wheelbase_mm=300.0, cg_from_rear_mm=180.0, cg_height_mm=100.0)


def test_hand_worked_tip_angles():
    # Worked by hand above (Gillespie ch. 2 lift angles).
    assert blocked_tip_angle_deg(facing="up", **HAND) == pytest.approx(60.945, abs=5e-4)
    assert blocked_tip_angle_deg(facing="down", **HAND) == pytest.approx(50.194, abs=5e-4)
    assert both_axles_top_angle_deg(300.0, 180.0, 100.0, "up") == (pytest.approx(60.945, abs=5e-4), "tip")
    assert both_axles_top_angle_deg(300.0, 180.0, 100.0, "down") == (pytest.approx(50.194, abs=5e-4), "tip")
    # facing not known: only past the steeper of the two is the reading impossible
    assert both_axles_top_angle_deg(300.0, 180.0, 100.0) == (pytest.approx(60.945, abs=5e-4), "tip")


@pytest.mark.parametrize("angle, facing, refuse, words", [
    (61.0, "up", True, ["at most 60.9 deg", "front axle lifts", "tips over backwards"]),
    (60.9, "up", None, []),
    (50.3, "down", True, ["at most 50.2 deg", "rear axle lifts", "tips over its nose"]),
    (50.1, "down", None, []),
    (55.0, "up", None, []),  # past the nose-down tip, but the rig faced up: fine
    # not noted: 55 deg is possible only nose up (a warning), 61 deg neither way (refused)
    (55.0, None, False, ["nose down the board", "past 50.2 deg", "only if it faced nose up"]),
    (61.0, None, True, ["at most 60.9 deg", "whichever way it faced", "60.9 deg nose up", "50.2 deg nose down"]),
    (0.0, "up", True, ["must be above 0"]),
])
def test_hand_worked_slide_angle_checks(angle, facing, refuse, words):
    checks = slide_angle_checks(angle, facing=facing, **HAND)
    if refuse is None:
        assert checks == []
        return
    (check,) = checks
    assert check.refuse is refuse and check.reading == "angle"
    for w in words:
        assert w in check.why, (w, check.why)


def test_without_the_rig_only_the_mu_limit_applies():
    # Today's check (Serway & Beichner ch. 5, mu = tan a, the file's limit 5 at 78.69 deg): 70 deg
    # passes without the rig, though the hand-worked rig would have tipped either way by then.
    assert slide_angle_checks(70.0) == [] and slide_angle_checks(70.0, facing="up") == []
    assert slide_angle_checks(70.0, wheelbase_mm=300.0, cg_height_mm=100.0) == []  # b missing
    (check,) = slide_angle_checks(70.0, **HAND)
    assert check.refuse and "60.9" in check.why


def test_a_low_cg_leaves_the_mu_limit_in_charge():
    # h 20 mm: tan a = 180/20 = 9 (83.66 deg) nose up, 120/20 = 6 (80.54 deg) down, both past atan 5
    # = 78.69 deg (worked by hand): the file's mu limit bounds the angle and says so.
    top, limit = both_axles_top_angle_deg(300.0, 180.0, 20.0, "down")
    assert (round(top, 2), limit) == (78.69, "mu")
    (check,) = slide_angle_checks(79.0, facing="down", wheelbase_mm=300.0, cg_from_rear_mm=180.0, cg_height_mm=20.0)
    assert check.refuse and "78.7" in check.why and "mu_static at most 5" in check.why


def test_a_geometry_that_is_no_rig_is_refused_by_name():
    (check,) = slide_angle_checks(30.0, wheelbase_mm=300.0, cg_from_rear_mm=310.0, cg_height_mm=100.0)
    assert check.refuse and check.reading == "rig"
    assert math.isnan(blocked_tip_angle_deg(300.0, 310.0, 100.0, "up"))
    with pytest.raises(ValueError):
        blocked_tip_angle_deg(300.0, 180.0, 100.0, "sideways")


# ---- an independent solution: sympy, the full planar equilibrium -----------------------------


@lru_cache(maxsize=None)
def sympy_blocked(facing: str):
    """(μ, N_uphill) as functions of (W, L, b, h, α [rad]) from sympy solving the planar
    equilibrium of the rig on the board with both axles sliding (Meriam & Kraige, *Engineering
    Mechanics: Statics*, ch. 3; Coulomb friction F = μ N at each contact, Serway & Beichner ch. 5).

    Board frame: x up the board, y out of it. Rear contact at x = 0, front at x = ±L, CG at
    (±b, h), + facing up. Unknowns N_f, N_r, μ; equations: forces along and normal to the board,
    moments about the CG (not about a contact, as the code does).
    """
    import sympy as sp

    W, L, b, h, al = sp.symbols("W L b h alpha", positive=True)
    nf, nr, mu = sp.symbols("N_f N_r mu", real=True)
    n = 1 if facing == "up" else -1
    x_rear, x_front, x_cg = 0, n * L, n * b
    friction = mu * nf + mu * nr
    equations = [
        sp.Eq(friction - W * sp.sin(al), 0),
        sp.Eq(nf + nr - W * sp.cos(al), 0),
        sp.Eq((x_front - x_cg) * nf + (x_rear - x_cg) * nr + h * friction, 0),
    ]
    (sol,) = sp.solve(equations, [nf, nr, mu], dict=True)
    uphill = sol[nf] if facing == "up" else sol[nr]
    args = (W, L, b, h, al)
    return sp.lambdify(args, sol[mu], "math"), sp.lambdify(args, uphill, "math")


rigs = board_rigs


@settings(max_examples=examples(200))
@given(rigs, st.sampled_from(["up", "down"]))
def test_tip_angle_matches_sympy(rig, facing):
    # At the code's tip angle sympy's uphill load is zero; a little below it is positive and the
    # angle is taken (up to the mu limit), a little above it is negative and the angle refused.
    # sympy's μ at the slide is tan α whatever the rig (Serway & Beichner ch. 5).
    w, wheelbase, share, h_frac = rig
    b, h = share * wheelbase, h_frac * wheelbase
    mu_s, n_uphill = sympy_blocked(facing)
    tip = blocked_tip_angle_deg(wheelbase, b, h, facing)
    assume(0.05 < tip < 89.95)
    assert n_uphill(w, wheelbase, b, h, math.radians(tip)) == pytest.approx(0.0, abs=1e-9 * w)
    below, above = tip - 0.02, tip + 0.02
    assert n_uphill(w, wheelbase, b, h, math.radians(below)) > 0 > n_uphill(w, wheelbase, b, h, math.radians(above))
    assert mu_s(w, wheelbase, b, h, math.radians(below)) == pytest.approx(math.tan(math.radians(below)), rel=1e-9)
    rig_kw = dict(wheelbase_mm=wheelbase, cg_from_rear_mm=b, cg_height_mm=h)
    (refused,) = slide_angle_checks(above, facing=facing, **rig_kw)
    assert refused.refuse
    if math.tan(math.radians(below)) <= MU_STATIC_MAX:
        assert slide_angle_checks(below, facing=facing, **rig_kw) == []


@settings(max_examples=examples(200))
@given(rigs, st.floats(0.5, 89.5))
def test_not_noted_refuses_only_what_neither_facing_allows(rig, angle_deg):
    # Without the facing: refused exactly where sympy's uphill load is negative both ways (or μ
    # is past the file's limit), warned where it is negative one way only.
    w, wheelbase, share, h_frac = rig
    b, h = share * wheelbase, h_frac * wheelbase
    al = math.radians(angle_deg)
    loads = {f: sympy_blocked(f)[1](w, wheelbase, b, h, al) for f in ("up", "down")}
    assume(all(abs(v) > 1e-6 * w for v in loads.values()))
    checks = slide_angle_checks(angle_deg, wheelbase_mm=wheelbase, cg_from_rear_mm=b, cg_height_mm=h)
    if math.tan(al) > MU_STATIC_MAX or all(v < 0 for v in loads.values()):
        assert [c.refuse for c in checks] == [True]
    elif any(v < 0 for v in loads.values()):
        assert [c.refuse for c in checks] == [False]
    else:
        assert checks == []


# ---- the command line ---------------------------------------------------------------------------
# marmot-overdrive.toml on the board with its two ballast items (worked by hand in
# test_measure_one_axle.py): L 313, b = 453828.5/2438 = 186.148 mm, h = 211570/2438 = 86.780 mm.
# Nose up it tips at atan(186.148/86.780) = atan(2.14506) = 65.00 deg; nose down at
# atan(126.852/86.780) = atan(1.46177) = 55.62 deg (four-figure tables).


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_cli_refuses_past_the_tip_with_the_files_rig(capsys):
    code, out, err = run(capsys, "measure", "mu", "--angle", "60", "--facing", "down", "--from", str(OVERDRIVE))
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "--angle: 60 deg: must be above 0 and at most 55.6 deg" in err and "tips over its nose" in err
    # nose up it stands till 65.0 deg: taken, and the line says where the rig came from
    code, out, err = run(capsys, "measure", "mu", "--angle", "60", "--facing", "up", "--from", str(OVERDRIVE))
    assert code == 0 and err == ""
    assert out.splitlines()[0] == "static mu 1.73 (tan 60 deg)"  # tan 60 deg = 1.7321
    assert out.splitlines()[1].startswith("  (for the tip-over check: the wheelbase, the front bias, the CG height from")
    assert "2 ballast items included" in out


def test_cli_without_the_facing_warns_after_the_value(capsys):
    code, out, err = run(capsys, "measure", "mu", "--angle", "60", "--from", str(OVERDRIVE))
    assert code == 0 and out.startswith("static mu 1.73 (tan 60 deg)\n")
    assert err.count("\n") == 1 and "warning: --angle: 60 deg: nose down the board" in err and "past 55.6 deg" in err
    code, out, err = run(capsys, "measure", "mu", "--angle", "65.1", "--from", str(OVERDRIVE))
    assert code == 2 and "at most 65.0 deg" in err and "whichever way it faced" in err


def test_cli_rig_given_in_full_needs_no_file(capsys):
    # The hand-worked rig: nose up the front lifts at 60.945 deg.
    argv = ["measure", "mu", "--angle", "61", "--facing", "up", "--wheelbase", "300", "--front-bias", "60",
            "--cg-height", "100"]
    code, out, err = run(capsys, *argv)
    assert code == 2 and "at most 60.9 deg" in err and "tips over backwards" in err
    argv[3] = "60.9"
    code, out, err = run(capsys, *argv)
    assert code == 0 and out == "static mu 1.80 (tan 60.9 deg)\n" and err == ""  # tan 60.9 deg = 1.7966


def test_cli_write_refusal_leaves_the_file_alone(tmp_path, capsys):
    f = tmp_path / "rig.toml"
    shutil.copy(OVERDRIVE, f)
    before = f.read_bytes()
    code, out, err = run(capsys, "measure", "mu", "--angle", "58", "--facing", "down", "--write", str(f))
    assert code == 2 and "at most 55.6 deg" in err and f.read_bytes() == before
