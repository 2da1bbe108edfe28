"""`slopetune measure slip` (ramp test) and `slopetune measure slip-test`: the tyres' slip stiffness c.

The sums are the engine's (`engine.slip_calibration`); the ramp test asks the analysis itself for the
handover at each trial c, so the range it reports is what `report` would show.
"""

from __future__ import annotations

import argparse
import math
import sys

import numpy as np

from slopetune.engine import load_setup
from slopetune.engine.ballast import combine_ballast
from slopetune.engine.slip_calibration import board_rolling_dia_mm, handover_range, slip_test

from ._args import ArgumentRefused, number
from ._output import print_json

RAMP_HELP = """\
Ramp test (a check on the slip stiffness c). Unwind the driveline before each run (roll back a
little), set the board a few degrees steeper each time, and note the angle where the overdriven
tyres start to slip: that onset is the handover. Give it with --handover DEG, or --handover none
if they never slipped before the rig could not climb.

The handover hardly moves with c at either end, so one reading fits a RANGE of c (with the
reading's +-1 deg), or none: an onset below the rigid handover or above the max grade fits no c;
an onset near the rigid handover fits every stiff tyre; "never scrubs" fits every soft one. The
range is printed; --write stores the c whose handover equals the reading, and only when the range
is closed at both ends. The slip test (slopetune measure slip-test) measures c per axle directly.
The overdrive matters: what the ramp really measures is about c (K - 1) / mu, so a one-point error
in the overdrive moves c by about 15 %.
Keep hands clear of the driveline: wind-up loads gears and motors even when nothing moves.
"""

TEST_HELP = """\
Slip test (preferred; one axle at a time). Take the FRONT driveshaft out to measure the rear
(--axle rear), the rear one for the front. Chalk-mark a tyre of the driving axle, creep up a board
at a known angle, and count N turns of the mark over a taped distance X. Two or three angles are
better (--run DEG:TURNS:MM, repeated; they are combined by least squares).

  slip  sigma = 1 - X / (N pi D)       D: that axle's free roll-out diameter at the same load
  force F = W (sin a + c_rr cos a)     the driving axle carries the whole climb
  c = 3 mu_s psi^-1(F / (mu_s N_axle)) / sigma     (brush model, psi^-1(u) = 1 - (1 - u)^(1/3))

Roll-out: both driveshafts out, roll the rig 5-10 turns on the bench, travel / (turns pi).
The rig, mu_s, c_rr and D come from --from FILE (or the --write file); --dia overrides D.
It does not depend on the overdrive or on wind-up. The slip is small (a few %): measure the
roll-out carefully (10 turns, to 1 mm), as 0.1 % in D moves c by several %. The file's roll-out is
taken at the axle's load on the board (its loss per 100 g, model section 4).
Keep hands clear of the wheels on the board.
"""

STIFFNESS_DIGITS = 1  # c to 0.1: a tape read to 5 mm over 3 m moves a 4 % slip by about 4 %


def _handover(text: str):
    if text.strip().lower() in ("none", "never"):
        return None
    value = number(text)
    if not -90.0 < value < 90.0:
        raise argparse.ArgumentTypeError(f"'{text}' is not a slope between -90 and 90 deg")
    return value


def _run_triple(text: str):
    try:
        deg, turns, mm = text.split(":")
        return number(deg), number(turns), number(mm)
    except (ValueError, argparse.ArgumentTypeError):
        raise argparse.ArgumentTypeError(f"'{text}' is not DEG:TURNS:MM, e.g. 10:8:2650") from None


def register_kinds(kinds, common) -> None:
    r = kinds.add_parser("slip", help="ramp test: the range of slip stiffness c that fits a handover",
                         description=RAMP_HELP, formatter_class=argparse.RawDescriptionHelpFormatter)
    r.add_argument("file", metavar="FILE", help="setup file (TOML, format 1)")
    r.add_argument("--handover", type=_handover, required=True, metavar="DEG|none",
                   help="onset angle where the overdriven tyres started to slip [deg], or none")
    r.add_argument("--tolerance", type=number, default=1.0, metavar="DEG", help="the reading's +- [deg] (1)")
    r.add_argument("--json", action="store_true", help="one JSON object on stdout")
    r.add_argument("--write", action="store_true",
                   help="store the c whose handover equals the reading in FILE (closed ranges only)")
    r.set_defaults(func=run_ramp)

    t = kinds.add_parser("slip-test", help="slip stiffness of one axle from turns counted on a board",
                         description=TEST_HELP, formatter_class=argparse.RawDescriptionHelpFormatter)
    t.add_argument("--axle", choices=("rear", "front"), required=True,
                   help="the driving axle (the other one's driveshaft is out)")
    t.add_argument("--run", type=_run_triple, action="append", required=True, metavar="DEG:TURNS:MM",
                   help="board angle [deg], tyre turns counted, distance travelled [mm]; repeat for more angles")
    t.add_argument("--dia", type=number, metavar="MM",
                   help="free roll-out diameter of the driving tyres [mm] (default: the file's)")
    t.add_argument("--json", action="store_true", help="one JSON object on stdout")
    common(t)
    t.set_defaults(func=run_test)


# ---------------------------------------------------------------- ramp test


def _c(x):
    return None if x is None or not math.isfinite(x) else round(float(x), 3)


def run_ramp(args) -> int:
    from ..setup_writer import set_keys

    if not 0 < args.tolerance <= 10:
        raise ArgumentRefused(f"--tolerance {args.tolerance:g}: must be above 0 and at most 10 deg")
    loaded = load_setup(args.file)
    if not hasattr(loaded.setup.grip, "slip_stiffness"):
        raise ArgumentRefused("this version's model has rigid tyres (no slip stiffness): nothing to fit")
    found = handover_range(loaded.setup, args.handover, args.tolerance)
    closed = found.fits and math.isfinite(found.high) and found.exact is not None and found.low > 3.0 * max(
        loaded.setup.grip.axle_mu()[0::2]) * 1.001
    value = round(found.exact, STIFFNESS_DIGITS) if closed else None
    if args.json:
        out = {"slip_stiffness": value, "fits": found.fits,
               "slip_stiffness_range": ({"low": _c(found.low), "high": _c(found.high)} if found.fits else None),
               "handover_deg": args.handover, "tolerance_deg": args.tolerance,
               "rigid_handover_deg": _c(found.rigid_deg), "latest_handover_deg": _c(found.latest_deg),
               "max_grade_deg": _c(found.max_grade_deg), "words": found.words}
        print_json(out)
    else:
        print(found.words + ".")
        if value is not None:
            print(f"  the handover is exactly {args.handover:g} deg at c {value:g}")
        print("  (ramp test; unwind the driveline before each run; the slip test measures c per axle)")
    if args.write:
        if value is None:
            raise ArgumentRefused(f"--write: nothing written: {found.words}")
        per_axle = [k for k in ("front_slip_stiffness", "rear_slip_stiffness")
                    if getattr(loaded.setup.grip, k, None) is not None]
        if per_axle:  # they would override the one c the ramp fits for both axles
            raise ArgumentRefused(f"--write: nothing written: {args.file} sets grip.{per_axle[0]}, which would "
                                  "override it; the ramp fits one c for both axles (remove those keys, or "
                                  "use the slip test per axle)")
        set_keys(args.file, {"grip.slip_stiffness": value})
        if not args.json:
            print(f"wrote grip.slip_stiffness = {value:g} to {args.file}")
    return 0


# ---------------------------------------------------------------- slip test


def run_test(args) -> int:
    from ..setup_writer import set_keys
    from .measure import _Source

    source = _Source(args)
    setup = source.setup()
    if setup is None:
        raise ArgumentRefused("--from FILE is needed: the rig, mu_s and c_rr come from a setup")
    weight, b, h = combine_ballast(setup.rig)
    fs, _fk, rs, _rk = setup.grip.axle_mu()
    mu = rs if args.axle == "rear" else fs
    for deg, turns, mm in args.run:
        if not 0 < deg < 90 or not 0 < turns <= 1e4 or not 0 < mm <= 1e7:
            raise ArgumentRefused(f"--run {deg:g}:{turns:g}:{mm:g}: give an angle above 0 and below 90 deg, "
                                  "turns above 0, a distance above 0 mm")
    if args.dia is not None:
        if not 1.0 <= args.dia <= 1e4:
            raise ArgumentRefused(f"--dia {args.dia:g}: must be at least 1 and at most 10000 [mm]")
        dia = np.full(len(args.run), args.dia)
    else:
        dia = board_rolling_dia_mm(setup, args.axle, [r[0] for r in args.run])
    runs = slip_test(weight, setup.rig.wheelbase_mm, b, h, setup.grip.rolling_resistance, mu, dia,
                     [r[0] for r in args.run], [r[1] for r in args.run], [r[2] for r in args.run], axle=args.axle)
    if len(runs.problems) == len(args.run):
        i, why = runs.problems[0]
        deg, turns, mm = args.run[i]
        raise ArgumentRefused(f"--run {deg:g}:{turns:g}:{mm:g}: {why}")
    for i, why in runs.problems:
        deg, turns, mm = args.run[i]
        print(f"slopetune measure slip-test: warning: --run {deg:g}:{turns:g}:{mm:g}: {why}; left out",
              file=sys.stderr)
    value = round(runs.stiffness_fit, STIFFNESS_DIGITS)
    key = f"grip.{args.axle}_slip_stiffness"
    other = "front" if args.axle == "rear" else "rear"
    n_used = len(args.run) - len(runs.problems)
    if args.json:
        rows = [{"slope_deg": d, "turns": t, "distance_mm": x, "rolling_dia_mm": round(float(dia[i]), 3),
                 "slip_pct": round(100 * float(runs.sigma[i]), 3),
                 "grip_used": round(float(runs.grip_used[i]), 4), "slip_stiffness": _c(runs.stiffness[i])}
                for i, (d, t, x) in enumerate(args.run)]
        print_json({"axle": args.axle, "slip_stiffness": value, "runs": rows})
    else:
        print(f"{args.axle} slip stiffness c {value:g} (slip test, {n_used} run{'s' if n_used > 1 else ''}, "
              f"{other} driveshaft out)")
        for i, (d, t, x) in enumerate(args.run):
            if math.isfinite(runs.stiffness[i]):
                print(f"  {d:g} deg: {t:g} turns over {x:g} mm of {t * math.pi * dia[i]:.0f} mm roll-out: "
                      f"slip {100 * runs.sigma[i]:.1f} %, grip used {100 * runs.grip_used[i]:.0f} %, "
                      f"c {runs.stiffness[i]:.3g}")
        how = "as given" if args.dia is not None else "from the file, at the axle's load on the board"
        dias = ", ".join(f"{d:.1f}" for d in dict.fromkeys(np.round(dia, 1).tolist()))
        print(f"  (the rig, mu_s {mu:g} and c_rr from {source.path}; roll-out diameter {dias} mm {how})")
    if args.write:
        set_keys(args.write, {key: value})
        if not args.json:
            print(f"wrote {key} = {value:g} to {args.write}")
    return 0
