"""`slopetune compare`: several setups side by side in 80 columns, differences against the first.

Expected numbers are worked by hand from the demo files: the mass centre of rig plus ballast
(Jazar 2008 ch. 2) and the balance angle tan β = (b − L/2)/h (Gillespie 1992 ch. 2).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from slopetune.tui.cli import main

ROOT = Path(__file__).resolve().parent.parent
STOCK = str(ROOT / "setups" / "marmot-stock.toml")
OVERDRIVE = str(ROOT / "setups" / "marmot-overdrive.toml")

# marmot-overdrive.toml by hand: 2380 g at (0.575·313, 88) + 96 g at (313, 40) − 38 g at (120, 45)
OD_MASS = 2380.0 + 96.0 - 38.0
OD_B = (2380.0 * 0.575 * 313.0 + 96.0 * 313.0 - 38.0 * 120.0) / OD_MASS
OD_H = (2380.0 * 88.0 + 96.0 * 40.0 - 38.0 * 45.0) / OD_MASS
OD_BALANCE = math.degrees(math.atan2(OD_B - 156.5, OD_H))
STOCK_BALANCE = math.degrees(math.atan2(0.575 * 313.0 - 156.5, 88.0))
# gear overdrive from stages 13:38 front, 13:40 rear: (40/13)/(38/13) − 1 (Shigley ch. 13 train value)
OD_GEAR_PCT = (40.0 / 38.0 - 1.0) * 100.0


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def row(out: str, label: str) -> str:
    return next(line for line in out.splitlines() if line.startswith(label))


def test_two_setups_side_by_side(capsys):
    code, out, _ = run(capsys, "compare", STOCK, OVERDRIVE)
    assert code == 0
    assert all(len(line) <= 80 for line in out.splitlines())
    assert "1 marmot-stock" in out and "2 marmot-overdrive" in out
    from slopetune.tui.commands.compare import LABEL_W, ROWS

    for _key, label, _get, _fmt in ROWS:  # every label stands clear of the first value
        line = row(out, label)
        assert line[:LABEL_W].rstrip() == label and line[LABEL_W - 1] == " ", line
    assert f"2438 (+{OD_MASS - 2380:.0f})" in row(out, "mass [g]")
    bal = row(out, "balance")
    assert f"{STOCK_BALANCE:.2f}" in bal
    assert f"{OD_BALANCE:.2f} ({OD_BALANCE - STOCK_BALANCE:+.2f})" in bal
    assert f"+{OD_GEAR_PCT:.2f}" in row(out, "gear overdrive [%]")
    axle = row(out, "overdriven axle").split()
    assert axle[-2:] == ["none", "front"]
    # no overdrive: the stock rig has no handover
    assert row(out, "handover, climb").split()[2] == "-"


def test_json_values_and_differences(capsys):
    code, out, _ = run(capsys, "compare", STOCK, OVERDRIVE, "--json")
    assert code == 0
    d = json.loads(out)
    assert d["reference"] == STOCK
    a, b = d["setups"]
    assert a["values"]["balance"] == pytest.approx(STOCK_BALANCE, abs=1e-5)
    assert b["values"]["balance"] == pytest.approx(OD_BALANCE, abs=1e-5)
    assert b["diff_vs_first"]["balance"] == pytest.approx(OD_BALANCE - STOCK_BALANCE, abs=1e-5)
    assert b["diff_vs_first"]["mass_g"] == pytest.approx(OD_MASS - 2380.0)
    assert b["values"]["gear_overdrive_pct"] == pytest.approx(OD_GEAR_PCT, abs=1e-5)
    assert a["diff_vs_first"]["balance"] == 0.0
    assert b["diff_vs_first"]["handover"] is None  # the reference has none


def test_many_setups_continue_in_blocks_within_80_columns(capsys):
    files = [STOCK, OVERDRIVE] * 3
    code, out, _ = run(capsys, "compare", *files)
    assert code == 0
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 80
    headers = [line for line in lines if line.lstrip().startswith("1 marmot-sto")]  # cut to the column
    assert len(headers) == 2  # 6 files: block of 1+3, then 1+2, each against the first
    assert "6 marmot-overdrive" in out and "5 marmot-stock" in out


def test_handover_beyond_90_is_marked(tmp_path, capsys):
    # Rear overdriven, rear-biased, grippy: the rear never lets go first (its margin
    # μ_r N_r − μ_f N_f − W(sin θ + c_rr cos θ) stays > 0: at 90° it is W((μ_f + μ_r) h/L − 1) > 0,
    # at 0° W(μ (0.4) − c_rr) > 0), so handover lies beyond the climbs.
    text = Path(STOCK).read_text().replace("front_bias_pct = 57.5", "front_bias_pct = 30")
    text = text.replace("overdrive_pct = 0 ", "overdrive_pct = -5 ").replace("mu_static = 1.0", "mu_static = 2.0")
    text = text.replace("cg_height_mm = 88 ", "cg_height_mm = 130 ")
    f = tmp_path / "rear-od.toml"
    f.write_text(text)
    code, out, _ = run(capsys, "compare", STOCK, str(f))
    assert code == 0
    assert row(out, "handover, climb").split()[-1] == "none>90"
    code, out, _ = run(capsys, "compare", STOCK, str(f), "--json")
    assert "handover" in json.loads(out)["setups"][1]["handover_beyond_90"]


def test_bad_file_is_one_line_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text("schema = 1\n[rig]\nmass_g = -3\n")
    code, out, err = run(capsys, "compare", STOCK, str(bad))
    assert code == 2 and err.count("\n") == 1 and "bad.toml" in err


def test_long_differences_drop_decimals_rather_than_get_cut():
    from slopetune.tui.commands.compare import _cell

    assert _cell(-56.51, ".2f", 10.0, show_diff=True, width=14) == "-56.51 (-66.5)"
    assert _cell(-56.51, ".2f", 10.0, show_diff=True, width=20) == "-56.51 (-66.51)"
    assert _cell(14.94, ".2f", 14.94, show_diff=True) == "14.94 (=)"
    assert _cell(None, ".2f", 1.0, show_diff=True) == "-"
    assert _cell(math.inf, ".2f", 1.0, show_diff=True) == "none>90"
