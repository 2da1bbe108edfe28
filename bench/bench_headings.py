"""Heading sweep speed: tip, first wheel lift and hold angle at 72 headings on the demo setup.

Run: python bench/bench_headings.py
Goal: the whole sweep (72 headings, every 5 deg) <= 50 ms, for the setup's own slip stiffness and
for a soft, a stiff and a rigid tyre.
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from slopetune.engine import load_setup  # noqa: E402
from slopetune.engine import heading_sweep as hsw  # noqa: E402

SETUP = Path(__file__).resolve().parents[1] / "setups" / "marmot-overdrive.toml"
GOAL_MS = 50.0
RUNS = 15


def timed(fn) -> tuple[float, float]:
    """(median, worst) of `RUNS` calls, in ms, after one warm-up call."""
    fn()
    times = []
    for _ in range(RUNS):
        t0 = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t0) * 1e3)
    return statistics.median(times), max(times)


def main() -> int:
    setup = load_setup(SETUP).setup
    print(f"heading sweep, {SETUP.name}, 72 headings (tip, wheel lift, hold), {RUNS} runs; goal <= {GOAL_MS:g} ms")
    cases = [("the file's own", None), ("soft, c = 5", 5.0), ("c = 20", 20.0), ("rigid", math.inf)]
    worst = 0.0
    original = hsw.PlaneModel.__init__
    for label, c in cases:
        def init(self, s, c=c):
            original(self, s)
            if c is not None:
                self.stiffness = (c, c)

        hsw.PlaneModel.__init__ = init
        try:
            median, slowest = timed(lambda: hsw.heading_sweep(setup))
        finally:
            hsw.PlaneModel.__init__ = original
        worst = max(worst, median)
        verdict = "ok" if median <= GOAL_MS else "OVER"
        print(f"  {label:<16} median {median:6.1f} ms  slowest {slowest:6.1f} ms   goal {GOAL_MS:g} ms  {verdict}")
    return 0 if worst <= GOAL_MS else 1


if __name__ == "__main__":
    sys.exit(main())
