"""Pilot tests of the planning screen in a tiny host app at 80x24, driven by the keyboard only.

The accepted setup is checked against the closed-form balance with the planned ballast:
tan β = (b − L/2)/h with the mass centre of rig plus item (Gillespie 1992 ch. 2; Jazar 2008 ch. 2).
"""

from __future__ import annotations

import asyncio
import math
from pathlib import Path

from textual.app import App, ComposeResult
from textual.widgets import Label

from slopetune.engine import load_setup
from slopetune.tui.screens.plan import Choice, PlanScreen

from test_screens import screen_text

ROOT = Path(__file__).resolve().parent.parent
STOCK = load_setup(ROOT / "setups" / "marmot-stock.toml").setup
OVERDRIVE = load_setup(ROOT / "setups" / "marmot-overdrive.toml").setup

NO_RESULT = object()


class Host(App):
    def compose(self) -> ComposeResult:
        yield Label("host")


async def settle(pilot):
    """Let the typing settle, the goal seek finish and its answer land."""
    await pilot.pause(0.2)
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


def run_screen(setup, script):
    results = []

    async def main():
        app = Host()
        async with app.run_test(size=(80, 24)) as pilot:
            app.push_screen(PlanScreen(setup, ascii_only=False), results.append)
            await settle(pilot)
            out = await script(pilot, app)
            await settle(pilot)
            return out

    out = asyncio.run(main())
    return (results[0] if results else NO_RESULT), out


async def retype(pilot, text):
    await pilot.press("end", "ctrl+u", *text)


def stock_balance_with(m, x, z):
    W, L, b, h = 2380.0, 313.0, 0.575 * 313.0, 88.0
    bc, hc = (W * b + m * x) / (W + m), (W * h + m * z) / (W + m)
    return math.degrees(math.atan2(bc - L / 2, hc))


def test_ballast_answer_previewed_then_accepted_with_enter():
    async def script(pilot, app):
        await retype(pilot, "18")  # the target value holds the focus first
        await pilot.press("down", "down")  # lever, then x
        await retype(pilot, "300")
        await pilot.press("down")
        await retype(pilot, "40")
        await settle(pilot)
        text = screen_text(app)
        await pilot.press("enter")
        return text

    result, text = run_screen(STOCK, script)
    assert "Add 93.4 g at x 300 mm, z 40 mm" in text  # closed form m = 93.36 g, up to 0.1 g
    assert "balance 14.94° -> 18.00°" in text
    assert "*balance" in text and "front lift" in text  # the preview lists every named angle
    item = result.rig.ballast[-1]
    assert (item.x_mm, item.z_mm) == (300.0, 40.0)
    got = stock_balance_with(item.mass_g, 300.0, 40.0)
    assert 18.0 <= got <= 18.01


def test_escape_discards():
    async def script(pilot, app):
        await pilot.press("escape")

    result, _ = run_screen(OVERDRIVE, script)
    assert result is None


def test_enter_before_the_answer_lands_accepts_once_it_does():
    async def script(pilot, app):
        await retype(pilot, "17")
        await pilot.press("enter")  # no pause: the goal seek has not even started

    result, _ = run_screen(STOCK, script)
    assert result is not NO_RESULT and result is not None
    item = result.rig.ballast[-1]
    got = stock_balance_with(item.mass_g, item.x_mm, item.z_mm)
    assert 17.0 <= got <= 17.01


def test_unreachable_is_said_and_enter_does_not_accept():
    async def script(pilot, app):
        await pilot.press("down", "right")  # lever: move a ballast item (the brass sits at the front already)
        await settle(pilot)
        text = screen_text(app)
        await pilot.press("enter")
        return text

    result, text = run_screen(OVERDRIVE.rigid_tyres(), script)  # rigid: the handover sits near 7°
    assert result is NO_RESULT
    assert "Cannot reach handover >= 9°" in text
    assert "item < 1: brass front knuckles (pair) >" in text
    assert "limits 0          to 313        mm" in text


def test_bad_number_is_named_and_blocks_accept():
    async def script(pilot, app):
        await retype(pilot, "abc")
        await settle(pilot)
        text = screen_text(app)
        await pilot.press("enter")
        return text

    result, text = run_screen(STOCK, script)
    assert result is NO_RESULT and "target: not a number" in text


def test_no_overdrive_handover_points_to_the_overdrive_lever():
    async def script(pilot, app):
        await pilot.press("up", "up", "left")  # value -> comparison -> angle; balance -> handover (no load)
        await pilot.press("down", "down")
        await retype(pilot, "12")
        await settle(pilot)
        text = screen_text(app)
        await pilot.press("down", "right", "right", "right")  # lever: ballast -> ... -> overdrive
        await settle(pilot)
        return text, screen_text(app)

    result, (before, after) = run_screen(STOCK, script)
    assert "no overdriven axle" in before and "overdrive lever" in before
    # any front overdrive makes the no-load handover equal the balance angle (equal mu):
    # atan((b − L/2)/h) = atan((179.975 − 156.5)/88) = 14.94° (Gillespie ch. 2), so the smallest
    # change is the first display step above 0 %
    assert "Gear overdrive 0.00 -> 0.01 %" in after
    assert "handover_weight_only none (no overdrive) -> 14.94°" in after


def test_fits_80x24():
    async def script(pilot, app):
        return screen_text(app)

    _, text = run_screen(OVERDRIVE, script)
    lines = text.splitlines()
    assert len(lines) <= 24 and all(len(line.rstrip()) <= 80 for line in lines)
    for words in ("Plan a change", "Target", "Lever", "Enter: accept   Esc: discard", "max grade"):
        assert words in text


def test_choice_steps_and_wraps():
    async def script(pilot, app):
        lever = app.screen.query_one("#p-lever", Choice)
        seen = [lever.value]
        await pilot.press("down")
        for _ in range(5):
            await pilot.press("right")
            seen.append(lever.value)
        await pilot.press("left")
        seen.append(lever.value)
        return seen

    _, seen = run_screen(STOCK, script)
    assert seen == ["ballast", "move", "cg-height", "overdrive", "mu", "ballast", "mu"]
