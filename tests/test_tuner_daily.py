"""The tuner as a daily tool (undo, the effective rig, sections, typing, messages), by Pilot at 80x24.

Expected numbers are worked by hand or from the published equations here, never by the code under
test: ballast combines by first moments of mass (any statics text, e.g. Meriam & Kraige,
*Engineering Mechanics: Statics*, ch. 5, centre of mass of a composite body).
"""

from __future__ import annotations

from pathlib import Path

from slopetune.engine import load_setup
from slopetune.tui.app import SlopeTuneApp
from slopetune.tui.widgets.setup_form import SetupForm

from test_screens import screen_text
from test_tuner import _app, run  # the tuner with the held-key rate limits off

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"
SIZE = (80, 24)


def _copy(tmp_path: Path, text: str | None = None) -> Path:
    target = tmp_path / "rig.toml"
    target.write_text(DEMO.read_text(encoding="utf-8") if text is None else text, encoding="utf-8")
    return target


def test_undo_and_redo_steps_typed_values_and_the_unsaved_marker(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            assert not app.title_bar.unsaved
            await pilot.press("right")
            await pilot.pause()
            await pilot.pause(0.4)  # a separate press, not a held key
            await pilot.press("4", "5", "enter")
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 45.0 and app.title_bar.unsaved
            await pilot.press("ctrl+z")
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 31.0
            assert form.value_text("terrain.slope_deg") == "31.0"
            await pilot.press("z")  # the console-safe key
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 30.0
            assert not app.title_bar.unsaved  # back to the file's own values
            await pilot.press("ctrl+y")
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 31.0 and app.title_bar.unsaved
            await pilot.press("Z")
            await pilot.pause()
            assert app.setup.terrain.slope_deg == 45.0
            await pilot.press("Z")
            await pilot.pause()
            assert "Nothing to redo" in app.status.note[0]

    run(go())


def test_undo_takes_back_an_added_ballast_item_and_a_held_key_is_one_step(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            items = len(app.setup.rig.ballast)
            form.focus_key("rig.mass_g")
            app.history.clock = lambda: 0.0  # every key comes at once, as from a held key
            await pilot.press(*["right"] * 6)
            await pilot.pause()
            assert app.setup.rig.mass_g == 2380 + 6 * 5
            while form.row.kind != "add_ballast":
                await pilot.press("down")
            await pilot.press("enter")
            await pilot.pause()
            assert len(app.setup.rig.ballast) == items + 1
            await pilot.press("ctrl+z")
            await pilot.pause()
            assert len(app.setup.rig.ballast) == items
            await pilot.press("ctrl+z")
            await pilot.pause()
            assert app.setup.rig.mass_g == 2380
            assert not app.title_bar.unsaved

    run(go())


def test_quit_offers_save_and_quit(tmp_path):
    path = _copy(tmp_path)

    async def go():
        app = _app(path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("right", "q")
            await pilot.pause()
            assert type(app.screen).__name__ == "ConfirmScreen"
            await pilot.press("s")
            await pilot.pause()
        return app

    app = run(go())
    assert app.return_code == 0
    assert load_setup(path).setup.terrain.slope_deg == 31.0  # saved before quitting


def test_save_as_offers_the_current_folder_for_the_demo_and_typing_replaces_it(tmp_path, monkeypatch):
    from slopetune.tui.app_main import demo_setup

    monkeypatch.chdir(tmp_path)

    async def go():
        app = SlopeTuneApp(demo_setup())
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("a")
            await pilot.pause()
            field = app.screen.query_one("#path-input")
            assert field.value == "my-setup.toml"
            await pilot.press(*"rig2", "enter")
            await pilot.pause()
            assert app.path is not None and app.path.name == "rig2.toml"

    run(go())
    assert (tmp_path / "rig2.toml").is_file()


def test_typing_into_a_text_field_replaces_its_value(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            form.focus_key("rig.ballast.0.name")
            await pilot.press("enter", *"lead", "enter")
            await pilot.pause()
            assert app.setup.rig.ballast[0].name == "lead"
            # an arrow key first keeps the value to edit it
            await pilot.press("enter", "right", *" nose", "enter")
            await pilot.pause()
            assert app.setup.rig.ballast[0].name == "lead nose"

    run(go())


def test_rig_section_shows_the_rig_with_its_ballast_as_it_changes(tmp_path):
    setup = load_setup(DEMO).setup
    rig = setup.rig
    # first moments of mass, by hand from the file's numbers (not the engine's sums)
    mass = rig.mass_g + sum(b.mass_g for b in rig.ballast)
    x = (rig.mass_g * rig.front_bias_pct / 100 * rig.wheelbase_mm + sum(b.mass_g * b.x_mm for b in rig.ballast)) / mass
    z = (rig.mass_g * rig.cg_height_mm + sum(b.mass_g * b.z_mm for b in rig.ballast)) / mass

    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            shown = {key: float(form.value_text(key)) for key in
                     ("mass_g", "front_bias_pct", "cg_height_mm", "cg_from_rear_mm")}
            assert abs(shown["mass_g"] - mass) <= 0.5
            assert abs(shown["front_bias_pct"] - 100 * x / rig.wheelbase_mm) <= 0.05
            assert abs(shown["cg_height_mm"] - z) <= 0.5
            assert abs(shown["cg_from_rear_mm"] - x) <= 0.5
            form.focus_key("rig.ballast.0.mass_g")
            await pilot.press("shift+right")  # +50 g of brass
            await pilot.pause()
            assert abs(float(form.value_text("mass_g")) - (mass + 50)) <= 0.5
            assert float(form.value_text("front_bias_pct")) != shown["front_bias_pct"]

    run(go())


def test_page_keys_jump_by_section_and_ballast_names_show_in_full(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            form = app.query_one(SetupForm)
            seen = []
            for _ in range(6):
                await pilot.press("pagedown")
                await pilot.pause()
                seen.append(form.row.key or form.row.kind)
            assert seen[:5] == ["rig.mass_g", "rig.ballast.0.name", "driveline.mode", "grip.mu_static", "name"]
            await pilot.press("pageup", "pageup")
            await pilot.pause()
            assert form.row.key == "driveline.mode"
            form.focus_key("rig.ballast.0.name")
            await pilot.pause()
            assert "brass front knuckles (" in screen_text(app)  # the demo's first item, not "brass front..."

    run(go())


def test_flag_suggests_fixes_after_the_keys_pause_and_f_opens_the_planner_with_them(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            assert app.flag.level == "warn"  # the demo at 30 deg: the overdriven front lets go first
            for _ in range(40):
                await pilot.pause(0.1)
                if app.status.fixes:
                    break
            words = app.status.fixes
            # matching ground speeds ends wind-up: p = 100 (D_r / D_f - 1) = 100 (112/114 - 1) = -1.75 %
            # (tyre sizes from the demo file, worked by hand)
            assert words.startswith("Fix (f): ") and "-1.8 %" in words
            await pilot.press("f")
            await pilot.pause()
            assert type(app.screen).__name__ == "PlanScreen"
            assert app.screen.query_one("#p-angle").value == "handover"
            assert float(app.screen.query_one("#p-value").value) >= app.setup.terrain.slope_deg
            await pilot.press("escape")
            await pilot.pause()
            # a setup with no verdict to fix: the line goes at once
            app.query_one(SetupForm).focus_key("terrain.slope_deg")
            await pilot.press(*"2", "enter")
            await pilot.pause()
            assert app.flag.level == "ok" and app.status.fixes == ""

    run(go())


def test_every_file_warning_shows_with_did_you_mean(tmp_path):
    text = DEMO.read_text(encoding="utf-8").replace("[driveline]", "[driveline]\noverdrive = 5", 1)
    text = text.replace("[grip]", "[grip]\nmu_statc = 1.0", 1)
    path = _copy(tmp_path, text)
    loaded = load_setup(path)
    assert len(loaded.warnings) == 2
    assert "did you mean driveline.overdrive_pct?" in loaded.warnings[0]
    assert "did you mean grip.mu_static?" in loaded.warnings[1]

    async def go():
        app = _app(path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            words = screen_text(app)
            assert "overdrive_pct?" in words and "mu_static?" in words  # both, not only the first

    run(go())


def test_limits_read_as_people_write_them_and_deltas_never_read_minus_zero():
    from slopetune.engine import check_value
    from slopetune.tui.units import Units

    setup = load_setup(DEMO).setup
    assert "< 1,000,000" in check_value(setup, "rig.mass_g", 5e6)
    units = Units(imperial=False, ascii_only=True)
    assert units.angle(-0.04, signed=True) == "+0.0 deg" and units.slope(-0.01) == "0 deg"


def test_a_long_title_ends_in_an_ellipsis_not_mid_word():
    from slopetune.tui.widgets.title_bar import _fit

    assert _fit("Marmot 313 - front overdrive, brass knuckles", 30) == "Marmot 313 - front overdrive\u2026"
    assert _fit("short", 30) == "short"


def test_open_list_shows_setups_and_courses_not_other_toml_files(tmp_path):
    from slopetune.tui.screens.open_file import scan_setup_files

    (tmp_path / "pyproject.toml").write_text('[project]\nname = "x"\n', encoding="utf-8")
    (tmp_path / "rig.toml").write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    (tmp_path / "broken.toml").write_text("schema = 1\n[rig\n", encoding="utf-8")  # a setup, broken: listed
    (tmp_path / "course.toml").write_text("schema = 1\n[course]\nname = 'x'\n", encoding="utf-8")
    entries, _problems = scan_setup_files([tmp_path])
    assert sorted(e.path.name for e in entries) == ["broken.toml", "course.toml", "rig.toml"]
    good = ROOT / "setups" / "course-kestrel-knuckle.toml"
    (tmp_path / "a-course.toml").write_text(good.read_text(encoding="utf-8"), encoding="utf-8")
    entries, _problems = scan_setup_files([tmp_path])
    # setups first, then good courses (named, marked), then files with a problem
    assert [e.path.name for e in entries][:2] == ["rig.toml", "a-course.toml"]
    assert entries[1].course and entries[1].name == "Kestrel Knuckle (course)" and entries[1].problem is None


def test_opening_a_course_file_walks_the_open_rig_over_it_and_keeps_the_setup(tmp_path):
    path = _copy(tmp_path)
    course = tmp_path / "knuckle.toml"
    course.write_text((ROOT / "setups" / "course-kestrel-knuckle.toml").read_text(encoding="utf-8"), encoding="utf-8")

    async def go():
        app = _app(path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("right")  # an unsaved change: opening a course must not ask to drop it
            await pilot.pause()
            changed = app.setup
            app._walk_course_file(course)
            await pilot.pause(0.5)
            assert type(app.screen).__name__ == "CourseScreen"
            assert app.screen.course.name == "Kestrel Knuckle" and app.screen.setup == changed
            await pilot.press("escape")
            await pilot.pause()
            assert app.setup == changed and app.path == path
            assert app._walk_course_file(path) is False  # a setup file is not a course

    run(go())


def test_accepting_a_plan_asks_before_replacing_a_pinned_baseline(tmp_path):
    async def go():
        app = _app(_copy(tmp_path))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("b")  # pin
            await pilot.pause()
            planned = app.setup.with_value("rig.cg_height_mm", 70.0)
            await pilot.press("p")
            await pilot.pause()
            app.screen.dismiss(planned)  # as Enter on a reached answer does
            await pilot.pause()
            assert type(app.screen).__name__ == "ConfirmScreen"
            await pilot.press("n")  # keep the pinned baseline
            await pilot.pause()
            assert app.setup == planned and app.baseline.label == "pinned"
            await pilot.press("ctrl+z")  # the plan is one undo step
            await pilot.pause()
            assert app.setup.rig.cg_height_mm != 70.0

    run(go())


def test_help_from_the_tuner_lists_its_own_keys_undo_and_redo_included():
    """The help reads the keys before it covers the tuner: undo and redo, which only work on the
    tuner's screen, are listed with the rest (and the framework's own keys are not)."""
    from textual.widgets import Static

    async def go():
        app = _app(DEMO)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            await pilot.press("f1")
            await pilot.pause()
            keys = str(app.screen.query_one("#help-keys", Static).render())
            assert "Ctrl+Z/z" in keys and "Undo" in keys and "Ctrl+Y/Z" in keys and "Redo" in keys
            assert "Save" in keys and "Quit" in keys and "palette" not in keys.lower()

    run(go())


def test_fix_line_off_the_fall_line_says_its_target_is_the_straight_climb(tmp_path):
    """On a heading the flag follows the heading but the planner's targets are the straight climb's
    named angles (MODEL section 8 has no heading handover): the Fix line says so."""
    text = DEMO.read_text(encoding="utf-8").replace("heading_deg = 0 ", "heading_deg = 20", 1)

    async def go():
        app = _app(_copy(tmp_path, text))
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause()
            assert app.flag.level == "warn" and app.setup.terrain.heading_deg == 20.0
            for _ in range(40):
                await pilot.pause(0.1)
                if app.status.fixes:
                    break
            assert app.status.fixes.startswith("Fix (f, for a straight climb): ")

    run(go())
