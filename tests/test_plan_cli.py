"""`slopetune plan`: the answer in words and JSON, --write into a copy, exit codes, bad syntax.

Reached targets are checked the way a user would: write to a copy with --write, then run
`slopetune report --json` on the written file. Expected balances come from the closed form
tan β = (b − L/2)/h with the mass centre of rig plus ballast (Gillespie 1992 ch. 2; Jazar 2008 ch. 2).
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import pytest

from slopetune.engine import load_setup
from slopetune.tui.cli import main
from slopetune.tui.commands.plan import PlanSyntaxError, parse_lever, parse_target

ROOT = Path(__file__).resolve().parent.parent
STOCK = ROOT / "setups" / "marmot-stock.toml"
OVERDRIVE = ROOT / "setups" / "marmot-overdrive.toml"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def report_angles(capsys, path) -> dict:
    code, out, _ = run(capsys, "report", str(path), "--json")
    assert code == 0
    return json.loads(out)["angles_deg"]


def copy(tmp_path, src) -> Path:
    dst = tmp_path / src.name
    shutil.copy(src, dst)
    return dst


def stock_balance_with(m, x, z):
    """Balance of the stock Marmot (2380 g, L 313, 57.5 % front, h 88) plus m grams at (x, z)."""
    W, L, b, h = 2380.0, 313.0, 0.575 * 313.0, 88.0
    bc = (W * b + m * x) / (W + m)  # Jazar 2008 ch. 2, mass centre
    hc = (W * h + m * z) / (W + m)
    return math.degrees(math.atan2(bc - L / 2, hc))  # Gillespie 1992 ch. 2


def test_stock_balance_target_written_and_confirmed_by_report(tmp_path, capsys):
    f = copy(tmp_path, STOCK)
    code, out, err = run(capsys, "plan", str(f), "--target", "balance>=18", "--lever", "ballast:x=300,z=40,max=400",
                         "--write", "--name", "brass knuckle weights")
    assert code == 0, err
    assert "Add 93.4 g at x 300 mm, z 40 mm" in out  # closed form m = 93.36 g, rounded up to 0.1 g
    assert "Wrote" in out
    item = load_setup(f).setup.rig.ballast[-1]
    assert (item.name, item.x_mm, item.z_mm) == ("brass knuckle weights", 300.0, 40.0)
    ang = report_angles(capsys, f)
    assert abs(ang["balance"] - 18.0) <= 0.01 and ang["balance"] >= 18.0
    assert ang["balance"] == pytest.approx(stock_balance_with(item.mass_g, 300.0, 40.0), abs=1e-3)
    text = f.read_text()
    assert "# Weigh the rig ready to run: battery in, body on." in text  # comments kept
    assert "# all-up weight [g]" in text


def test_overdrive_handover_target_written_and_confirmed_by_report(tmp_path, capsys):
    f = copy(tmp_path, OVERDRIVE)
    # the rigid rule on the tyre diameters: the handover reacts to ballast in the demo's range
    rigid = f.read_text().replace("slip_stiffness = 40", 'slip_stiffness = "rigid"')
    f.write_text("\n".join(line for line in rigid.splitlines() if not line.startswith("rolling_dia")))
    code, out, err = run(capsys, "plan", str(f), "--target", "handover>=9", "--lever", "ballast:x=300,z=40",
                         "--write")
    assert code == 0, err
    ang = report_angles(capsys, f)
    assert 9.0 <= ang["handover"] <= 9.01
    setup = load_setup(f).setup
    assert len(setup.rig.ballast) == 3 and setup.rig.ballast[-1].name == "planned ballast"
    assert "# Gear stages from the transmission output" in f.read_text()


def test_overdrive_balance_target_by_moving_the_brass(tmp_path, capsys):
    f = copy(tmp_path, OVERDRIVE)
    code, out, err = run(capsys, "plan", str(f), "--target", "balance:max=15", "--lever", "move:brass", "--write")
    assert code == 0, err
    assert "Move ballast item 1 (brass front knuckles (pair)) from x 313" in out
    ang = report_angles(capsys, f)
    assert 14.99 <= ang["balance"] <= 15.0


def test_json_answer(capsys):
    code, out, _ = run(capsys, "plan", str(STOCK), "--target", "balance>=18", "--lever", "ballast:x=300,z=40",
                       "--json")
    assert code == 0
    d = json.loads(out)
    assert d["reached"] and not d["already_met"] and d["written"] is None
    assert d["value"] == pytest.approx(93.4) and d["added_mass_g"] == pytest.approx(93.4)
    assert d["angle_after_deg"] == pytest.approx(stock_balance_with(93.4, 300.0, 40.0), abs=1e-6)
    assert d["lever"] == {"kind": "ballast", "unit": "g", "min": 0.0, "max": 500.0, "x_mm": 300.0, "z_mm": 40.0,
                          "name": "planned ballast"}
    assert set(d["moved_deg"]) >= {"balance", "front_lift", "max_grade"}


def test_unreachable_says_so_with_best_value_and_writes_nothing(tmp_path, capsys):
    f = copy(tmp_path, STOCK)
    before = f.read_text()
    code, out, err = run(capsys, "plan", str(f), "--target", "balance>=40", "--lever", "ballast:x=313,z=40",
                         "--write")
    assert code == 1
    assert "Cannot reach balance >= 40 deg" in out
    best = stock_balance_with(500.0, 313.0, 40.0)  # monotone in m: the best is the top limit
    assert f"Best within the limits: add 500 g at x 313 mm, z 40 mm: balance {best:.2f} deg" in out.replace("\n   ", "")
    assert "not changed" in out
    assert f.read_text() == before


def test_unreachable_json_exit_1(capsys):
    code, out, _ = run(capsys, "plan", str(STOCK), "--target", "handover>=12", "--lever", "ballast:x=300,z=40",
                       "--json")
    assert code == 1
    d = json.loads(out)
    assert not d["reached"] and d["angle_after_deg"] is None


def test_no_overdrive_handover_explains_itself(capsys):
    code, out, _ = run(capsys, "plan", str(STOCK), "--target", "handover>=12", "--lever", "ballast:x=300,z=40")
    assert code == 1 and "no overdriven axle" in out and "--lever overdrive" in out


def test_already_met(capsys):
    code, out, _ = run(capsys, "plan", str(STOCK), "--target", "balance<=20", "--lever", "cg-height")
    assert code == 0 and "Already met" in out


@pytest.mark.parametrize(
    "argv, words",
    [
        (["--target", "handover>12", "--lever", "ballast:x=1,z=2"], "--target"),
        (["--target", "handover", "--lever", "ballast:x=1,z=2"], "quoted"),
        (["--target", "wheelie>=3", "--lever", "ballast:x=1,z=2"], "unknown angle"),
        (["--target", "balance>=95", "--lever", "ballast:x=1,z=2"], "outside -90 to 90"),
        (["--target", "balance>=12", "--lever", "ballast:x=300"], "needs z"),
        (["--target", "balance>=12", "--lever", "ballast:x=300,z=abc"], "must be a number"),
        (["--target", "balance>=12", "--lever", "ballast:x=300,z=40,colour=2"], "unknown key"),
        (["--target", "balance>=12", "--lever", "ballast:x=300,z=40,max=-5"], "above max"),
        (["--target", "balance>=12", "--lever", "move:1"], "no ballast items"),
        (["--target", "balance>=12", "--lever", "spoiler"], "unknown lever"),
        (["--target", "balance>=12", "--lever", "cg-height", "--name", "x"], "--name"),
        (["--target", "balance>=12", "--lever", "mu:min=0"], "must be > 0"),
    ],
)
def test_bad_syntax_is_one_line_exit_2(capsys, argv, words):
    code, out, err = run(capsys, "plan", str(STOCK), *argv)
    assert code == 2
    assert words in err
    assert err.count("\n") == 1 and err.startswith("slopetune plan: ")


def test_missing_file_exit_2(tmp_path, capsys):
    code, _, err = run(capsys, "plan", str(tmp_path / "none.toml"), "--target", "balance>=12", "--lever", "cg-height")
    assert code == 2 and "no such file" in err and err.count("\n") == 1


def test_target_spellings_agree():
    assert parse_target("handover>=12") == parse_target("handover:min=12") == parse_target(" Handover >= 12 deg")
    assert parse_target("no-load-balance<=20").angle == "handover_weight_only"
    assert parse_target("max-grade=<40").op == "<="
    with pytest.raises(PlanSyntaxError):
        parse_target("balance=12")


def test_move_item_by_number_or_name():
    s = load_setup(OVERDRIVE).setup
    assert parse_lever("move:2", s).index == 1
    assert parse_lever("move:aluminium", s).index == 1
    assert parse_lever("move:Brass Front Knuckles (pair)", s).index == 0
    with pytest.raises(PlanSyntaxError, match="1 to 2"):
        parse_lever("move:3", s)
    with pytest.raises(PlanSyntaxError, match="no ballast item"):
        parse_lever("move:tungsten", s)


def test_help_documents_syntax_and_units(capsys):
    assert main(["plan", "--help"]) == 0
    out = capsys.readouterr().out
    for words in ("ballast:x=MM,z=MM", "move:ITEM", "cg-height", "overdrive", "mu", "[g]", "[mm]", "[%]",
                  "handover_weight_only", "ANGLE:min=DEG"):
        assert words in out
