"""The measuring screen's slip-stiffness sections: the slip test gives the hand-worked c and applies
the per-axle key; the ramp test explains itself step by step and reports a range, or says none fits."""

from __future__ import annotations

from textual.widgets import Button, Input, Static

from slopetune.engine import parse_setup
from slopetune.tui.screens.measure import MeasureScreen
from test_screens import run_screen
from test_slip_calibration import HAND_RIG


def _screen_with(values: dict, wait: float = 0.3, apply: str | None = None):
    setup = parse_setup(HAND_RIG, "hand.toml")[0]

    async def script(pilot, screen):
        for field, text in values.items():
            screen.query_one(f"#{field}", Input).value = text
        await pilot.pause(wait)
        for _ in range(100):  # the ramp works in a thread: wait for its answer
            if "working" not in str(screen.query_one("#ramp-result", Static).render()):
                break
            await pilot.pause(0.1)
        out = {stem: str(screen.query_one(f"#{stem}-result", Static).render()) for stem in ("slip_test", "ramp")}
        out["ramp-check"] = str(screen.query_one("#ramp-check", Static).render())
        out["text"] = "\n".join(str(w.render()) for w in screen.query(".m-note"))
        out["slip_test-disabled"] = screen.query_one("#slip_test-apply", Button).disabled
        out["ramp-disabled"] = screen.query_one("#ramp-apply", Button).disabled
        if apply:
            screen.query_one(f"#{apply}-apply", Button).press()
            await pilot.pause()
        else:
            await pilot.press("escape")
        return out

    return run_screen(MeasureScreen(setup, ascii_only=True), script)


def test_slip_test_on_screen_hand_worked_and_applied_per_axle():
    # tests/test_slip_calibration.py, worked by hand: 10 turns of a 100 mm tyre over 3000 mm at
    # 10 deg on the hand rig -> rear c = 9.478, shown and applied as 9.5.
    result, out = _screen_with({"m-slip-runs": "10:10:3000"}, apply="slip_test")
    assert "rear c = 9.5" in out["slip_test"] and not out["slip_test-disabled"]
    assert result == {"grip.rear_slip_stiffness": 9.5}


def test_ramp_test_is_explained_step_by_step():
    result, out = _screen_with({})
    assert result is None
    for words in ("Unwind the driveline", "a few degrees steeper", "first slip", "range"):
        assert words in out["text"], words


def test_ramp_reading_below_the_rigid_handover_fits_no_c():
    result, out = _screen_with({"m-ramp": "0.5"})
    assert "no c fits" in out["ramp-check"].lower() and out["ramp-disabled"]


def test_driving_axle_field_says_which_shaft_comes_out_and_marks_only_a_bad_word():
    # common practice, no source: a field is marked refused only when its value is refused
    setup = parse_setup(HAND_RIG, "hand.toml")[0]
    seen = {}

    async def script(pilot, screen):
        for text in ("front", "middle", "rear"):
            screen.query_one("#m-slip-axle", Input).value = text
            await pilot.pause(0.3)
            seen[text] = (str(screen.query_one("#m-slip-axle-why", Static).render()),
                          screen.query_one("#m-slip-axle", Input).has_class("-bad"),
                          screen.query_one("#m-slip-axle-why", Static).has_class("-bad"))
        await pilot.press("escape")

    run_screen(MeasureScreen(setup, ascii_only=True), script)
    assert seen["front"] == ("rear shaft out", False, False)
    assert seen["middle"] == ("rear or front", True, True)
    assert seen["rear"] == ("front shaft out", False, False)
