"""The measuring screen's slide-angle section, by Pilot at 80x24: which mu (both axles, front only,
rear only), which way the rig faced on the board, the formula and value shown, the key Apply
writes, the tip-over check, and the tuner taking the value as one undo step.

Expected values are worked by hand from the grade-load equation (Gillespie, *Fundamentals of
Vehicle Dynamics*, 1992, ch. 2) and Coulomb friction at the slide (Serway & Beichner ch. 5), or
come from sympy solving the rig's planar equilibrium (tests/test_measure_one_axle.py).
"""

from __future__ import annotations

import asyncio
import math
from dataclasses import replace
from pathlib import Path

import pytest
from textual.widgets import Button, Static

from slopetune.engine import load_setup
from slopetune.tui.screens.measure import MeasureScreen

from test_measure_one_axle import sympy_case
from test_screens import OVERDRIVE, STOCK, PlainHost, run_screen, screen_text

# The hand-worked rig of tests/test_measure_one_axle.py on the board: L 300 mm, front bias 60 %
# (b 180 mm), h 100 mm, no ballast. At tan a = 0.5 (a = 26.5651 deg) one axle alone holds
# W sin a, so mu = W sin a / N_axle: front up 150/130 = 1.1538, rear up 150/170 = 0.8824,
# front down 150/230 = 0.6522, rear down 150/70 = 2.1429 (worked there, by hand).
HAND_ANGLE = f"{math.degrees(math.atan(0.5)):.8f}"
HAND = {("front", "up"): (1.15, "μ = L tan α / (b − h tan α)"),
        ("rear", "up"): (0.88, "μ = L tan α / (L − b + h tan α)"),
        ("front", "down"): (0.65, "μ = L tan α / (b + h tan α)"),
        ("rear", "down"): (2.14, "μ = L tan α / (L − b − h tan α)")}
AXLE_STEPS = {"both": 0, "front": 1, "rear": 2}
FACING_STEPS = {None: 0, "up": 1, "down": 2}


def hand_setup():
    setup = load_setup(STOCK).setup
    rig = replace(setup.rig, mass_g=2000.0, wheelbase_mm=300.0, front_bias_pct=60.0, cg_height_mm=100.0, ballast=())
    # kinetic mu below every hand-worked value, so the file's own rule refuses none of them
    return replace(setup, rig=rig, grip=replace(setup.grip, mu_kinetic=0.5))


async def choose(pilot, screen, axle: str, facing, angle: str) -> None:
    """Step the two choices with Right as a builder would, then type the slide angle."""
    screen.query_one("#m-mu-axle").focus()
    await pilot.pause()
    for _ in range(AXLE_STEPS[axle]):
        await pilot.press("right")
    await pilot.press("down")
    for _ in range(FACING_STEPS[facing]):
        await pilot.press("right")
    await pilot.press("down")  # the slide angle: focusing selects it, typing replaces it
    await pilot.press(*angle)
    await pilot.pause(0.3)  # the sums wait for typing to settle


def seen(screen) -> dict:
    text = lambda i: str(screen.query_one(f"#{i}", Static).render())  # noqa: E731
    return {"result": text("mu_static-result"), "check": text("mu_static-check"), "how": text("mu-how"),
            "axle_why": text("m-mu-axle-why"), "facing_why": text("m-mu-facing-why"), "slide_why": text("m-slide-why"),
            "apply": not screen.query_one("#mu_static-apply", Button).disabled,
            "facing_bad": screen.query_one("#m-mu-facing-why", Static).has_class("-bad"),
            "warn": screen.query_one("#mu_static-check", Static).has_class("-warn")}


def measure(setup, axle, facing, angle, apply=True, host=None, ascii_only=False):
    async def script(pilot, screen):
        await choose(pilot, screen, axle, facing, angle)
        out = seen(screen)
        out["screen"] = screen_text(pilot.app)
        await pilot.press("enter")  # the slide angle is the section's last field: Enter lands on Apply
        await pilot.pause()
        out["focused"] = pilot.app.focused.id if pilot.app.focused is not None else None
        await pilot.press("enter" if apply and out["apply"] else "escape")
        if pilot.app.screen is screen:
            await pilot.press("escape")
        return out

    kw = {} if host is None else {"host": host}
    return run_screen(MeasureScreen(setup, ascii_only=ascii_only), script, **kw)


@pytest.mark.parametrize("axle, facing", list(HAND))
def test_one_axle_hand_worked(axle, facing):
    value, formula = HAND[axle, facing]
    result, out = measure(hand_setup(), axle, facing, HAND_ANGLE)
    assert out["result"] == f"{axle} μ static = {value:.2f}  ({formula})"
    assert out["axle_why"] == f"writes grip.{axle}_mu_static"
    uphill = (axle == "front") == (facing == "up")  # the nose-up rig's front is its uphill axle
    assert out["facing_why"] == f"{axle} axle {'uphill' if uphill else 'downhill'}"
    other = "Rear" if axle == "front" else "Front"
    assert out["how"].startswith(f"{other} wheels on a low-friction sheet")
    assert "L 300 mm, b 180.0 mm, h 100.0 mm" in out["how"]
    assert out["focused"] == "mu_static-apply"
    assert result == {f"grip.{axle}_mu_static": value}


def test_both_axles_still_write_the_common_mu():
    # tan 26.5651 deg = 0.5 exactly: mu_s = tan a (Serway & Beichner ch. 5), whatever the facing.
    for facing in (None, "up", "down"):
        result, out = measure(hand_setup(), "both", facing, HAND_ANGLE)
        assert out["result"] == "μ static = 0.50  (μ = tan α)" and out["axle_why"] == "writes grip.mu_static"
        assert out["facing_why"] == "for the tip-over check"
        assert result == {"grip.mu_static": 0.5}


def test_one_axle_needs_the_facing():
    # No default facing, as `measure mu --facing` has none: the blocked axle's load depends on it.
    result, out = measure(hand_setup(), "front", None, HAND_ANGLE)
    assert result is None and not out["apply"]
    assert out["facing_why"] == "needed: load depends on it" and out["facing_bad"]
    assert out["result"] == "front μ static: needs the facing"


def test_one_axle_takes_the_open_setups_rig_with_its_ballast():
    # marmot-overdrive.toml with its two ballast items on the board (worked by hand in
    # test_measure_one_axle.py): b 186.148 mm, h 86.780 mm. Rear blocked, nose up, 30 deg:
    # 313 tan 30/((313 - 186.148) + 86.780 tan 30) = 180.711/176.955 = 1.0212 -> 1.02, as the CLI prints.
    result, out = measure(load_setup(OVERDRIVE).setup, "rear", "up", "30")
    assert out["how"].endswith("Rig (the setup's, 2 ballast items in): L 313 mm, b 186.1 mm, h 86.8 mm")
    assert out["result"].startswith("rear μ static = 1.02  (μ = L tan α / (L − b + h tan α))")
    assert result == {"grip.rear_mu_static": 1.02}
    # the section's result stays on the 80x24 screen while its fields are in use
    assert "rear μ static = 1.02" in out["screen"] and "Apply μ" in out["screen"]


def test_a_value_the_setup_refuses_is_not_offered():
    # Front blocked nose up at 5 deg on the overdrive demo: 313 tan 5/(186.148 - 86.780 tan 5) =
    # 27.384/178.556 = 0.153 (by hand), below the file's front kinetic mu 0.85: refused with the
    # reason, Apply stays off, Enter does not apply, the setup keeps its value.
    result, out = measure(load_setup(OVERDRIVE).setup, "front", "up", "5")
    assert result is None and not out["apply"] and out["focused"] != "mu_static-apply"
    assert out["check"].startswith("Slide angle: gives front_mu_static 0.15, which the setup refuses")
    assert "below the front kinetic mu 0.85" in out["check"] and out["slide_why"] == "looks wrong, see below"
    assert out["result"] == "front μ static = 0.15: not taken (see above)"


def test_both_axles_refuse_a_slide_past_the_tip():
    # Hand-worked rig (Gillespie ch. 2 lift angles): nose down the rear lifts at atan(120/100) =
    # 50.19 deg, nose up the front at atan(180/100) = 60.95 deg. 55 deg (tan 1.4281) nose down is
    # refused, nose up it stands and gives 1.43, not noted it is possible only nose up: a warning.
    result, out = measure(hand_setup(), "both", "down", "55")
    assert result is None and not out["apply"] and out["slide_why"] == "looks wrong, see below"
    assert out["check"].startswith("Slide angle: 55 deg: must be above 0 and at most 50.2 deg")
    assert "tips over its nose" in out["check"]
    result, out = measure(hand_setup(), "both", "up", "55")
    assert out["check"] == "" and result == {"grip.mu_static": 1.43}
    result, out = measure(hand_setup(), "both", None, "55")
    assert out["warn"] and out["check"].startswith("Check slide angle: 55 deg: nose down the board")
    assert out["slide_why"] == "see below" and result == {"grip.mu_static": 1.43}


def test_one_axle_past_the_tip_is_refused_as_on_the_command_line():
    # Rear blocked nose up: the front lifts at atan(1.8) = 60.95 deg (hand-worked above) and the rig
    # tips over backwards; 61 deg is refused, the same words as `measure mu --axle rear`.
    result, out = measure(hand_setup(), "rear", "up", "61")
    assert result is None and not out["apply"]
    assert out["check"].startswith("Slide angle: 61 deg: must be above 0 and below 60.9 deg")
    assert "tips over backwards" in out["check"]


def test_enter_on_a_choice_moves_on_and_a_click_steps_it():
    async def script(pilot, screen):
        screen.query_one("#m-mu-axle").focus()
        await pilot.pause()
        await pilot.press("enter")
        await pilot.pause()
        after_enter = pilot.app.focused.id
        await pilot.click("#m-mu-facing", offset=(8, 0))
        await pilot.pause()
        facing = screen.query_one("#m-mu-facing").value
        await pilot.press("left", "left")  # nose up -> not noted -> (wraps round) nose down
        await pilot.pause()
        again = screen.query_one("#m-mu-facing").value
        await pilot.press("escape")
        return after_enter, facing, again

    result, (after_enter, facing, again) = run_screen(MeasureScreen(hand_setup(), ascii_only=False), script)
    assert result is None and after_enter == "m-mu-facing" and facing == "up" and again == "down"


def test_plain_console_shows_the_formula_in_ascii():
    result, out = measure(hand_setup(), "rear", "down", HAND_ANGLE, host=PlainHost, ascii_only=None)
    assert out["result"] == "rear mu static = 2.14  (mu = L tan a / (L - b - h tan a))"
    assert "rear mu static = 2.14" in out["screen"] and "Apply mu" in out["screen"]
    assert all(ord(ch) < 128 for ch in out["screen"]), sorted({ch for ch in out["screen"] if ord(ch) >= 128})
    assert result == {"grip.rear_mu_static": 2.14}


@pytest.mark.parametrize("axle, facing", list(HAND))
def test_the_formula_shown_is_the_equilibrium(axle, facing):
    # The formula on the result line (and the CLI's), parsed by sympy, equals sympy's own solution
    # of the rig's planar equilibrium on the board (Meriam & Kraige ch. 3; tests/test_measure_one_axle.py).
    import sympy as sp
    from sympy.parsing.sympy_parser import implicit_multiplication, standard_transformations

    from slopetune.tui.commands.measure import ONE_AXLE_FORMULA

    L, b, h, t = sp.symbols("L b h t", positive=True)
    shown = sp.parse_expr(ONE_AXLE_FORMULA[axle, facing].replace("tan a", "t"), local_dict={"L": L, "b": b, "h": h, "t": t},
                          transformations=standard_transformations + (implicit_multiplication,))
    mu, _n, _o = sympy_case(axle, facing)
    for rig in ((300.0, 180.0, 100.0, 26.0), (313.0, 186.148, 86.78, 33.0), (250.0, 90.0, 60.0, 12.0)):
        wheelbase, cg_b, cg_h, angle = rig
        value = float(shown.subs({L: wheelbase, b: cg_b, h: cg_h, t: math.tan(math.radians(angle))}))
        assert value == pytest.approx(mu(2000.0, wheelbase, cg_b, cg_h, math.radians(angle)), rel=1e-12)


# ---- in the tuner: Apply is one undo step ----------------------------------------------------


def test_tuner_applies_one_axle_mu_as_one_undo_step(tmp_path):
    # Overdrive demo (front_mu_static 1.05 in the file), front blocked nose up at 30 deg:
    # 313 tan 30/(186.148 - 86.780 tan 30) = 180.711/136.045 = 1.3283 -> 1.33 (by hand, ballast in).
    from slopetune.tui.app import SlopeTuneApp

    path = Path(tmp_path) / "rig.toml"
    path.write_text(OVERDRIVE.read_text(encoding="utf-8"), encoding="utf-8")

    async def go():
        app = SlopeTuneApp(load_setup(path))
        app.word_updates.every_s = app.chart_updates.every_s = 0.0
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            before = app.setup
            await pilot.press("m")
            await pilot.pause(0.5)
            screen = app.screen
            assert isinstance(screen, MeasureScreen)
            await choose(pilot, screen, "front", "up", "30")
            await pilot.press("enter")  # onto Apply
            await pilot.press("enter")  # apply
            await pilot.pause(0.3)
            assert app.screen is not screen
            applied = app.setup
            note = app.status.note[0]
            await pilot.press("z")
            await pilot.pause()
            undone = app.setup
            await pilot.press("Z")
            await pilot.pause()
            return before, applied, note, undone, app.setup

    before, applied, note, undone, redone = asyncio.run(go())
    assert before.grip.front_mu_static == 1.05 and applied.grip.front_mu_static == 1.33
    assert applied == before.with_value("grip.front_mu_static", 1.33)  # nothing else moved
    assert "front_mu_static 1.33" in note
    assert undone == before and redone == applied
