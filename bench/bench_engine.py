"""Engine speed: the 361-slope analysis against a plain per-slope Python loop, side by side.

Run: python bench/bench_engine.py
Goals: the vectorised sweep (normal forces + tyre-slip solve) >= 50x the same engine called once per
slope; the full `analyse()` (361-slope sweep + named angles) <= 5 ms on the demo with the tyre-slip
model, printed for the demo file (slip stiffness 40, roll-out diameters under load: scanned and
bisected angles), the default stiffness on tyre diameters (exact angles) and the rigid rule.
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
from slopetune.engine.setup_model import DEFAULT_SLIP_STIFFNESS  # noqa: E402

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
    rigid = setup.rigid_tyres()
    # the scalar loop is the rigid rule: it must agree with the engine's rigid limit
    loop_states = [row[0] for row in loop_sweep(rigid, SLOPES)]
    assert loop_states == analyse(rigid, SLOPES).sweep.slipping, "loop and vectorised sweep disagree"
    for _ in range(20):
        a.at(SLOPES), loop_sweep(rigid, SLOPES)
    assert loop_engine(a, SLOPES) == a.sweep.slipping
    t_eng = median_ms(lambda: loop_engine(a, SLOPES), repeat=10)
    t_loop = median_ms(lambda: loop_sweep(rigid, SLOPES))
    t_vec = median_ms(lambda: a.at(SLOPES))
    ratio = t_eng / t_vec
    print(f"361 slopes (-90..90 by 0.5), {SETUP.name} (tyre slip, c = 40, roll-out under load)")
    print(f"  per-slope loop over the engine's equations : {t_eng:8.3f} ms (median)")
    print(f"  vectorised sweep, loads + tyre-slip solve  : {t_vec:8.3f} ms (median)")
    print(f"  ratio                                      : {ratio:8.1f} x   goal >= 50x  {'PASS' if ratio >= 50 else 'MISS'}")
    print(f"  (for scale: the rigid rule hand-written with the math module, scalar floats:"
          f" {t_loop:.3f} ms, {t_loop / t_vec:.1f} x the vectorised slip sweep)")
    ok = True
    for label, s in (("the demo file (scanned + bisected angles)", setup),
                     ("default c = 10, tyre diameters (exact)",
                      setup.on_tyre_diameters().with_slip_stiffness(DEFAULT_SLIP_STIFFNESS)),
                     ("rigid rule, tyre diameters (exact)", rigid)):
        t_full = median_ms(lambda: analyse(s, SLOPES), repeat=60)
        ok &= t_full <= 5.0
        print(f"  full analyse(), {label:<42}: {t_full:7.3f} ms  goal <= 5 ms  {'PASS' if t_full <= 5 else 'MISS'}")
    return 0 if ok and ratio >= 50 else 1


if __name__ == "__main__":
    sys.exit(main())
