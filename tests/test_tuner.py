"""The tuner, driven by keys through Textual's Pilot at 80x24.

Expected numbers come from the published equations, computed here without the engine:
axle loads on a grade (Gillespie, *Fundamentals of Vehicle Dynamics*, 1992, ch. 2:
N_f = W (b cos t - h sin t) / L), the load a steady climb needs (same chapter:
F = W (sin t + c_rr cos t)), and the Coulomb condition for the overdriven axle letting go first
under wind-up (mu_s,f N_f - mu_s,r N_r < F_req; Coulomb friction as in Serway & Beichner, ch. 5).
Ballast combines by mass-weighted averages (first moments of mass, any statics text).
"""

from __future__ import annotations

import asyncio
import math
from pathlib import Path

import pytest
from scipy.optimize import brentq

from slopetune.engine import load_setup
from slopetune.tui.app import SlopeTuneApp
from slopetune.tui.widgets.setup_form import SetupForm

from conftest import rigid_text

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"
SIZE = (80, 24)


def run(coro):
    return asyncio.run(coro)


def _copy(tmp_path: Path, extra_head: str = "", rigid: bool = False) -> Path:
    target = tmp_path / "rig.toml"
    text = DEMO.read_text(encoding="utf-8")
    if rigid:  # the closed-form references below are the rigid-driveline rule
        text = rigid_text(text)
    target.write_text(extra_head + text, encoding="utf-8")
    return target


def _app(path: Path, *, immediate: bool = True, **kw) -> SlopeTuneApp:
    """The tuner on `path`; `immediate` drops the held-key rate limits so each key shows at once."""
    app = SlopeTuneApp(load_setup(path), **kw)
    if immediate:
        app.word_updates.every_s = app.chart_updates.every_s = 0.0
    return app


def _reference_rig(setup):
    """(W, L, b, h) with ballast folded in by mass-weighted averages [g, mm, mm, mm]."""
    r = setup.rig
    mass = r.mass_g + sum(i.mass_g for i in r.ballast)
    b = (r.mass_g * r.wheelbase_mm * r.front_bias_pct / 100 + sum(i.mass_g * i.x_mm for i in r.ballast)) / mass
    h = (r.mass_g * r.cg_height_mm + sum(i.mass_g * i.z_mm for i in r.ballast)) / mass
    return mass, r.wheelbase_mm, b, h


def _front_normal_g(setup, slope_deg):
    """Gillespie (1992) ch. 2 grade-load equation, front axle."""
    w, L, b, h = _reference_rig(setup)
    t = math.radians(slope_deg)
    return w * (b * math.cos(t) - h * math.sin(t)) / L


def _reference_handover_deg(setup):
    """First climbing slope where mu_f N_f - mu_r N_r < F_req (front overdriven), by root finding."""
    w, L, b, h = _reference_rig(setup)
    g = setup.grip
    mu_f = g.front_mu_static if g.front_mu_static is not None else g.mu_static
    mu_r = g.rear_mu_static if g.rear_mu_static is not None else g.mu_static

    def margin(deg):
        t = math.radians(deg)
        nf = w * (b * math.cos(t) - h * math.sin(t)) / L
        nr = w * math.cos(t) - nf
        return mu_f * nf - mu_r * nr - w * (math.sin(t) + g.rolling_resistance * math.cos(t))

    return brentq(margin, 0.0, 60.0, xtol=1e-9)


def test_stepping_a_value_changes_chart_data_and_status(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            assert form.row.key == "terrain.slope_deg"
            before_flag = app.flag.words
            await pilot.press("right")
            await pilot.pause()
            assert form.value_text("terrain.slope_deg") == "31.0"
            assert app.chart.data.slope_deg == 31.0
            assert "31" in app.flag.words and app.flag.words != before_flag
            assert app.status.view.lines[1].startswith("At 31")
            # the mass row: 5 g a step, and the front curve follows Gillespie's grade loads
            form.focus_key("rig.mass_g")
            front_before = app.chart.data.current.front
            await pilot.press("right", "shift+right")
            await pilot.pause()
            assert app.setup.rig.mass_g == 2380 + 5 + 50
            front = dict(zip(app.chart.data.current.slope_deg, app.chart.data.current.front))
            assert front != dict(zip(app.chart.data.current.slope_deg, front_before))
            for slope in (0.0, 30.0):
                assert front[slope] == pytest.approx(_front_normal_g(app.setup, slope), rel=1e-6)
            assert app.title_bar.unsaved

    run(go())


def test_flag_rises_across_the_handover_and_clears_going_back(tmp_path):
    async def go():
        app = _app(_copy(tmp_path, rigid=True))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            handover = _reference_handover_deg(app.setup)
            assert 4.0 < handover < 10.0  # the demo's handover sits low: the flag test needs room below
            await pilot.press("0", "enter")
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 0
            seen = []
            for _ in range(int(handover) + 2):
                slope = app.setup.terrain.slope_deg
                seen.append((slope, app.flag.level))
                # within 3 deg below the handover the flag warns ahead; from it on, the front slips here
                expected = "warn" if slope >= handover - 3.0 else "ok"
                assert app.flag.level == expected, (slope, app.flag.words)
                if slope > handover:
                    assert "lets go first here" in app.flag.words
                await pilot.press("right")
                await pilot.pause()
            assert app.flag.has_class("-warn") and "SLIP FLAG" in app.flag.words
            while app.setup.terrain.slope_deg > 0:
                await pilot.press("left")
            await pilot.pause()
            assert app.flag.level == "ok" and app.flag.words.startswith("OK")
            assert not app.flag.has_class("-warn")

    run(go())


def test_bad_typed_value_shows_reason_and_keeps_the_old_value(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            form.focus_key("rig.mass_g")
            await pilot.press("-", "5", "enter")
            await pilot.pause()
            assert app.setup.rig.mass_g == 2380
            assert form.value_text("rig.mass_g") == "2380"
            assert "> 0" in form.error_for("rig.mass_g")
            await pilot.press("1", "2", "x", "enter")
            await pilot.pause()
            assert "not a number" in form.error_for("rig.mass_g")
            assert app.setup.rig.mass_g == 2380
            # mu kinetic above mu static is refused with the loader's cross-field rule
            form.focus_key("grip.mu_kinetic")
            await pilot.press("1", ".", "5", "enter")
            await pilot.pause()
            assert app.setup.grip.mu_kinetic == 0.8
            assert "mu_static" in form.error_for("grip.mu_kinetic")
            # Esc cancels typing without touching the value
            await pilot.press("9", "escape")
            await pilot.pause()
            assert form.typed is None and app.setup.grip.mu_kinetic == 0.8
            assert not app.title_bar.unsaved

    run(go())


def test_save_round_trip_keeps_comment_and_unknown_key(tmp_path):
    head = "# bench notes: weighed on the blue scale\nbench_station = \"B2\"  # kept, not used\n"
    path = _copy(tmp_path, head)
    original = path.read_text(encoding="utf-8")

    async def go():
        app = _app(path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            app.query_one(SetupForm).focus_key("rig.mass_g")
            await pilot.press("right", "ctrl+s")
            await pilot.pause()
            assert not app.title_bar.unsaved
            assert "Saved" in app.status.note[0]

    run(go())
    saved = path.read_text(encoding="utf-8")
    assert saved.startswith(head)
    changed = [(a, b) for a, b in zip(original.splitlines(), saved.splitlines()) if a != b]
    assert changed == [("mass_g = 2380", "mass_g = 2385")]
    assert len(original.splitlines()) == len(saved.splitlines())
    assert load_setup(path).setup.rig.mass_g == 2385


def test_save_to_a_file_changed_on_disk_asks_first(tmp_path):
    path = _copy(tmp_path)

    async def go():
        app = _app(path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            text = path.read_text(encoding="utf-8")
            path.write_text(text + "\n# edited elsewhere\n", encoding="utf-8")
            import os
            os.utime(path, ns=(app.loaded.mtime_ns + 10**9, app.loaded.mtime_ns + 10**9))
            await pilot.press("right", "ctrl+s")
            await pilot.pause()
            assert type(app.screen).__name__ == "ConfirmScreen"
            await pilot.press("n")
            await pilot.pause()
            assert "edited elsewhere" in path.read_text(encoding="utf-8")
            assert app.title_bar.unsaved
            await pilot.press("ctrl+s")
            await pilot.pause()
            await pilot.press("y")
            await pilot.pause()
            assert not app.title_bar.unsaved
            assert load_setup(path).setup.terrain.slope_deg == 31

    run(go())


def test_quit_with_unsaved_changes_asks(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("right", "q")
            await pilot.pause()
            assert type(app.screen).__name__ == "ConfirmScreen"
            await pilot.press("n")
            await pilot.pause()
            assert app.is_running and app.screen is app.main_screen
            await pilot.press("q")
            await pilot.pause()
            await pilot.press("y")
            await pilot.pause()
        assert app.return_code == 0

    run(go())


def test_quit_without_changes_does_not_ask(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("q")
            await pilot.pause()
            assert not app.is_running

    run(go())


def test_resize_to_tiny_and_back(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.resize_terminal(40, 12)
            await pilot.pause()
            screen = app.main_screen
            assert screen.has_class("-too-small")
            assert screen.query_one("#too-small").display and not screen.query_one("#body").display
            await pilot.press("right")  # hidden form: the key changes nothing unseen
            await pilot.resize_terminal(1, 1)
            await pilot.pause()
            await pilot.resize_terminal(*SIZE)
            await pilot.pause()
            assert not screen.has_class("-too-small")
            assert screen.query_one("#body").display
            await pilot.press("right")  # the form has the keys again
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 31
            assert app.chart.render().plain.count("\n") == app.chart.size.height - 1

    run(go())


def test_ascii_mode_chart_stays_in_latin1(tmp_path):
    async def go():
        app = _app(_copy(tmp_path), ascii_only=True)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("b", "right", "r")  # a baseline and the descents too: every mark drawn
            await pilot.pause()
            text = app.chart.render().plain
            assert "F front" in text and "R rear" in text
            assert all(ord(ch) <= 0xFF for ch in text), sorted({ch for ch in text if ord(ch) > 0xFF})
            # the words the app draws itself keep to Latin-1 too
            for widget in (app.flag, app.status, app.title_bar):
                plain = widget.render().plain
                assert all(ord(ch) <= 0xFF for ch in plain), plain

    run(go())


def test_held_key_coalesces_words_and_chart_but_ends_on_the_last_value(tmp_path):
    async def go():
        app = _app(_copy(tmp_path), immediate=False)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.3)
            form = app.query_one(SetupForm)
            builds = app.chart.builds
            shown = []
            run = app.word_updates.run
            app.word_updates.run = lambda: (shown.append(app.setup.terrain.slope_deg), run())
            for _ in range(10):  # ten steps inside one frame, as a held key delivers them
                form.action_step(1)
            assert form.value_text("terrain.slope_deg") == "40.0"  # the value itself moves at once
            await pilot.pause(0.5)
            assert len(shown) <= 3 and shown[-1] == 40  # the words: first step, then the last one
            assert app.setup.terrain.slope_deg == 40
            assert "40" in app.flag.words and app.status.view.lines[1].startswith("At 40")
            assert app.chart.data.slope_deg == 40
            # the first step, the trailing one, and one for the chart growing into the start-up note's room
            assert app.chart.builds - builds <= 3

    run(go())


def test_pin_and_clear_baseline_shows_how_angles_moved(tmp_path):
    async def go():
        app = _app(_copy(tmp_path, rigid=True))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            before = _reference_handover_deg(app.setup)
            await pilot.press("b")
            form = app.query_one(SetupForm)
            form.focus_key("rig.front_bias_pct")
            await pilot.press("shift+right")  # +5 % front bias
            await pilot.pause()
            after = _reference_handover_deg(app.setup)
            assert app.chart.data.baseline is not None
            assert f"handover {after - before:+.1f}" in app.status.view.compare
            await pilot.press("x")
            await pilot.pause()
            assert app.chart.data.baseline is None and app.status.view.compare is None

    run(go())


def test_units_toggle_shows_imperial_and_keeps_the_file_metric(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            await pilot.press("u")
            await pilot.pause()
            # 1 oz = 28.349523125 g, 1 in = 25.4 mm (exact, International Yard and Pound, 1959)
            assert form.value_text("rig.mass_g") == f"{2380 / 28.349523125:.2f}"
            assert form.value_text("rig.wheelbase_mm") == f"{313 / 25.4:.2f}"
            assert app.chart.data.unit == "oz"
            form.focus_key("rig.wheelbase_mm")
            await pilot.press("1", "3", "enter")  # typed in inches
            await pilot.pause()
            assert app.setup.rig.wheelbase_mm == pytest.approx(13 * 25.4)

    run(go())


def test_ballast_add_remove_and_driveline_toggle(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            assert form.focus_key("rig.ballast.1.mass_g")
            await pilot.press("delete")
            await pilot.pause()
            assert len(app.setup.rig.ballast) == 1
            row = next(i for i, r in enumerate(form.rows) if r.kind == "add_ballast")
            form._move_to(row)
            await pilot.press("enter")
            await pilot.pause()
            assert len(app.setup.rig.ballast) == 2 and app.setup.rig.ballast[1].mass_g == 0
            # gear stages 13:38 front, 13:40 rear; as a percentage: R_rear / R_front - 1
            assert form.focus_key("driveline.mode")
            await pilot.press("enter")
            await pilot.pause()
            expected = ((40 / 13) / (38 / 13) - 1) * 100
            assert app.setup.driveline.overdrive_pct == pytest.approx(expected, abs=1e-3)
            assert form.focus_key("driveline.overdrive_pct")
            # per-axle override clears back to the common value
            assert form.focus_key("grip.front_mu_static")
            await pilot.press("delete")
            await pilot.pause()
            assert app.setup.grip.front_mu_static is None
            assert form.value_text("grip.front_mu_static") == "1.00"

    run(go())


def test_bundled_demo_is_the_shipped_setup():
    demo = ROOT / "tui" / "demo" / "marmot-overdrive.toml"
    assert demo.read_bytes() == DEMO.read_bytes()


def test_demo_copy_saves_through_save_as_with_its_comments(tmp_path):
    from textual.widgets import Input

    from slopetune.tui.app_main import demo_setup

    target = tmp_path / "mine"

    async def go():
        app = SlopeTuneApp(demo_setup())
        app.word_updates.every_s = app.chart_updates.every_s = 0.0
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            assert app.path is None and app.title_bar.unsaved
            await pilot.press("ctrl+s")  # no file yet: asks for a name
            await pilot.pause()
            assert type(app.screen).__name__ == "PathPromptScreen"
            app.screen.query_one(Input).value = str(target)
            await pilot.press("enter")
            await pilot.pause()
            assert app.path == target.with_suffix(".toml")
            assert not app.title_bar.unsaved

    run(go())
    text = target.with_suffix(".toml").read_text(encoding="utf-8")
    assert "# Weight added after the rig was measured." in text
    assert load_setup(target.with_suffix(".toml")).setup == load_setup(DEMO).setup


def test_save_error_keeps_everything_in_the_app(tmp_path):
    from textual.widgets import Input

    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("right", "a")
            await pilot.pause()
            app.screen.query_one(Input).value = str(tmp_path / "no-such-folder" / "x.toml")
            await pilot.press("enter")
            await pilot.pause()
            assert app.screen is app.main_screen
            words, severity = app.status.note
            assert severity == "error" and "not saved" in words.lower() and "no-such-folder" in words
            assert app.setup.terrain.slope_deg == 31 and app.title_bar.unsaved
            assert app.path == tmp_path / "rig.toml"

    run(go())
