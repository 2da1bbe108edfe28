"""Starting the tuner: bad files stop before Textual, and the plain-character mode is chosen right."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path
from types import SimpleNamespace

from slopetune.tui.app_main import demo_setup, display_charset
from slopetune.tui.widgets import form_fields as ff
from slopetune.tui.widgets.load_chart import ASCII_FOLD, chart_data, plot_text
from slopetune.tui.units import Units

ROOT = Path(__file__).resolve().parent.parent


def test_bad_file_is_one_line_and_exit_2_before_textual(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("schema = 1\n[rig]\nmass_g = -5\n", encoding="utf-8")
    code = (
        "import sys; from types import SimpleNamespace as N; from tui.app_main import run_tuner;"
        f"rc = run_tuner(N(file={str(bad)!r}, ascii=False, baseline=None));"
        "print('textual' in sys.modules, 'plotext' in sys.modules); sys.exit(rc)"
    )
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert out.returncode == 2
    assert out.stdout.strip() == "False False"
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"slopetune: {bad}:")


def test_missing_baseline_file_also_stops_early(tmp_path):
    from slopetune.tui.app_main import run_tuner

    rc = run_tuner(SimpleNamespace(file=None, ascii=False, baseline=str(tmp_path / "none.toml")))
    assert rc == 2


class _Stream:
    def __init__(self, encoding):
        self.encoding = encoding


def test_plain_mode_detection():
    utf8 = (_Stream("utf-8"), _Stream("UTF-8"))
    assert display_charset(False, {"TERM": "xterm-256color"}, utf8) == (False, "utf-8")
    assert display_charset(True, {"TERM": "xterm-256color"}, utf8) == (True, "latin-1")
    assert display_charset(False, {"TERM": "linux"}, utf8) == (True, "latin-1")
    assert display_charset(False, {"TERM": "dumb"}, utf8) == (True, "latin-1")
    # LC_ALL=C with PYTHONUTF8=0: Python's streams are ASCII
    assert display_charset(False, {"TERM": "xterm"}, (_Stream("ANSI_X3.4-1968"),) * 2) == (True, "ascii")
    assert display_charset(False, {"TERM": "xterm"}, (_Stream("iso-8859-1"),) * 2) == (True, "latin-1")


def test_demo_is_an_unsaved_copy():
    loaded = demo_setup()
    assert loaded.path is None and "Marmot 313" in loaded.setup.name and loaded.text.startswith("#")


def test_every_setup_key_has_a_form_row():
    setup = demo_setup().setup
    keys = {row.key for row in ff.build_rows(setup)}
    from slopetune.engine.setup_file import SECTION_KEYS

    for section in ("rig", "grip", "terrain"):
        names = [n for n in SECTION_KEYS[section] if n not in ("ballast", "load")]  # load: retired
        assert {f"{section}.{n}" for n in names} <= keys, section
    for i in range(len(setup.rig.ballast)):
        assert {f"rig.ballast.{i}.{k}" for k in ("name", "mass_g", "x_mm", "z_mm")} <= keys
    assert {"driveline.mode", "driveline.front_stages.0.0", "driveline.rear_stages.0.1", "name", "notes"} <= keys
    as_pct = ff.toggle_drive_mode(setup).setup
    assert "driveline.overdrive_pct" in {row.key for row in ff.build_rows(as_pct)}


def test_steps_per_field_and_coarse_step():
    setup = demo_setup().setup
    rows = {row.key: row for row in ff.build_rows(setup)}
    cases = {"rig.mass_g": 5, "rig.wheelbase_mm": 1, "rig.front_bias_pct": 0.5, "terrain.slope_deg": 1,
             "grip.mu_static": 0.05, "grip.rolling_resistance": 0.01, "driveline.front_stages.0.0": 1,
             "terrain.accel_g": 0.05}
    for key, step in cases.items():
        before = ff.get_value(setup, key)
        after = ff.get_value(ff.step(setup, rows[key], 1).setup, key)
        assert abs((after - before) - step) < 1e-9, key
    coarse = ff.step(setup, rows["rig.mass_g"], ff.COARSE).setup
    assert coarse.rig.mass_g == setup.rig.mass_g + 50
    # six 0.05 steps land on 1.30 exactly as shown, not 1.3000000000000003
    s = setup
    for _ in range(6):
        s = ff.step(s, rows["grip.mu_static"], 1).setup
    assert s.grip.mu_static == 1.3


def test_ascii_chart_text_is_latin1_at_many_sizes():
    from slopetune import engine
    import numpy as np

    setup = demo_setup().setup
    a = engine.analyse(setup, np.arange(-90.0, 91.0, 1.0))
    data = chart_data(a, Units(ascii_only=True), baseline=a)
    for width, height in ((24, 5), (48, 11), (120, 40)):
        text = plot_text(data, width, height, ascii_only=True)
        assert all(ord(ch) <= 0xFF for ch in text)
        assert len(text.splitlines()) == height
    # the fold table only ever maps to plain ASCII
    assert all(len(v) == 1 and v.isascii() for v in ASCII_FOLD.values())


def _reference_state(setup, slope_deg):
    """Slip state from the grade loads (Gillespie 1992, ch. 2) and Coulomb friction under wind-up
    (Serway & Beichner, ch. 5), front axle overdriven: "front", "rear", "both" or "lifted"."""
    import math

    r = setup.rig
    w = r.mass_g + sum(i.mass_g for i in r.ballast)
    b = (r.mass_g * r.wheelbase_mm * r.front_bias_pct / 100 + sum(i.mass_g * i.x_mm for i in r.ballast)) / w
    h = (r.mass_g * r.cg_height_mm + sum(i.mass_g * i.z_mm for i in r.ballast)) / w
    t = math.radians(slope_deg)
    nf = w * (b * math.cos(t) - h * math.sin(t)) / r.wheelbase_mm
    nr = w * math.cos(t) - nf
    if nf <= 0 or nr <= 0:
        return "lifted"
    g = setup.grip
    msf, mkf = g.front_mu_static or g.mu_static, g.front_mu_kinetic or g.mu_kinetic
    msr, mkr = g.rear_mu_static or g.mu_static, g.rear_mu_kinetic or g.mu_kinetic
    need = w * (math.sin(t) + g.rolling_resistance * math.cos(t))
    if msf * nf - msr * nr < need:  # the fast (front) axle reaches its limit first
        return "front" if abs(need - mkf * nf) <= msr * nr else "both"
    return "rear" if abs(need + mkr * nr) <= msf * nf else "both"


def test_flag_words_match_the_reference_states_on_the_steep_side():
    from slopetune import engine

    from slopetune.tui.status_words import status_view

    base = demo_setup().setup.rigid_tyres()  # the reference is the rigid-driveline rule
    for slope in (10.0, 40.0, 45.0, 60.0, 70.0):
        setup = base.with_value("terrain.slope_deg", slope)
        view = status_view(engine.analyse(setup), Units())
        expected = _reference_state(setup, slope)
        if expected == "lifted":
            assert view.level == "danger" and "front axle lifts" in view.flag, (slope, view.flag)
        elif expected == "both":
            assert view.level == "danger" and "both axles slip" in view.flag, (slope, view.flag)
        else:
            assert expected == "front" and view.level == "warn" and "SLIP FLAG" in view.flag, (slope, view.flag)
        assert f"At {slope:g}\u00b0 climbing" in view.lines[1]


def test_chart_text_does_not_depend_on_the_chart_drawn_before():
    from slopetune import engine
    import numpy as np

    setup = demo_setup().setup
    wide = engine.analyse(setup, np.arange(-90.0, 91.0, 1.0))
    heavy = engine.analyse(setup.with_value("rig.mass_g", 3000.0), np.arange(0.0, 91.0, 1.0))
    first = plot_text(chart_data(heavy, Units()), 49, 14, ascii_only=False)
    plot_text(chart_data(wide, Units(ascii_only=True), baseline=wide), 60, 20, ascii_only=True)
    assert plot_text(chart_data(heavy, Units()), 49, 14, ascii_only=False) == first
