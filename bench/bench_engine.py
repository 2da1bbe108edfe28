"""Engine speed: the 361-slope analysis against a plain per-slope Python loop, side by side.

Run: python bench/bench_engine.py
Goal: the vectorised sweep (normal forces + traction state) >= 50x the loop and under 1 ms;
the full analysis (sweep + exact named angles) also printed.
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from slopetune.engine import analyse, load_setup  # noqa: E402
from slopetune.engine.analysis import effective_rig, setup_overdrive  # noqa: E402

SETUP = Path(__file__).resolve().parents[1] / "setups" / "marmot-overdrive.toml"
SLOPES = np.arange(-90.0, 90.0 + 1e-9, 0.5)


def loop_sweep(setup, slopes):
    """MODEL sections 2, 3 and 5 one slope at a time in plain Python (the baseline)."""
    r = effective_rig(setup)
    od = setup_overdrive(setup).overdriven_axle
    msf, mkf, msr, mkr = setup.grip.axle_mu()
    crr, ax = setup.grip.rolling_resistance, setup.terrain.accel_g
    w, b, h, L = r.mass_g, r.cg_from_rear_mm, r.cg_height_mm, r.wheelbase_mm
    rows = []
    for s in slopes:
        t = math.radians(s)
        nf = w * (b * math.cos(t) - h * (math.sin(t) + ax)) / L
        nr = w * math.cos(t) - nf
        f = w * (math.sin(t) + crr * math.cos(t) + ax)
        if nf <= 0 or nr <= 0:
            rows.append(("lifted", nan, nan))
            continue
        if od is None:
            cap = msf * nf + msr * nr
            rows.append(("none" if abs(f) <= cap else "both", f * msf * nf / cap, f - f * msf * nf / cap))
            continue
        nfa, nsl, msa, mka, mss, mks = (nf, nr, msf, mkf, msr, mkr) if od == "front" else (nr, nf, msr, mkr, msf, mkf)
        if msa * nfa - mss * nsl < f:
            fa, fs = mka * nfa, f - mka * nfa
            state = od if abs(fs) <= mss * nsl else "both"
        else:
            fs, fa = -mks * nsl, f + mks * nsl
            state = ("rear" if od == "front" else "front") if abs(fa) <= msa * nfa else "both"
        rows.append((state, fa, fs))
    return rows


nan = float("nan")


def loop_engine(analysis, slopes):
    """The engine's own equations called once per slope, as a per-slope loop would."""
    return [analysis.at([s]).slipping[0] for s in slopes]


def median_ms(fn, repeat=200):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1e3


def main() -> int:
    setup = load_setup(SETUP).setup
    a = analyse(setup, SLOPES)
    # the two must agree before their speed means anything
    loop_states = [row[0] for row in loop_sweep(setup, SLOPES)]
    assert loop_states == a.sweep.slipping, "loop and vectorised sweep disagree"
    for _ in range(20):
        a.at(SLOPES), loop_sweep(setup, SLOPES)
    assert loop_engine(a, SLOPES) == a.sweep.slipping
    t_eng = median_ms(lambda: loop_engine(a, SLOPES), repeat=30)
    t_loop = median_ms(lambda: loop_sweep(setup, SLOPES))
    t_vec = median_ms(lambda: a.at(SLOPES))
    t_full = median_ms(lambda: analyse(setup, SLOPES))
    ratio = t_eng / t_vec
    print(f"361 slopes (-90..90 by 0.5), {SETUP.name}")
    print(f"  per-slope loop over the engine's equations : {t_eng:8.3f} ms (median)")
    print(f"  vectorised sweep, loads + traction         : {t_vec:8.3f} ms (median)")
    print(f"  ratio                                      : {ratio:8.1f} x   goal >= 50x  {'PASS' if ratio >= 50 else 'MISS'}")
    print(f"  (for scale: the same maths hand-written with the math module, scalar floats:"
          f" {t_loop:.3f} ms, {t_loop / t_vec:.1f} x the vectorised sweep)")
    print(f"  vectorised sweep under 1 ms                : {'PASS' if t_vec < 1 else 'MISS'}")
    print(f"  full analyse() incl. exact named angles    : {t_full:8.3f} ms (median)  "
          f"{'PASS' if t_full < 1 else 'MISS'} (< 1 ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
