"""Pilot tests of the tuner's modal screens, each pushed inside a tiny host app at 80x24.

Results are read from the `push_screen` callback, as the tuner reads them.
"""

from __future__ import annotations

import asyncio
import math
from pathlib import Path

import pytest
from rich.console import Console
from textual.app import App, ComposeResult
from textual.binding import Binding
from textual.widgets import Button, Input, Label, OptionList, Static

from slopetune.engine import load_setup
from slopetune.tui.screens.confirm import ConfirmScreen
from slopetune.tui.screens.help import HelpScreen, ascii_fold, key_label
from slopetune.tui.screens.measure import MeasureScreen, parse_lift_pairs
from slopetune.tui.screens.open_file import OpenFileScreen, scan_setup_files
from slopetune.tui.screens.path_prompt import PathPromptScreen

ROOT = Path(__file__).resolve().parent.parent
STOCK = ROOT / "setups" / "marmot-stock.toml"
OVERDRIVE = ROOT / "setups" / "marmot-overdrive.toml"
NO_RESULT = object()


class Host(App):
    """Stands in for the tuner: a couple of described bindings for the help screen to find."""

    BINDINGS = [
        Binding("ctrl+s", "noop", "Save the setup", id="tuner.save"),
        Binding("left,right", "noop", "Step the value", id="form.step"),
    ]

    def compose(self) -> ComposeResult:
        yield Label("host")

    def action_noop(self) -> None:
        pass


class PlainHost(Host):
    """A host on a plain console: the screens read `app.ascii_only`, as the tuner provides it."""

    ascii_only = True


def run_screen(screen, script, host=Host, size=(80, 24)):
    """Push `screen` in a host (80x24), run `script(pilot, screen)`, return (callback result, script's)."""
    results = []

    async def main():
        app = host()
        async with app.run_test(size=size) as pilot:
            app.push_screen(screen, results.append)
            await pilot.pause()
            out = await script(pilot, screen)
            await pilot.pause()
            return out

    out = asyncio.run(main())
    return (results[0] if results else NO_RESULT), out


def screen_text(app) -> str:
    """The characters on the whole screen as the terminal would show them."""
    console = Console(width=app.size.width, record=True, file=open("/dev/null", "w"), color_system=None)
    console.print(app.screen._compositor.render_update(full=True))
    return console.export_text()


# ---- ConfirmScreen ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    "keys, expected",
    [
        (("y",), True),
        (("n",), False),
        (("enter",), False),  # "No" holds the focus first: a stray Enter discards nothing
        (("right", "enter"), True),
        (("tab", "enter"), True),
        (("escape",), False),
    ],
)
def test_confirm_keys(keys, expected):
    async def script(pilot, screen):
        text = screen_text(pilot.app)
        await pilot.press(*keys)
        return text

    result, text = run_screen(ConfirmScreen("Discard changes and quit?", "Discard", "Keep"), script)
    assert result is expected
    assert "Discard changes and quit?" in text
    assert "Discard (y)" in text and "Keep (n)" in text


def test_confirm_button_click_and_brackets_shown_as_typed():
    async def script(pilot, screen):
        text = screen_text(pilot.app)
        await pilot.click("#confirm-yes")
        return text

    result, text = run_screen(ConfirmScreen("Overwrite [rig] v2.toml?", "[Yes]", "No"), script)
    assert result is True
    assert "Overwrite [rig] v2.toml?" in text and "[Yes] (y)" in text


# ---- PathPromptScreen -------------------------------------------------------------------------


def test_path_prompt_returns_typed_text():
    async def script(pilot, screen):
        text = screen_text(pilot.app)
        await pilot.press("end", "x", "enter")
        return text

    result, text = run_screen(PathPromptScreen("Save as", "setups/new.toml"), script)
    assert result == "setups/new.tomlx"
    assert "Save as" in text and ".toml" in text


def test_path_prompt_escape_and_blank():
    async def script(pilot, screen):
        await pilot.press("enter")  # blank: refused, the prompt stays
        await pilot.pause()
        still_open = pilot.app.screen is screen
        why = str(screen.query_one("#path-problem", Static).render())
        await pilot.press("escape")
        return still_open, why

    result, (still_open, why) = run_screen(PathPromptScreen("Baseline file"), script)
    assert still_open and "Type a path" in why
    assert result is None


# ---- OpenFileScreen ---------------------------------------------------------------------------


def _folder_with_setups(tmp_path: Path) -> tuple[Path, Path]:
    setups = tmp_path / "setups"
    here = tmp_path / "here"
    setups.mkdir()
    here.mkdir()
    text = STOCK.read_text(encoding="utf-8")
    (setups / "b-rig.toml").write_text(text.replace('name = "', 'name = "Bravo ', 1), encoding="utf-8")
    (setups / "a-rig.toml").write_text(text.replace('name = "', 'name = "Alpha ', 1), encoding="utf-8")
    (setups / "broken.toml").write_text("schema = 1\n[rig\n", encoding="utf-8")
    (setups / "binary.toml").write_bytes(b"\xff\xfe\x00garbage")
    (setups / "notes.txt").write_text("not a setup", encoding="utf-8")
    (setups / "folder.toml").mkdir()
    (here / "c-rig.toml").write_text(text.replace('name = "', 'name = "Charlie ', 1), encoding="utf-8")
    return setups, here


def test_scan_dedupes_sorts_and_survives_bad_folders(tmp_path):
    setups, here = _folder_with_setups(tmp_path)
    missing = tmp_path / "nowhere"
    a_file = setups / "notes.txt"
    entries, problems = scan_setup_files([setups, here, setups / ".." / "setups", missing, a_file])
    names = [e.path.name for e in entries]
    # setups that load first, each group by path ("here/" sorts before "setups/")
    # binary.toml does not look like a setup (no schema, [rig] or [course]): not listed, no crash
    assert names == ["c-rig.toml", "a-rig.toml", "b-rig.toml", "broken.toml"]
    assert entries[1].name.startswith("Alpha") and entries[1].problem is None
    broken = entries[-1]
    assert broken.name is None and "line 2" in broken.problem  # the unclosed table header
    assert len(problems) == 2 and any("nowhere" in p for p in problems)


def test_open_file_lists_and_picks(tmp_path):
    setups, here = _folder_with_setups(tmp_path)

    async def script(pilot, screen):
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        listing = screen.query_one("#open-list", OptionList)
        count = listing.option_count
        text = screen_text(pilot.app)
        await pilot.press("down", "enter")
        return count, text

    result, (count, text) = run_screen(OpenFileScreen([setups, here, setups]), script)
    assert count == 4  # binary.toml is not listed: not a setup
    assert "Alpha Marmot" in text and "broken.toml" in text and "line 2" in text
    assert result == setups / "a-rig.toml"  # second line: here/c-rig first


def test_open_file_escape_and_empty(tmp_path):
    async def script(pilot, screen):
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        status = str(screen.query_one("#open-status", Static).render())
        await pilot.press("enter")  # nothing to pick: stays open
        await pilot.pause()
        still_open = pilot.app.screen is screen
        await pilot.press("escape")
        return status, still_open

    result, (status, still_open) = run_screen(OpenFileScreen([tmp_path, tmp_path / "gone"]), script)
    assert "No .toml files" in status and "could not read" in status
    assert still_open and result is None


def test_open_file_closed_before_the_list_is_ready(tmp_path):
    setups, here = _folder_with_setups(tmp_path)

    async def script(pilot, screen):
        await pilot.press("escape")
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        screen._show([], [])  # a late answer from the scan finds the screen gone: ignored
        return pilot.app.screen is not screen

    result, gone = run_screen(OpenFileScreen([setups, here]), script)
    assert result is None and gone


# ---- HelpScreen -------------------------------------------------------------------------------


def test_key_label_spelling():
    assert key_label("ctrl+s") == "Ctrl+S"
    assert key_label("question_mark") == "?"
    assert key_label("shift+right") == "Shift+Right"
    assert key_label("f1") == "F1"


def test_help_lists_host_keys_and_explains():
    async def script(pilot, screen):
        keys = str(screen.query_one("#help-keys", Static).render())
        words = " ".join(str(s.render()) for s in screen.query(".help-text"))
        body = screen.query_one("#help-body")
        top = body.scroll_y
        await pilot.press("end")
        await pilot.pause()
        scrolled = body.scroll_y > top
        box = screen.query_one("#help-box").region
        await pilot.press("escape")
        return keys, words, scrolled, box

    result, (keys, words, scrolled, box) = run_screen(HelpScreen(), script)
    assert result is None
    assert "Ctrl+S" in keys and "Save the setup" in keys
    assert "Left/Right" in keys and "Step the value" in keys
    assert "Focus Next" not in keys and "Copy" not in keys  # the framework's own keys are not the tuner's
    for needed in ("handover", "overdriven axle", "wind-up", "static", "hands clear", "venue",
                   "lifted", "Max grade", "front lift", "balance"):
        assert needed in words, needed
    assert scrolled, "the help text is longer than 24 lines and must scroll"
    assert box.right <= 80 and box.bottom <= 24


def test_help_ascii_only_shows_only_ascii():
    async def script(pilot, screen):
        text = screen_text(pilot.app)
        for _ in range(4):  # page through to the end
            await pilot.press("pagedown")
            await pilot.pause()
            text += screen_text(pilot.app)
        await pilot.press("q")
        return text

    result, text = run_screen(HelpScreen(ascii_only=True), script)
    assert result is None
    assert "Ctrl+S" in text and "handover" in text and "venue" in text
    assert all(ord(ch) < 128 for ch in text), sorted({ch for ch in text if ord(ch) >= 128})


def test_ascii_fold():
    assert ascii_fold("0° μ — ≤") == "0 deg mu - <="


@pytest.mark.parametrize(
    "make",
    [
        lambda: ConfirmScreen("Discard changes and quit?"),
        lambda: PathPromptScreen("Save setup as", "setups/x.toml"),
        lambda: OpenFileScreen([ROOT / "setups"]),
        lambda: MeasureScreen(load_setup(OVERDRIVE).setup),
    ],
    ids=["confirm", "path", "open", "measure"],
)
def test_screens_keep_to_ascii_on_a_plain_console(make):
    async def script(pilot, screen):
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        return screen_text(pilot.app)

    _result, text = run_screen(make(), script, host=PlainHost)
    assert text.strip()
    assert all(ord(ch) < 128 for ch in text), sorted({ch for ch in text if ord(ch) >= 128})


def test_screens_survive_small_terminals_and_resizes():
    makers = [
        lambda: ConfirmScreen("Discard changes and quit?"),
        lambda: PathPromptScreen("Save setup as", "setups/x.toml"),
        lambda: OpenFileScreen([ROOT / "setups"]),
        lambda: HelpScreen(),
        lambda: MeasureScreen(load_setup(OVERDRIVE).setup),
    ]
    for make in makers:
        async def script(pilot, screen):
            await pilot.app.workers.wait_for_complete()
            for size in ((20, 6), (80, 24)):
                await pilot.resize_terminal(*size)
                await pilot.pause()
                await pilot.press("down")
                await pilot.pause()
            return pilot.app.screen is screen

        _result, on_top = run_screen(make(), script, size=(40, 12))
        assert on_top


# ---- MeasureScreen ----------------------------------------------------------------------------


def tilted_front_reading_g(weight_g, wheelbase_mm, bias_pct, cg_height_mm, axle_height_mm, lift_mm):
    """Front scale reading with the rear raised by `lift_mm`: moments about the front contact.

    Jazar, *Vehicle Dynamics*, 2008, ch. 2 / ISO 10392 axle-lift geometry: the rig pitches by
    ``asin(H/L)``; the CG sits ``a`` behind the front axle along the chassis and ``h - r`` above
    the axle line, so its horizontal lever from the front contact is ``a cos θ - (h - r) sin θ``
    and the rear axle's is ``L cos θ``.
    """
    theta = math.asin(lift_mm / wheelbase_mm)
    a = wheelbase_mm * (1 - bias_pct / 100)
    rear = weight_g * (a * math.cos(theta) - (cg_height_mm - axle_height_mm) * math.sin(theta)) / (
        wheelbase_mm * math.cos(theta)
    )
    return weight_g - rear


def test_parse_lift_pairs():
    assert parse_lift_pairs("100:1096, 150:1140") == ([100.0, 150.0], [1096.0, 1140.0])
    assert parse_lift_pairs("100:1096 150:1140") == ([100.0, 150.0], [1096.0, 1140.0])
    with pytest.raises(ValueError, match="pair 2"):
        parse_lift_pairs("100:1096, 150-1140")


def _measure(setup, script):
    return run_screen(MeasureScreen(setup, ascii_only=False), script)


def _set(screen, field_id, text):
    screen.query_one(f"#{field_id}", Input).value = text


def test_measure_prefills_and_applies_front_bias():
    setup = load_setup(OVERDRIVE).setup

    async def script(pilot, screen):
        text = screen_text(pilot.app)
        _set(screen, "m-total", "2400")
        _set(screen, "m-front", "1500")
        await pilot.pause(0.3)  # the sums wait for typing to settle
        line = str(screen.query_one("#front_bias_pct-result", Static).render())
        await pilot.click("#front_bias_pct-apply")
        return text, line

    result, (text, line) = _measure(setup, script)
    # prefilled from the file: 2380 g at 57.5 % front
    assert "2380" in text and "1368.5" in text and "57.5 %" in text
    assert "ISO 10392" in text and "Slide angle" in text and "< both axles >" in text
    # f = W_front / W (Gillespie, Fundamentals of Vehicle Dynamics, ch. 2): 1500 / 2400 = 62.5 %
    assert "62.5 %" in line
    assert result == {"rig.front_bias_pct": 62.5, "rig.mass_g": 2400.0}


def test_measure_cg_height_from_axle_lift():
    setup = load_setup(STOCK).setup
    rig = setup.rig
    true_h = 95.0
    axle = (rig.tire_dia_front_mm + rig.tire_dia_rear_mm) / 4
    readings = [
        (lift, tilted_front_reading_g(rig.mass_g, rig.wheelbase_mm, rig.front_bias_pct, true_h, axle, lift))
        for lift in (40.0, 80.0, 120.0)
    ]
    typed = ", ".join(f"{lift:g}:{g:.3f}" for lift, g in readings)

    async def script(pilot, screen):
        screen.query_one("#m-lifts", Input).focus()
        _set(screen, "m-lifts", typed)
        await pilot.pause(0.3)  # the sums wait for typing to settle
        line = str(screen.query_one("#cg_height_mm-result", Static).render())
        await pilot.press("enter")  # the last field of the section: Enter lands on Apply
        await pilot.pause()
        on_apply = pilot.app.focused.id
        await pilot.press("enter")
        return line, on_apply

    result, (line, on_apply) = _measure(setup, script)
    assert on_apply == "cg_height_mm-apply"
    assert "least squares" in line
    assert result == {"rig.cg_height_mm": pytest.approx(true_h, abs=0.05)}


def test_measure_mu_from_slide_angle_typed():
    setup = load_setup(STOCK).setup
    assert setup.grip.mu_static == 1.0 and setup.grip.mu_kinetic == 0.8

    async def script(pilot, screen):
        before = str(screen.query_one("#m-slide", Input).value)
        screen.query_one("#m-slide", Input).focus()  # focusing selects the text: typing replaces it
        await pilot.pause()
        await pilot.press("3", "0")
        await pilot.pause(0.3)  # the sums wait for typing to settle
        refused = str(screen.query_one("#mu_static-result", Static).render())
        why = str(screen.query_one("#mu_static-check", Static).render())
        await pilot.press("backspace", "backspace", "4", "0")
        await pilot.pause(0.3)  # the result line scrolls into view once the check line has gone
        await pilot.click("#mu_static-apply")
        return before, refused, why

    result, (before, refused, why) = _measure(setup, script)
    # Serway & Beichner ch. 5: mu_s = tan(alpha). atan(1.0) = 45 deg (prefill from mu_static 1.0);
    # tan 30 deg = 1/sqrt(3) = 0.577, below the file's mu_kinetic 0.8: refused, saying so;
    # tan 40 deg = 0.8391 (four-figure tables).
    assert before == "45.0"
    assert "0.58" in refused and "not taken" in refused
    assert why.startswith("Slide angle: gives mu_static 0.58") and "below the kinetic mu 0.8" in why
    assert result == {"grip.mu_static": 0.84}


def test_measure_bad_input_shows_reasons_and_never_applies():
    setup = load_setup(OVERDRIVE).setup

    async def script(pilot, screen):
        _set(screen, "m-total", "lots")
        _set(screen, "m-lifts", "100-1096")
        _set(screen, "m-slide", "95")
        await pilot.pause(0.3)  # the sums wait for typing to settle
        why = {f: str(screen.query_one(f"#{f}-why", Static).render()) for f in ("m-total", "m-lifts", "m-slide")}
        why["slide-check"] = str(screen.query_one("#mu_static-check", Static).render())
        disabled = [screen.query_one(f"#{s}-apply", Button).disabled
                    for s in ("front_bias_pct", "cg_height_mm", "mu_static")]
        _set(screen, "m-total", "-5")
        await pilot.pause(0.3)  # the sums wait for typing to settle
        why["negative"] = str(screen.query_one("#m-total-why", Static).render())
        _set(screen, "m-total", "2380")
        _set(screen, "m-front", "3000")  # more than the whole rig: bias over 100 %
        _set(screen, "m-lifts", "400:1500")  # higher than the wheelbase
        await pilot.pause(0.3)  # the sums wait for typing to settle
        bias_line = str(screen.query_one("#front_bias_pct-check", Static).render())
        lift_why = str(screen.query_one("#m-lifts-why", Static).render())
        bias_disabled = screen.query_one("#front_bias_pct-apply", Button).disabled
        await pilot.press("escape")
        return why, disabled, bias_line, lift_why, bias_disabled

    result, (why, disabled, bias_line, lift_why, bias_disabled) = _measure(setup, script)
    assert result is None
    assert why["m-total"] == "not a number"
    assert why["negative"].startswith("must be") and why["negative"].endswith("[g]")  # shown as typed
    assert "pair 1" in why["m-lifts"]
    # the demo rig with its ballast (b 186.148, h 86.780 mm, worked by hand in test_measure_one_axle.py)
    # tips over before it slides past atan(186.148/86.780) = 65.0 deg nose up (Gillespie ch. 2), so
    # 95 deg is refused there, before the file's mu limit (atan 5 = 78.69 deg)
    assert "looks wrong" in why["m-slide"] and "Slide angle" in why["slide-check"] and "65.0" in why["slide-check"]
    assert disabled == [True, True, True]
    assert bias_line.startswith("Front axle reading") and "total weight" in bias_line and bias_disabled
    assert "wheelbase" in lift_why
