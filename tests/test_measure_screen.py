"""The measuring screen's plausibility checks: the same readings the command line refuses or warns
about are refused or warned about here, naming the reading, and the axle-lift help is shown.
The slide-angle section's one-axle mu and tip-over check are in test_measure_screen_mu.py."""

from __future__ import annotations

from dataclasses import replace

import pytest
from textual.widgets import Button, Input, Static

from slopetune.engine import load_setup
from slopetune.tui.screens.measure import MeasureScreen

from test_screens import STOCK, run_screen


def _hand_worked_setup():
    # The hand-worked rig of tests/test_measure.py: W 2000 g, L 300 mm, tyres 100 mm (r 50 mm);
    # on the board that of tests/test_measure_one_axle.py: front bias 60 % (b 180 mm), h 100 mm.
    setup = load_setup(STOCK).setup
    rig = replace(setup.rig, mass_g=2000.0, wheelbase_mm=300.0, tire_dia_front_mm=100.0, tire_dia_rear_mm=100.0,
                  front_bias_pct=60.0, cg_height_mm=100.0, ballast=())
    return replace(setup, rig=rig)


def _type_lifts(lifts: str, level: str = "1000", slide: str | None = None):
    async def script(pilot, screen):
        screen.query_one("#m-level", Input).value = level
        screen.query_one("#m-lifts", Input).value = lifts
        if slide is not None:
            screen.query_one("#m-slide", Input).value = slide
        await pilot.pause(0.3)  # the sums wait for typing to settle
        out = {
            # every text of the screen, shown or scrolled out of the 80x24 view
            "text": " ".join(str(w.render()) for w in screen.query(Static)),
            "check": str(screen.query_one("#cg_height_mm-check", Static).render()),
            "why": str(screen.query_one("#m-lifts-why", Static).render()),
            "result": str(screen.query_one("#cg_height_mm-result", Static).render()),
            "apply": not screen.query_one("#cg_height_mm-apply", Button).disabled,
            "mu_check": str(screen.query_one("#mu_static-check", Static).render()),
            "mu_apply": not screen.query_one("#mu_static-apply", Button).disabled,
        }
        await pilot.press("escape")
        return out

    result, out = run_screen(MeasureScreen(_hand_worked_setup(), ascii_only=False), script)
    assert result is None
    return out


def test_axle_lift_help_says_wheels_free_and_suspension_locked():
    # ISO 10392 axle-lift conditions (MODEL section 7): wheels roll freely, suspension locked.
    out = _type_lifts("150:1192.45")
    assert "wheels roll freely" in out["text"] and "suspension locked" in out["text"]
    # hand-worked: CG at 100.0 mm, no check line
    assert "CG height = 100.0 mm" in out["result"] and out["apply"] and out["check"] == ""


def test_screen_refuses_a_cg_below_the_axle_naming_the_pair():
    out = _type_lifts("150:923.02")  # hand-worked: CG at 30 mm, below r = 50 mm
    assert not out["apply"]
    assert out["check"].startswith("Lift pair 1 (150:923.02)") and "30.0 mm" in out["check"]
    assert "looks wrong" in out["why"]


def test_screen_warns_of_a_falling_reading_and_still_offers_the_value():
    out = _type_lifts("50:1060, 100:1050")  # hand-worked: 77.2 mm, the second reading falls
    assert out["apply"] and "77.2 mm" in out["result"]
    assert out["check"].startswith("Check lift pair 2 (100:1050)") and "should grow" in out["check"]


@pytest.mark.parametrize("lifts, level, words", [
    ("150:2500", "1000", "Lift pair 1 (150:2500): front reading 2500 g is not below the total weight 2000 g"),
    ("150:1192.45", "2100", "Front reading, level: 2100 g is not below the total weight 2000 g"),
])
def test_screen_refuses_readings_above_the_total(lifts, level, words):
    out = _type_lifts(lifts, level)
    assert not out["apply"] and out["check"] == words


def test_screen_and_command_line_share_the_slide_angle_limit(capsys):
    # Both axles, facing not noted: the hand-worked rig tips over backwards past atan(180/100) =
    # 60.95 deg nose up and over its nose past atan(120/100) = 50.19 deg nose down (Gillespie ch. 2
    # lift angles, four-figure tables), both before the file's mu limit (atan 5 = 78.69 deg): 80 deg
    # is refused on the screen and by `measure mu` given the same rig, in the same words.
    from slopetune.tui.cli import main

    out = _type_lifts("150:1192.45", slide="80")
    assert not out["mu_apply"] and out["mu_check"].startswith("Slide angle: 80 deg") and "60.9" in out["mu_check"]
    assert main(["measure", "mu", "--angle", "80", "--wheelbase", "300", "--front-bias", "60", "--cg-height", "100"]) == 2
    err = capsys.readouterr().err
    assert err.strip().endswith(out["mu_check"].removeprefix("Slide angle: "))
