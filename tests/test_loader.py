"""Setup files: every bad file gives one clear line, through the API and through `slopetune report`.

One fixture file per error case lives in tests/fixtures/bad/; the line at fault carries the comment
``# <- error`` so the expected line number is read from the fixture, not written twice. Binary,
non-UTF-8 and oversized files are generated here. (House habit: one fixture per config error, each
error naming file, line and key.)
"""

from __future__ import annotations

import math
import os
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from slopetune import engine
from slopetune.engine import SetupError, load_setup, parse_setup

ROOT = Path(__file__).resolve().parent.parent
BAD = Path(__file__).resolve().parent / "fixtures" / "bad"
GOOD = ROOT / "setups" / "marmot-overdrive.toml"

# fixture -> words the one-line message must hold: the key (or what stands for it) and what is allowed
EXPECTED = {
    "missing_required_key": ("rig.mass_g", "missing", "required", "> 0"),
    "wrong_type": ("rig.mass_g", "'about two kilos'", "must be a number"),
    "bool_for_number": ("grip.mu_static", "must be a number > 0"),
    "nan_value": ("rig.cg_height_mm", "nan", "finite"),
    "inf_value": ("rig.track_mm", "inf", "finite"),
    "out_of_range": ("rig.front_bias_pct", "120", "> 0 and < 100"),
    "slope_out_of_range": ("terrain.slope_deg", "95", "> -90 and < 90"),
    "overdrive_out_of_range": ("driveline.overdrive_pct", "-75", "> -50"),
    "ballast_cg_off_wheelbase": ("rig.ballast", "off the wheelbase", "allowed 0 to 270"),
    "ballast_no_mass": ("rig.ballast", "no mass"),
    "mu_kinetic_above_static": ("grip.mu_kinetic", "<= mu_static"),
    "unknown_section": ("[motor]", "unknown section", "allowed sections: rig, driveline, grip, terrain, course"),
    "missing_section": ("[grip]", "missing section", "required"),
    "schema_newer": ("schema", "2", "newer", "(1)"),
    "missing_schema": ("schema", "missing", "schema = 1"),
    "syntax_error": ("TOML syntax",),
    "empty": ("empty", "schema, [rig], [grip] and [terrain]"),
    "overdrive_and_stages": ("overdrive_pct", "front_stages", "not both"),
    "one_stage_list": ("rear_stages", "missing", "both front_stages and rear_stages"),
    "zero_tooth_count": ("driveline.front_stages", "tooth count 0", "whole number >= 1"),
    "fractional_tooth_count": ("driveline.rear_stages", "tooth count 12.5", "whole number"),
    "bad_slip_stiffness": ("grip.slip_stiffness", "'soft'", '"rigid" or a number > 0'),
    # MODEL section 5: c <= 3 mu_s can never saturate a driving tyre
    "slip_stiffness_too_soft": ("grip.slip_stiffness", "2.5", "above 3 x its static mu (3)"),
    "course_x_not_increasing": ("course.points_mm", "x must increase"),
}


def marked_line(path: Path):
    """1-based line of the ``# <- error`` marker, or None when the fixture has none."""
    for no, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        if "# <- error" in line:
            return no
    return None


def generated_bad_files(folder: Path) -> dict:
    """Files a fixture cannot hold well: name -> (path, words the message must hold)."""
    good = GOOD.read_bytes()
    out = {}
    p = folder / "binary.toml"
    p.write_bytes(good[:60] + b"\x00\x01\x02\xff" + good[60:])  # NUL bytes: not a text file
    out["binary"] = (p, ("binary",))
    p = folder / "latin1.toml"
    p.write_bytes(good.replace(b'name = "', b'name = "Gr\xfcn ', 1))  # Latin-1 byte, not UTF-8
    out["latin1"] = (p, ("not UTF-8",))
    p = folder / "huge.toml"
    p.write_bytes(good + b"\n" + (b"# padding to pass one mebibyte\n" * 34000))  # > 1 MiB
    assert p.stat().st_size > 1 << 20
    out["huge"] = (p, ("1 MiB",))
    p = folder / "no-such-file.toml"
    out["missing_file"] = (p, ("no such file",))
    out["folder"] = (folder, ("folder",))
    return out


def test_there_are_enough_fixtures():
    # Issue requirement: at least 15 bad-file fixtures, one per error case, each with expectations.
    names = sorted(p.stem for p in BAD.glob("*.toml"))
    assert len(names) >= 15
    assert names == sorted(EXPECTED)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_bad_fixture_gives_one_line_naming_file_line_key(name):
    path = BAD / f"{name}.toml"
    with pytest.raises(SetupError) as info:
        load_setup(path)
    message = str(info.value)
    assert "\n" not in message and "\r" not in message
    assert message.startswith(str(path))
    line = marked_line(path)
    if line is not None:
        assert info.value.line == line
        assert message.startswith(f"{path}:{line}: ")
    for words in EXPECTED[name]:
        assert words in message, words


def test_generated_bad_files_give_one_line(tmp_path):
    for name, (path, words) in generated_bad_files(tmp_path).items():
        with pytest.raises(SetupError) as info:
            load_setup(path)
        message = str(info.value)
        assert "\n" not in message and message.startswith(str(path)), name
        for w in words:
            assert w in message, (name, w)


def test_latin1_error_names_the_line(tmp_path):
    # The byte that is not UTF-8 sits on the name line of the demo file.
    path, _ = generated_bad_files(tmp_path)["latin1"]
    lines = path.read_bytes().split(b"\n")
    want = next(i for i, ln in enumerate(lines, 1) if b"\xfc" in ln)
    with pytest.raises(SetupError) as info:
        load_setup(path)
    assert info.value.line == want


def test_unknown_keys_in_known_sections_load_with_a_warning(tmp_path):
    text = GOOD.read_text(encoding="utf-8")
    text = text.replace("[rig]\n", "[rig]\npaint = \"sky blue\"\n", 1)
    text = text.replace("[grip]\n", "[grip]\nsurface = \"granite\"\n", 1)
    text = text.replace('name = "brass front knuckles (pair)"\n', 'name = "brass front knuckles (pair)"\nsupplier = "x"\n', 1)
    path = tmp_path / "extra-keys.toml"
    path.write_text(text, encoding="utf-8")
    loaded = load_setup(path)
    assert loaded.setup == load_setup(GOOD).setup  # the extra keys change nothing
    assert loaded.data["rig"]["paint"] == "sky blue"  # but are kept for the writer
    assert len(loaded.warnings) == 3
    lines = text.splitlines()
    for key, warning in zip(("paint", "supplier", "surface"), sorted(loaded.warnings, key=lambda w: int(w.split(":")[1]))):
        line = int(warning.split(":")[1])
        assert warning.startswith(f"{path}:") and key in warning and "\n" not in warning
        assert lines[line - 1].startswith(key)


# --- nothing but SetupError ------------------------------------------------------------------

_GOOD_TEXT = GOOD.read_text(encoding="utf-8")
_VALUE_LINES = [i for i, ln in enumerate(_GOOD_TEXT.splitlines()) if "=" in ln and not ln.lstrip().startswith("#")]
toml_values = st.one_of(
    st.sampled_from(["nan", "-inf", "inf", "true", "0", "-1", "1e309", "1e-320", "[]", "[[]]", "{}", "\"\"",
                     "[[0, 1]]", "[[1.5, 2]]", "[1, 2]", "1979-05-27", "{ a = 1 }", "=", "[", "\"\\u0000\""]),
    st.integers(-10**20, 10**20).map(str),
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.text(max_size=20).map(lambda s: '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'),
)


@settings(max_examples=200, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(_VALUE_LINES), toml_values), min_size=1, max_size=3))
def test_mutated_values_raise_only_setup_error(changes):
    lines = _GOOD_TEXT.splitlines()
    for index, value in changes:
        key = lines[index].split("=", 1)[0]
        lines[index] = f"{key}= {value}"
    try:
        setup, _, _ = parse_setup("\n".join(lines), "mutated.toml")
    except SetupError as exc:
        assert "\n" not in str(exc) and str(exc).startswith("mutated.toml")
    else:
        engine.analyse(setup)  # whatever loads must analyse


@settings(max_examples=60)
@given(st.binary(max_size=300), st.integers(0, len(_GOOD_TEXT)))
def test_arbitrary_bytes_raise_only_setup_error(junk, at):
    raw = _GOOD_TEXT.encode()[:at] + junk + _GOOD_TEXT.encode()[at:]
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "junk.toml"
        path.write_bytes(raw)
        try:
            load_setup(path)
        except SetupError as exc:
            assert "\n" not in str(exc)


# --- the command line -----------------------------------------------------------------------

def _run_reports(paths):
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    procs = [subprocess.Popen([sys.executable, "-m", "slopetune.tui.cli", "report", str(p)], cwd=ROOT, env=env,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for p in paths]
    return [(p.wait(timeout=120), p.stdout.read(), p.stderr.read()) for p in procs]


def test_report_exits_2_with_one_line_for_every_bad_file(tmp_path):
    # The CLI contract: exit 2, exactly one line on stderr (the engine's message), no traceback.
    paths = [BAD / f"{n}.toml" for n in sorted(EXPECTED)]
    paths += [p for p, _ in generated_bad_files(tmp_path).values()]
    for path, (code, out, err) in zip(paths, _run_reports(paths)):
        assert code == 2, (path, err)
        assert out == "", path
        assert len(err.splitlines()) == 1 and err.endswith("\n"), (path, err)
        assert "Traceback" not in err
        with pytest.raises(SetupError) as info:
            load_setup(path)
        assert str(info.value) in err


def test_report_loads_a_good_file():
    # The positive control for the test above: the same command on a shipped setup exits 0.
    [(code, out, err)] = _run_reports([GOOD])
    assert code == 0 and err == "" and out.strip()


def test_retired_load_mode_loads_with_one_warning(tmp_path):
    # MODEL section 3: "no load" is not a state a rig can be in; old files keep loading
    text = GOOD.read_text(encoding="utf-8").replace("[terrain]\n", '[terrain]\nload = "none"\n', 1)
    p = tmp_path / "old.toml"
    p.write_text(text, encoding="utf-8")
    loaded = engine.load_setup(p)
    retired = [w for w in loaded.warnings if "terrain.load" in w]
    assert len(retired) == 1 and "retired" in retired[0] and "rule of thumb" in retired[0]


def test_rigid_word_and_roll_out_keys_load(tmp_path):
    text = GOOD.read_text(encoding="utf-8").replace("slip_stiffness = 40", 'slip_stiffness = "rigid"')
    p = tmp_path / "rigid.toml"
    p.write_text(text, encoding="utf-8")
    s = engine.load_setup(p).setup
    assert s.grip.rigid and s.grip.axle_stiffness() == (math.inf, math.inf)
    assert s.rig.rolling_dia_mm() == (111.2, 109.4)
    assert engine.check_value(s, "grip.front_slip_stiffness", 2.0).startswith("front slip stiffness 2")
    assert engine.check_value(s, "rig.rolling_dia_front_mm", 120.0).startswith("roll-out diameter 120")
