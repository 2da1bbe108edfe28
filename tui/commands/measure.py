"""`slopetune measure bias|cg-height|mu`: scale readings and tilt angles into setup values."""

from __future__ import annotations

import argparse
import math

from slopetune.engine import SetupError, load_setup
from slopetune.engine.setup_model import FIELDS, rule_for
from slopetune.engine.measure import cg_height_from_lift_mm, front_bias_pct, mu_from_slide_angle

HELP = """\
Turn bench measurements into setup values; --write FILE stores the result in a setup
file (comments and your own keys are kept; the file is replaced atomically).

  bias       front axle on a scale, rig level: front bias = front reading / total  [%]
  cg-height  ISO 10392 axle lift: raise the rear axle by H mm (one or more lifts),
             read the front scale each time: h = r + L (Wf1 - Wf0) / (W tan(asin(H/L)))
  mu         tilt board, wheels blocked, raise until the rig slides: mu_s = tan(angle)

Units: grams, millimetres, degrees. Keep hands clear of the driveline while lifting.
"""


def _finite(name: str, value: float) -> float:
    if not math.isfinite(value):
        raise SetupError(f"{name} {value}: must be a finite number", "command line")
    return value


def _positive(name: str, value: float, rule: str = "rig.mass_g") -> float:
    """A reading > 0 and inside the range the setup file allows for that kind of value, so an
    absurd reading (1e300 g, 5e-324 mm) is refused instead of printed as `inf %`."""
    if not _finite(name, value) > 0:
        raise SetupError(f"{name} {value:g}: must be > 0", "command line")
    r = FIELDS[rule]
    if value < 1e-6 or (r.hi is not None and value >= r.hi):
        raise SetupError(f"{name} {value:g}: outside any sane reading; must be above 1e-06 and below "
                         f"{r.hi:g} [{r.unit}]", "command line")
    return value


def _result(key: str, value: float, label: str) -> float:
    """The measured value, refused when the setup file could not hold it."""
    problem = rule_for(key).problem(value)
    if problem:
        shown = f"{value:.6g}" if math.isfinite(value) else "no finite value"
        raise SetupError(f"{label}: the readings give {key} = {shown}, which {problem}; check the readings",
                         "command line")
    return value


def _lift_pair(text: str):
    try:
        h, g = text.split(":")
        return float(h), float(g)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r}: give LIFT_MM:FRONT_G, e.g. 100:1206") from None


def register(sub) -> None:
    p = sub.add_parser("measure", help="bench measurements into setup values", description=HELP,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    kinds = p.add_subparsers(dest="kind", metavar="KIND", required=True)

    b = kinds.add_parser("bias", help="front bias from a front-axle scale reading")
    b.add_argument("--front", type=float, required=True, metavar="G", help="front-axle reading, rig level [g]")
    b.add_argument("--total", type=float, metavar="G", help="all-up weight [g] (default: the file's rig.mass_g)")

    c = kinds.add_parser("cg-height", help="CG height by raising the rear axle (ISO 10392)")
    c.add_argument("--level-front", type=float, required=True, metavar="G", help="front reading, rig level [g]")
    c.add_argument("--lift", type=_lift_pair, action="append", required=True, metavar="MM:G",
                   help="rear raised by MM, front reading G; repeat for several lifts (least squares)")
    c.add_argument("--total", type=float, metavar="G", help="all-up weight [g] (default: the file's rig.mass_g)")
    c.add_argument("--wheelbase", type=float, metavar="MM", help="[mm] (default: the file's)")
    c.add_argument("--axle-height", type=float, metavar="MM",
                   help="axle centre above the ground = loaded tyre radius [mm] (default: front tyre / 2)")

    m = kinds.add_parser("mu", help="static friction from a tilt-board slide angle")
    m.add_argument("--angle", type=float, required=True, metavar="DEG", help="board angle at the first slide [deg]")
    m.add_argument("--axle", choices=("both", "front", "rear"), default="both",
                   help="which mu to write: the common one (both) or a per-axle override")

    for q in (b, c, m):
        q.add_argument("--write", metavar="FILE", help="store the result in this setup file")
        q.set_defaults(func=run)


def _from_file(args, value, key: str, label: str):
    if value is not None:
        return value
    if not args.write:
        raise SetupError(f"{label}: needed (or give --write FILE to take it from the setup)", "command line")
    return load_setup(args.write).setup.value(key)


def run(args) -> int:
    from ..setup_writer import set_keys

    if args.kind == "bias":
        total = _positive("--total", _from_file(args, args.total, "rig.mass_g", "--total"))
        front = _positive("--front", args.front)
        if front >= total:
            raise SetupError(f"--front {front:g}: must be below the total weight {total:g} g", "command line")
        value = _result("rig.front_bias_pct", float(front_bias_pct(front, total)), "--front")
        key, text = "rig.front_bias_pct", f"front bias {value:.2f} % ({front:g} g of {total:g} g on the front axle)"
    elif args.kind == "cg-height":
        total = _positive("--total", _from_file(args, args.total, "rig.mass_g", "--total"))
        wb = _positive("--wheelbase", _from_file(args, args.wheelbase, "rig.wheelbase_mm", "--wheelbase"),
                       "rig.wheelbase_mm")
        if args.axle_height is None:
            axle = _from_file(args, None, "rig.tire_dia_front_mm", "--axle-height") / 2.0
        else:
            axle = _positive("--axle-height", args.axle_height, "rig.tire_dia_front_mm")
        level = _positive("--level-front", args.level_front)
        lifts = [(_positive("--lift height", h, "rig.wheelbase_mm"), _positive("--lift reading", g))
                 for h, g in args.lift]
        try:
            value = cg_height_from_lift_mm(total, wb, axle, level, [h for h, _ in lifts], [g for _, g in lifts])
        except ValueError as exc:
            raise SetupError(f"--lift: {exc}", "command line") from None
        if not (math.isfinite(value) and value > 0):
            shown = f"{value:.1f} mm" if math.isfinite(value) else "no finite value"
            raise SetupError(f"--lift: readings give a CG height of {shown}; check the readings", "command line")
        value = _result("rig.cg_height_mm", value, "--lift")
        key = "rig.cg_height_mm"
        text = f"CG height {value:.1f} mm (ISO 10392 axle lift, {len(lifts)} lift{'s' if len(lifts) > 1 else ''})"
    else:
        angle = _finite("--angle", args.angle)
        if not 0 < angle < 80:
            raise SetupError(f"--angle {angle:g}: must be above 0 and below 80 degrees", "command line")
        value = _result("grip.mu_static", float(mu_from_slide_angle(angle)), "--angle")
        key = {"both": "grip.mu_static", "front": "grip.front_mu_static", "rear": "grip.rear_mu_static"}[args.axle]
        text = f"static mu {value:.3f} (tan {angle:g} deg)"
    print(text)
    if args.write:
        set_keys(args.write, {key: round(value, 4)})  # a SaveError is one line from main()
        print(f"wrote {key} = {round(value, 4)} to {args.write}")
    return 0
