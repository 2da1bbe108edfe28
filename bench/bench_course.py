"""Benchmark: walk the demo rig over each demo course file at 2,000 positions.

Pose, path ratio, contact statics with tyre slip, events: everything `walk_course` does. Timed
with the setup's own tyres and with a slip stiffness of 20 on both axles (the brush-model solve,
the slower path), and the rigid limit.
Goal: median <= 100 ms per walk on the 2-core development machine (a Pi 4 runs numpy 4-5x slower).
Run: python bench/bench_course.py [RIG [COURSE ...]]
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

import slopetune.engine.course_walk as cw  # noqa: E402
from slopetune.engine import load_setup  # noqa: E402
from slopetune.engine.course_file import load_course  # noqa: E402

POSITIONS = 2000
REPEATS = 20
GOAL_MS = 100.0


def bench(setup, course, stiffness=None) -> float:
    """Median ms of one walk; `stiffness` replaces both axles' slip stiffness when given."""
    real = cw._tyre_keys
    if stiffness is not None:
        cw._tyre_keys = lambda s: (*real(s)[:2], (stiffness, stiffness))
    try:
        x0, x1 = cw.walk_span_mm(setup, course)
        xs = np.linspace(x0, x1, POSITIONS)
        cw.walk_course(setup, rear_x_mm=xs, course=course)  # warm-up
        times = []
        for _ in range(REPEATS):
            t0 = time.perf_counter()
            cw.walk_course(setup, rear_x_mm=xs, course=course)
            times.append(time.perf_counter() - t0)
    finally:
        cw._tyre_keys = real
    return statistics.median(times) * 1000.0


def main(argv) -> int:
    rig = Path(argv[0]) if argv else ROOT / "setups" / "marmot-overdrive.toml"
    courses = [Path(a) for a in argv[1:]] or sorted((ROOT / "setups").glob("course-*.toml"))
    setup = load_setup(rig).setup
    worst = 0.0
    print(f"{rig.name} over each course, {POSITIONS} positions, median of {REPEATS} runs; goal <= {GOAL_MS:g} ms")
    for path in courses:
        course = load_course(path).course
        for label, stiffness in (("the file's tyres", None), ("slip stiffness 20", 20.0),
                                 ("rigid limit", math.inf)):
            ms = bench(setup, course, stiffness)
            worst = max(worst, ms)
            verdict = "PASS" if ms <= GOAL_MS else "MISS"
            print(f"  {path.name:30} {label:18} {ms:7.1f} ms   goal <= {GOAL_MS:g} ms  {verdict}")
    verdict = "PASS" if worst <= GOAL_MS else "MISS"
    print(f"{verdict}: slowest median {worst:.1f} ms (goal <= {GOAL_MS:g} ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
