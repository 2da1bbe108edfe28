"""The command line as a user meets it: version, typos, help anywhere, one-line argument errors,
`measure --from`, `measure --write` rounding and layout, and what the installed package carries."""

from __future__ import annotations

import math
import re
import shutil
import sys
from pathlib import Path

import pytest

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

from slopetune.tui.cli import main

ROOT = Path(__file__).resolve().parents[1]
STOCK = ROOT / "setups" / "marmot-stock.toml"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def one_line_error(capsys, *argv) -> str:
    code, out, err = run(capsys, *argv)
    assert code == 2, (argv, out, err)
    assert err.count("\n") == 1 and err.endswith("\n"), err
    assert "Traceback" not in err and "usage:" not in err
    return err


# ---- version, typos, help ------------------------------------------------------------------


def test_version_is_the_distribution_version(capsys):
    # The version's one home is pyproject.toml, read here with tomllib (not through the package).
    want = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["version"]
    code, out, err = run(capsys, "--version")
    assert code == 0 and out == f"slopetune {want}\n" and err == ""


@pytest.mark.parametrize("argv", [["reprot", str(STOCK)], ["reprot"], ["mesure", "bias"], ["comapre"]])
def test_mistyped_command_suggests_the_command(capsys, argv):
    err = one_line_error(capsys, *argv)
    want = {"reprot": "report", "mesure": "measure", "comapre": "compare"}[argv[0]]
    assert f"unknown command '{argv[0]}'" in err and f"did you mean {want}?" in err
    assert "no such file" not in err


def test_a_word_that_is_neither_command_nor_file(capsys):
    err = one_line_error(capsys, "xyzzy")
    assert "unknown command 'xyzzy'" in err and "report" in err


def test_a_missing_file_is_still_named_as_a_file(capsys):
    err = one_line_error(capsys, "nowhere/rig.toml")
    assert "no such file" in err and "nowhere/rig.toml" in err


@pytest.mark.parametrize("argv", [["--help"], ["-h"], [str(STOCK), "--help"], ["--ascii", "--help"],
                                  ["--baseline", str(STOCK), "-h"]])
def test_help_anywhere_lists_the_tuner_options_and_commands(capsys, argv):
    code, out, err = run(capsys, *argv)
    assert code == 0 and err == ""
    for words in ("--ascii", "--baseline FILE", "FILE", "--version", "report", "measure", "walk", "plan", "compare"):
        assert words in out, words


@pytest.mark.parametrize("argv, words", [
    (["report", str(STOCK), "--help"], "--step DEG"),
    (["report", "--json", "--help"], "--step DEG"),
    (["measure", "--help"], "cg-height"),
    (["measure", "cg-height", "--lift", "nonsense", "--help"], "--level-front G"),
    (["measure", "mu", "--angle", "x", "-h"], "--angle DEG"),
    (["walk", "--step", "x", "--help"], "--step MM"),
])
def test_help_after_any_command_even_after_bad_values(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 0 and err == "" and words in out


# ---- every argument error: one line, exit 2, naming the argument and what it takes ----------


@pytest.mark.parametrize("argv, words", [
    (["report"], ["FILE is required", "setup file"]),
    (["report", str(STOCK), "--step", "abc"], ["--step", "'abc' is not a number", "DEG"]),
    (["report", str(STOCK), "--from", "nan"], ["--from", "not a finite number"]),
    (["report", str(STOCK), "--stpe", "2"], ["unknown option --stpe", "did you mean --step?", "--to DEG"]),
    (["report", str(STOCK), "extra"], ["extra argument 'extra'", "FILE"]),
    (["walk", str(STOCK), "--step"], ["--step needs a value", "MM"]),
    (["compare"], ["FILE is required"]),
    (["plan", str(STOCK), "--lever", "cg-height"], ["--target ANGLE>=DEG is required"]),
    (["measure"], ["which kind?", "bias, cg-height, mu"]),
    (["measure", "bais", "--front", "1"], ["unknown kind 'bais'", "did you mean bias?"]),
    (["measure", "bias"], ["--front G is required", "[g]"]),
    (["measure", "bias", "--front", "1e999"], ["--front", "not a finite number"]),
    (["measure", "mu", "--angle", "30", "--axle", "middle"], ["--axle 'middle'", "both, front, rear"]),
    (["measure", "cg-height", "--level-front", "1", "--lift", "100-1300"], ["--lift", "LIFT_MM:FRONT_G"]),
    (["measure", "bias", "--front", "1300"], ["--total is needed", "--from FILE"]),
    (["--baseline"], ["--baseline needs a value", "FILE"]),
    ([str(STOCK), str(STOCK)], ["extra argument", "FILE"]),
    (["--asdf"], ["unknown option --asdf"]),
    (["--ascii", "report", str(STOCK)], ["belong to the tuner", "after the command"]),
])
def test_argument_errors_are_one_line_naming_the_argument(capsys, argv, words):
    err = one_line_error(capsys, *argv)
    for w in words:
        assert w in err, (w, err)


def test_the_console_script_exits_2_with_one_line(tmp_path):
    # Through a real process: argparse's own exit path, not only main()'s return value.
    import subprocess

    out = subprocess.run([sys.executable, "-m", "slopetune.tui.cli", "measure", "mu", "--angle", "steep"],
                         capture_output=True, text=True, timeout=60)
    assert out.returncode == 2 and out.stdout == ""
    assert out.stderr.count("\n") == 1 and "--angle 'steep' is not a number" in out.stderr


# ---- measure --from, --write ---------------------------------------------------------------


def tilted_front_reading_g(weight_g, wheelbase_mm, bias_pct, cg_height_mm, axle_height_mm, lift_mm):
    """Front scale reading with the rear raised, from the tilted rig's geometry (ISO 10392 set-up).

    The axle line tilts by θ = asin(H/L); the CG, b along and h − r above that line, lies
    b cos θ + (h − r) sin θ ahead of the rear axle horizontally, the front axle L cos θ ahead.
    """
    t = math.asin(lift_mm / wheelbase_mm)
    b = bias_pct / 100 * wheelbase_mm
    return weight_g * (b * math.cos(t) + (cg_height_mm - axle_height_mm) * math.sin(t)) / (wheelbase_mm * math.cos(t))


def test_measure_from_reads_total_wheelbase_and_axle_height_without_writing(tmp_path, capsys):
    # The stock file: 2380 g, 313 mm, both tyres 112 mm (axle height 56 mm). Readings made from the
    # tilted geometry of a rig with its CG at 95 mm; the file must stay byte for byte the same.
    f = tmp_path / "rig.toml"
    shutil.copy(STOCK, f)
    before = f.read_bytes()
    lift = 100.0
    reading = tilted_front_reading_g(2380, 313, 57.5, 95.0, 56.0, lift)
    code, out, err = run(capsys, "measure", "cg-height", "--from", str(f), "--level-front", str(2380 * 0.575),
                         "--lift", f"{lift:g}:{reading:.4f}")
    assert code == 0 and err == ""
    assert "CG height 95.0 mm" in out and "the total weight, the wheelbase" in out and str(f) in out
    assert f.read_bytes() == before
    code, out, _ = run(capsys, "measure", "bias", "--from", str(f), "--front", "1190")
    # f = W_front / W (Gillespie ch. 2): 1190 / 2380 = 50.0 % exactly
    assert code == 0 and out.startswith("front bias 50.0 % (1190 g of 2380 g")


def test_measure_write_stores_the_printed_value_and_keeps_the_comment_column(tmp_path, capsys):
    f = tmp_path / "rig.toml"
    shutil.copy(STOCK, f)
    line_before = next(l for l in f.read_text().splitlines() if l.startswith("cg_height_mm"))
    reading = tilted_front_reading_g(2380, 313, 57.5, 87.8386, 56.0, 100.0)
    code, out, err = run(capsys, "measure", "cg-height", "--write", str(f), "--level-front", str(2380 * 0.575),
                         "--lift", f"100:{reading:.6f}")
    assert code == 0, err
    printed = re.search(r"CG height ([0-9.]+) mm", out).group(1)
    assert printed == "87.8"
    line_after = next(l for l in f.read_text().splitlines() if l.startswith("cg_height_mm"))
    assert line_after.split("#")[0].split("=")[1].strip() == printed
    assert line_after.index("#") == line_before.index("#")
    assert f"wrote rig.cg_height_mm = {printed} to" in out


def test_measure_mu_write_rounds_as_printed(tmp_path, capsys):
    # tan 40 deg = 0.8391 (four-figure tables): printed and stored as 0.84.
    f = tmp_path / "rig.toml"
    shutil.copy(STOCK, f)
    code, out, _ = run(capsys, "measure", "mu", "--angle", "40", "--write", str(f))
    assert code == 0 and "static mu 0.84 (tan 40 deg)" in out
    assert re.search(r"^mu_static = 0\.84$", f.read_text(), re.M)


# ---- what the installed package carries ----------------------------------------------------


def test_every_package_and_data_file_is_installed():
    # A sub-package or a .tcss/.toml the build does not list works from the source tree and breaks
    # after `pip install .`: compare the folders and files on disk with pyproject's lists.
    conf = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    dirs = {"slopetune.engine": ROOT / "engine", "slopetune.tui": ROOT / "tui"}
    on_disk = set()
    for name, folder in dirs.items():
        for init in folder.rglob("__init__.py"):
            rel = init.parent.relative_to(folder)
            on_disk.add(".".join([name, *rel.parts]))
    assert on_disk <= set(conf["packages"])
    data = conf["package-data"]
    for folder in (ROOT / "tui", ROOT / "engine"):
        for path in [*folder.rglob("*.tcss"), *folder.rglob("*.toml")]:
            owner = path.parent  # the nearest package holding the file, as setuptools sees it
            while not (owner / "__init__.py").exists():
                owner = owner.parent
            package = ".".join(["slopetune", folder.name, *owner.relative_to(folder).parts])
            sub = path.relative_to(owner)
            patterns = data.get(package, [])
            assert any(len(Path(p).parts) == len(sub.parts) and sub.match(p) for p in patterns), (
                f"{path.relative_to(ROOT)} is not in package-data of {package}")


# ---- plausibility of measured readings on the command line ----------------------------------
# Hand-worked rig (tests/test_measure.py): W 2000 g, L 300 mm, r 50 mm, rear raised 150 mm (30 deg);
# CG at 100 mm reads 1192.45 g on the front, CG at 30 mm (below the axle) reads 923.02 g.
RIG = ["--total", "2000", "--wheelbase", "300", "--axle-height", "50", "--level-front", "1000"]


def test_cli_takes_the_hand_worked_lift(capsys):
    code, out, err = run(capsys, "measure", "cg-height", *RIG, "--lift", "150:1192.45")
    assert code == 0 and err == "" and "CG height 100.0 mm" in out


@pytest.mark.parametrize("argv, words", [
    (["cg-height", *RIG, "--lift", "150:923.02"], ["--lift 150:923.02", "falls as the rear rises", "30.0 mm"]),
    (["cg-height", *RIG, "--lift", "150:2500"], ["--lift 150:2500", "not below the total weight 2000 g"]),
    (["cg-height", *RIG[:-1], "2100", "--lift", "150:1192.45"], ["--level-front", "2100 g is not below"]),
    (["bias", "--total", "2000", "--front", "2400"], ["--front", "2400 g is not below the total weight 2000 g"]),
    (["bias", "--total", "5e300", "--front", "2400"], ["--total 5e+300", "< 1,000,000 [g]"]),
    (["mu", "--angle", "80"], ["--angle", "at most 78.7 deg", "mu_static at most 5"]),
])
def test_cli_refuses_implausible_readings_naming_them(capsys, argv, words):
    err = one_line_error(capsys, "measure", *argv)
    for w in words:
        assert w in err, (w, err)


def test_cli_warns_of_a_falling_reading_and_still_answers(capsys):
    code, out, err = run(capsys, "measure", "cg-height", *RIG, "--lift", "50:1060", "--lift", "100:1050")
    assert code == 0 and "CG height 77.2 mm" in out  # worked by hand in tests/test_measure.py
    assert err.count("\n") == 1 and "warning: --lift 100:1050" in err and "should grow" in err


def test_cli_refuses_a_slide_angle_whose_mu_the_file_refuses(tmp_path, capsys):
    # Stock file: mu_kinetic 0.8. tan 30 deg = 0.577 (four-figure tables) would put static below kinetic.
    f = tmp_path / "rig.toml"
    shutil.copy(STOCK, f)
    before = f.read_bytes()
    err = one_line_error(capsys, "measure", "mu", "--angle", "30", "--write", str(f))
    assert "--angle 30" in err and "0.58" in err and "kinetic mu 0.8" in err
    assert f.read_bytes() == before
