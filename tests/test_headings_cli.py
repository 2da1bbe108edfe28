"""`slopetune headings`: the JSON schema of the README, the words, bad input in one line."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from slopetune.tui.cli import main

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "setups" / "marmot-overdrive.toml"


def test_json_schema_as_documented(capsys):
    assert main(["headings", str(DEMO), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert set(data) == {"schema", "slope_deg", "heading_deg", "wheels_g", "rows"}
    assert data["schema"] == 1 and data["slope_deg"] == 30 and data["heading_deg"] == 0
    assert set(data["wheels_g"]) == {"front_left", "front_right", "rear_left", "rear_right"}
    rows = data["rows"]
    assert [r["heading_deg"] for r in rows] == [5.0 * i for i in range(72)]
    for r in rows:
        assert set(r) == {"heading_deg", "tip_deg", "wheel_lift_deg", "hold_deg", "hold_limit"}
        assert r["hold_limit"] in ("none", "tip", "lift", "slide", "crab", "slip")
        assert r["hold_deg"] <= r["tip_deg"]
    # the wheel loads sum to W cos β: W = 2380 + 96 − 38 = 2438 g (the demo's ballast), β = 30°
    assert sum(data["wheels_g"].values()) == pytest.approx(2438 * math.cos(math.radians(30)), abs=0.3)


def test_heading_of_the_file_moves_the_wheel_loads(tmp_path, capsys):
    """At +90 (left side uphill) the right wheels carry more (MODEL section 8 convention)."""
    text = DEMO.read_text().replace("heading_deg = 0 ", "heading_deg = 90 ")
    f = tmp_path / "side.toml"
    f.write_text(text)
    assert main(["headings", str(f), "--json", "--step", "90"]) == 0
    w = json.loads(capsys.readouterr().out)["wheels_g"]
    assert w["front_right"] > w["front_left"] and w["rear_right"] > w["rear_left"]


def test_text_names_worst_heading_best_line_and_cautions(capsys):
    assert main(["headings", str(DEMO), "--step", "15"]) == 0
    out = capsys.readouterr().out
    assert "Worst heading: +90 deg (across, left side uphill)" in out
    assert "Best line up the face: 0 deg (straight up)" in out
    assert "tyre centres" in out and "not rigid" in out and "flat plane" in out
    assert "Light wheels: both front" in out


@pytest.mark.parametrize("step", ["0", "-5", "nan", "400"])
def test_bad_step_is_one_line_and_exit_2(step, capsys):
    assert main(["headings", str(DEMO), "--step", step]) == 2
    err = capsys.readouterr().err.strip()
    assert "--step" in err and "\n" not in err


def test_bad_heading_in_the_file_names_the_line(tmp_path, capsys):
    f = tmp_path / "bad.toml"
    f.write_text(DEMO.read_text().replace("heading_deg = 0 ", "heading_deg = 270 "))
    assert main(["headings", str(f)]) == 2
    err = capsys.readouterr().err
    assert "terrain.heading_deg = 270" in err and "bad.toml:" in err


def test_heading_and_roll_share_save_and_read_back(tmp_path):
    """The writer adds the new keys to a file that lacks them and reads them back (no data lost)."""
    from slopetune.engine import load_setup
    from slopetune.tui.setup_writer import save_setup

    f = tmp_path / "old.toml"
    f.write_text("\n".join(line for line in DEMO.read_text().splitlines()
                           if not line.startswith("heading_deg") and "slopetune headings" not in line))
    loaded = load_setup(f)
    assert loaded.setup.terrain.heading_deg == 0.0 and loaded.setup.rig.roll_stiffness_front_pct is None
    changed = loaded.setup.with_value("terrain.heading_deg", -35.0).with_value("rig.roll_stiffness_front_pct", 60.0)
    save_setup(loaded, changed, f)
    again = load_setup(f).setup
    assert again.terrain.heading_deg == -35.0 and again.rig.roll_stiffness_front_pct == 60.0
    assert "brass front knuckles" in f.read_text()  # the rest of the file is kept
