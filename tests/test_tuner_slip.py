"""The tuner with tyre slip (MODEL section 5): stepping the overdrive moves what the builder sees.

Pilot tests at 80x24. The expected handovers come from `engine.analyse` evaluated on the setup the
tuner holds; the point here is the screen following the model, which tests/test_slope_slip.py checks
against independent solvers.
"""

from __future__ import annotations

import asyncio
from pathlib import Path

from slopetune.engine import analyse, load_setup
from slopetune.tui.app import SlopeTuneApp

ROOT = Path(__file__).resolve().parent.parent
STOCK = ROOT / "setups" / "marmot-stock.toml"


def _rig(tmp_path: Path) -> Path:
    text = STOCK.read_text(encoding="utf-8").replace("overdrive_pct = 0 ", "overdrive_pct = 8 ", 1)
    text = text.replace("[grip]\n", "[grip]\nslip_stiffness = 20\n", 1)
    path = tmp_path / "slip.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_stepping_the_overdrive_moves_the_handover_on_screen(tmp_path):
    async def go():
        app = SlopeTuneApp(load_setup(_rig(tmp_path)))
        app.word_updates.every_s = app.chart_updates.every_s = 0.0
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            first = [line for line in app.status.view.lines if line.startswith("Handover ")]
            grip = [line for line in app.status.view.lines if line.startswith("Grip ")]
            assert app.form.focus_key("driveline.overdrive_pct")
            await pilot.press("shift+right")  # +5 %: 8 -> 13
            await pilot.pause()
            assert app.setup.driveline.overdrive_pct == 13
            after = [line for line in app.status.view.lines if line.startswith("Handover ")]
            return first, grip, after, app.setup

    first, grip, after, setup = asyncio.run(go())
    want = analyse(setup).angles_deg["handover"]
    assert first and after and first[0] != after[0]
    assert f"{want:.1f}" in after[0] and "13.0% OD" in after[0]
    assert grip and "front" in grip[0] and "rear" in grip[0] and "%" in grip[0]  # words, not only colour


def test_the_sensitivity_line_names_softer_stiffer_and_rigid(tmp_path):
    async def go():
        app = SlopeTuneApp(load_setup(_rig(tmp_path)))
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            return list(app.status.view.lines)

    lines = asyncio.run(go())
    line = next(x for x in lines if x.startswith("Handover if "))
    assert "c=10:" in line and "c=40:" in line and "rigid:" in line
