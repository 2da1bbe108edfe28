"""Random key storms against the tuner (CI version of bench/keystroke_storm.py: 20 short storms).

The check is an equality, not a threshold: every form row, the title, the status words, the flag
and the chart must be exactly what `engine.analyse` gives for the setup the app holds.
"""

from __future__ import annotations

import asyncio
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import keystroke_storm as ks  # noqa: E402
from slopetune.engine import analyse, load_setup  # noqa: E402
from slopetune.tui.app import SlopeTuneApp  # noqa: E402

SEED = 313


def test_twenty_storms_keep_the_screen_on_the_analysed_setup(tmp_path):
    results = asyncio.run(ks.run_storms(SEED, 0, 20, 20, tmp_path, lengths=(5, 10), log=lambda *_: None))
    failed = [ks.describe(SEED, r, 0, 20, 20) for r in results if r.problems]
    assert not failed, "\n".join(failed)
    assert len(results) == 20 and all(r.checks >= 1 for r in results)
    assert sum(r.changed for r in results) >= 5  # the storms do edit the setup


def test_the_check_sees_a_screen_that_lags_the_analysis(tmp_path):
    """Control: swap in an analysis of another setup and the check must complain."""
    async def go():
        app = SlopeTuneApp(load_setup(ks.SOURCE))
        async with app.run_test(size=(100, 32)) as pilot:
            await pilot.pause()
            assert ks.screen_problems(app) == []
            other = app.setup.with_value("terrain.slope_deg", 12.0)
            app.analysis = analyse(other, app.analysis.sweep.slope_deg)
            return ks.screen_problems(app)

    problems = asyncio.run(go())
    assert any("analysed another setup" in p for p in problems)
    assert any("slope" in p for p in problems)  # the slope row shows 30, the analysis has 12
