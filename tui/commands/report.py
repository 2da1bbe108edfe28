"""`slopetune report FILE`: the effective rig, named angles, verdict and a load table."""

from __future__ import annotations

import math
import sys

import numpy as np

from slopetune.engine import SetupError, analyse, load_setup

from ..status_words import slip_lines, status_view
from ._args import number
from ..units import Units
from ._output import print_json, print_warnings

HELP = """\
Analyse one setup over a range of slopes.

Units: weights and forces in grams(-force), lengths in mm, angles in degrees.
Slope > 0 is nose up (climbing), < 0 nose down. Forces along the ground are positive
up-slope; a negative reserve means that axle is short of grip by that much.
States: none (both axles grip; an overdrive mismatch is carried as tyre slip),
front / rear (that axle lets go, the other grips), both (the rig cannot hold the grade),
lifted (an axle is off the ground). Grip used is |F|/(mu_s N) per axle (1: at its limit).
Named angles are for a steady climb; with a throttle a second set is shown beside them.
A static model: driveline wind-up loads gears, shafts and motors. Check on the bench,
hands clear of the driveline; follow your club's and venue's rules.
"""

MAX_ROWS = 100_000
ANGLE_LABELS = (("balance (front = rear load)", "balance"), ("front lift (climbing)", "front_lift"),
                ("rear lift (descending)", "rear_lift"), ("sidehill roll", "sidehill_roll"),
                ("sidehill slide (driveline unwound)", "sidehill_slide"), ("handover (steady climb)", "handover"),
                ("handover, weight-only rule of thumb", "handover_weight_only"))
THROTTLE_SHORT = (("handover", "handover"), ("max grade", "max_grade"), ("balance", "balance"),
                  ("front lift", "front_lift"), ("rear lift", "rear_lift"))
WORDS = {"none": "both grip", "front": "front lets go", "rear": "rear lets go", "both": "both slip",
         "lifted": "lifted", "binds": "binds"}


def register(sub) -> None:
    p = sub.add_parser("report", help="loads, traction and named angles of one setup", description=HELP,
                       formatter_class=__import__("argparse").RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="setup file (TOML, format 1)")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.add_argument("--from", dest="start", type=number, default=0.0, metavar="DEG", help="first slope [deg] (0)")
    p.add_argument("--to", dest="stop", type=number, default=90.0, metavar="DEG", help="last slope, inclusive [deg] (90)")
    p.add_argument("--step", type=number, default=1.0, metavar="DEG", help="slope step [deg] (1)")
    p.add_argument("--accel", type=number, default=None, metavar="G",
                   help="throttle acceleration along the slope [g] (the file's terrain.accel_g)")
    p.add_argument("--load", choices=("climb", "none"), default=None, help="retired; ignored with a warning")
    p.set_defaults(func=run)


def slope_range(start: float, stop: float, step: float) -> np.ndarray:
    """Slopes from `start` to `stop` inclusive; SetupError naming the option when impossible."""
    for name, v in (("--from", start), ("--to", stop), ("--step", step)):
        if not math.isfinite(v):
            raise SetupError(f"{name} {v}: must be a finite number of degrees", "command line")
    if not -90.0 <= start <= 90.0 or not -90.0 <= stop <= 90.0:
        raise SetupError(f"--from {start:g} --to {stop:g}: slopes must lie within -90 to 90 degrees", "command line")
    if step <= 0:
        raise SetupError(f"--step {step:g}: must be > 0 degrees", "command line")
    if stop < start:
        raise SetupError(f"--from {start:g} --to {stop:g}: --to must not be below --from", "command line")
    span = (stop - start) / step  # inf for a subnormal step: compared as a float, never made an int
    if not span < MAX_ROWS:
        raise SetupError(f"--step {step:g}: gives more than {MAX_ROWS} rows; use a larger step", "command line")
    n = int(math.floor(span + 1e-9)) + 1
    slopes = start + step * np.arange(n)
    if stop - slopes[-1] > 1e-9 * max(1.0, abs(stop)):
        slopes = np.append(slopes, stop)
    return np.clip(slopes, -90.0, 90.0)


def _num(x, digits=4):
    return None if x is None or not math.isfinite(x) else round(float(x), digits)


def report_dict(a) -> dict:
    """The report as plain JSON-ready data (documented in the README)."""
    r, od, s = a.rig, a.overdrive, a.sweep
    t = s.traction
    cf, cr = a.setup.grip.axle_stiffness()
    rows = []
    lifted, slipping = s.lifted, s.slipping  # built once: each is a list over the sweep
    for i, slope in enumerate(s.slope_deg):
        rows.append({
            "slope_deg": _num(slope), "front_normal_g": _num(s.front_normal_g[i], 3),
            "rear_normal_g": _num(s.rear_normal_g[i], 3), "lifted": lifted[i],
            "required_g": _num(s.required_g[i], 3), "front_force_g": _num(t.front_force_g[i], 3),
            "rear_force_g": _num(t.rear_force_g[i], 3), "windup_g": _num(t.windup_g[i], 3),
            "reserve_g": _num(t.reserve_g[i], 3), "slipping": slipping[i],
            "front_grip_used": _num(t.front_grip_used[i]), "rear_grip_used": _num(t.rear_grip_used[i]),
            "front_slip_pct": _num(t.front_slip_pct[i]), "rear_slip_pct": _num(t.rear_slip_pct[i]),
            "speed_ratio": _num(s.speed_ratio[i], 6),
        })
    return {
        "schema": 1,
        "name": a.setup.name,
        "accel_g": a.accel_g,
        "slip_stiffness": {"front": _stiffness(cf), "rear": _stiffness(cr)},
        "rig": {"mass_g": _num(r.mass_g, 3), "wheelbase_mm": _num(r.wheelbase_mm, 3),
                "front_bias_pct": _num(r.front_bias_pct), "cg_height_mm": _num(r.cg_height_mm, 3),
                "cg_from_rear_mm": _num(r.cg_from_rear_mm, 3), "track_mm": _num(r.track_mm, 3)},
        "overdrive": {"gear_pct": _num(od.gear_pct), "effective_pct": _num(od.effective_pct),
                      "pct_of_front": _num(od.pct_of_front), "pct_difference": _num(od.pct_difference),
                      "overdriven_axle": od.overdriven_axle, "turn_match_steer_deg": _num(od.turn_match_steer_deg)},
        "angles_deg": {k: _num(v) for k, v in a.angles_deg.items()},
        "max_grade_limit": a.max_grade_limit,
        "angles_with_throttle_deg": (None if a.angles_with_throttle_deg is None
                                     else {k: _num(v) for k, v in a.angles_with_throttle_deg.items()}),
        "scrub_band_deg": a.scrub_bands(),
        "stiffness_sensitivity": {label: {"slip_stiffness": _stiffness(c), "handover": _num(ang["handover"]),
                                          "max_grade": _num(ang["max_grade"])}
                                  for label, (c, ang) in a.stiffness_sensitivity().items()},
        "sweep": rows,
    }


def _stiffness(c):
    """A slip stiffness for JSON: a number, "rigid" for an infinitely stiff tyre, [f, r] per axle."""
    if isinstance(c, tuple):
        return [_stiffness(x) for x in c]
    return "rigid" if math.isinf(c) else _num(c)


def table_cell(x, width=8, digits=0) -> str:
    """A right-aligned number for the text tables; "-" where there is none."""
    if x is None or not math.isfinite(x):
        return f"{'-':>{width}}"
    return f"{round(float(x), digits) + 0.0:>{width}.{digits}f}"  # + 0.0: no "-0"


def report_text(a) -> str:
    r, od, ang = a.rig, a.overdrive, a.angles_deg
    out = [f"{a.setup.name}"]
    out.append(f"Rig (with ballast): {r.mass_g:.0f} g, wheelbase {r.wheelbase_mm:g} mm, "
               f"front bias {r.front_bias_pct:.1f} %,")
    out.append(f"  CG {r.cg_from_rear_mm:.1f} mm ahead of the rear axle, {r.cg_height_mm:.1f} mm high, "
               f"track {r.track_mm:g} mm")
    steer = "-" if od.turn_match_steer_deg is None else f"{od.turn_match_steer_deg:.1f} deg"
    out.append(f"Overdrive: gears {od.gear_pct:+.3f} %, effective {od.effective_pct:+.3f} % "
               f"({od.pct_of_front:+.3f} % of the front, {od.pct_difference:.3f} % difference);")
    out.append(f"  overdriven axle: {od.overdriven_axle or 'none'}; matches a turn at {steer} of steer")
    out.append("")
    out.append("Angles [deg]:")

    def line(label, key):
        v = ang[key]
        return f"  {label:<37}{'-' if v is None else f'{v:7.2f}'}"

    for label, key in ANGLE_LABELS:
        out.append(line(label, key))
    out.append(line(f"max grade (ends by {a.max_grade_limit})", "max_grade"))
    if a.angles_with_throttle_deg is not None:
        thr = a.angles_with_throttle_deg
        out.append(f"With the throttle ({a.accel_g:+g} g): " + ", ".join(
            f"{short} {'-' if thr[key] is None else f'{thr[key]:.2f}'}" for short, key in THROTTLE_SHORT))
    out.extend(slip_lines(a))
    out.append("")
    out.append(f"Verdict at the setup's slope ({a.setup.terrain.slope_deg:g} deg):")
    view = status_view(a, Units(ascii_only=True))
    for text in (view.flag,) + view.lines:
        out.append(f"  {text}")
    out.append("")
    how = "steady climb" if not a.accel_g else f"climb with {a.accel_g:+g} g throttle"
    out.append(f"Load table ({how}; forces in g, + up-slope; grip used in % of mu_s N):")
    out.append(f"{'slope':>6} {'N front':>7} {'N rear':>7} {'needed':>7} {'F front':>7} {'F rear':>7}"
               f" {'wind-up':>7} {'grip f':>6} {'grip r':>6}  state")
    s, t = a.sweep, a.sweep.traction
    slipping = s.slipping
    for i, slope in enumerate(s.slope_deg):
        out.append(f"{slope:>6.1f} {table_cell(s.front_normal_g[i], 7)} {table_cell(s.rear_normal_g[i], 7)}"
                   f" {table_cell(s.required_g[i], 7)} {table_cell(t.front_force_g[i], 7)}"
                   f" {table_cell(t.rear_force_g[i], 7)} {table_cell(t.windup_g[i], 7)}"
                   f" {table_cell(100 * t.front_grip_used[i], 6)} {table_cell(100 * t.rear_grip_used[i], 6)}"
                   f"  {WORDS[slipping[i]]}")
    out.append("")
    out.append("Static model: driveline wind-up loads gears, shafts and motors. Check on the bench, hands clear;")
    out.append("unwind the driveline (roll back a little) between ramp runs. Follow your venue's rules.")
    return "\n".join(out)


def run(args) -> int:
    loaded = load_setup(args.file)
    print_warnings(loaded.warnings)
    if args.accel is not None and not (math.isfinite(args.accel) and -2.0 <= args.accel <= 2.0):
        raise SetupError(f"--accel {args.accel:g}: must be a number from -2 to 2 [g]", "command line")
    slopes = slope_range(args.start, args.stop, args.step)
    if args.load is not None:
        print("slopetune: warning: --load is retired and ignored: results are for a climb under load"
              " (the weight-only handover is shown as a rule of thumb)", file=sys.stderr)
    a = analyse(loaded.setup, slopes, accel_g=args.accel)
    if args.json:
        print_json(report_dict(a))
    else:
        print(report_text(a))
    return 0
