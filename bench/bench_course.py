"""Benchmark: walk a demo course at 2,000 positions (pose, contact statics, events).

Goal: median <= 50 ms on the 2-core development machine (a Pi 4 runs pure numpy 4-5x slower).
Run: /work/venv/bin/python bench/bench_course.py [SETUP ...]
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from slopetune.engine import load_setup  # noqa: E402
from slopetune.engine.course_walk import course_positions, walk_course  # noqa: E402

POSITIONS = 2000
REPEATS = 30
GOAL_MS = 50.0


def bench(path: Path) -> float:
    setup = load_setup(path).setup
    span = course_positions(setup, 1.0)
    xs = np.linspace(span[0], span[-1], POSITIONS)
    walk_course(setup, rear_x_mm=xs)  # warm-up
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        walk_course(setup, rear_x_mm=xs)
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1000.0


def main(argv) -> int:
    paths = [Path(a) for a in argv] or sorted((ROOT / "setups").glob("course-*.toml"))
    worst = 0.0
    for path in paths:
        ms = bench(path)
        worst = max(worst, ms)
        print(f"{path.name}: {POSITIONS} positions, median {ms:.1f} ms over {REPEATS} runs")
    verdict = "PASS" if worst <= GOAL_MS else "MISS"
    print(f"{verdict}: slowest median {worst:.1f} ms (goal <= {GOAL_MS:g} ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
