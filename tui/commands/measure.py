"""`slopetune measure KIND`: scale readings and tilt angles into setup values.

Every reading is checked for plausibility first (`engine.measure`): a reading that cannot be right is
refused in one line naming it (exit 2), one that is possible but suspicious is a one-line warning on
stderr and the result is still given.
"""

from __future__ import annotations

import argparse
import math
import sys
from typing import Optional

from slopetune.engine import SetupError, check_value, load_setup
from slopetune.engine.measure import (
    DIGITS, FACINGS, MU_KEYS, ReadingCheck, bias_checks, cg_height_from_lift_mm, front_bias_pct, lift_checks,
    mu_from_slide_angle, mu_one_axle_from_slide_angle, slide_angle_checks,
)
from slopetune.engine.setup_model import rule_for

from ._args import ArgumentRefused, number

KINDS = ("bias", "cg-height", "mu", "slip", "slip-test")

HELP = """\
Turn bench measurements into setup values. --from FILE takes what a reading needs and you did not
give (total weight, wheelbase, axle height; front bias and CG height with the ballast for one
axle's mu) from a setup file; --write FILE stores the result in a setup file (rounded as printed;
comments and your own keys are kept; the file is replaced atomically).

  bias       front axle on a scale, rig level: front bias = front reading / total  [%]
  cg-height  ISO 10392 axle lift: raise the rear axle by H mm (one or more lifts),
             read the front scale each time: h = r + L (Wf1 - Wf0) / (W tan(asin(H/L)))
             The wheels must roll freely (driveline out) and the suspension be locked.
  mu         tilt board, wheels blocked, raise until the rig slides: mu_s = tan(angle);
             one axle alone with the other on a low-friction sheet (see measure mu --help)
  slip-test  slip stiffness c of one axle: one driveshaft out, turns counted on a board
  slip       ramp test: the range of c that fits the handover seen on a board (a check)

Readings that cannot be right are refused, naming the reading; suspicious ones are warned about.
Units: grams, millimetres, degrees. Keep hands clear of the driveline while lifting.
"""

CG_HELP = """\
CG height by the ISO 10392 axle-lift method. Put the front axle on a scale, rig level, and note
the reading; raise the rear axle by H mm (a block under both rear tyres) and note the front
reading again; more lifts give a least-squares fit.

Before lifting: take a driveshaft out (or otherwise let the wheels roll freely) and lock the
suspension (zip ties or solid links). A wound-up driveline pushes sideways on the scale and a
squatting suspension moves the CG: both bias the height. The axle height is the loaded tyre
radius; an error in it passes one for one into the CG height.

  h = r + L (Wf1 - Wf0) / (W tan(asin(H/L)))

The front reading must grow as the rear rises (the CG sits above the axles): readings that
fall are warned about, and a CG below the axle height is refused.
"""

MU_HELP = """\
Static friction by slide angle. Block the wheels so they cannot turn, stand the rig on a board and
raise one end slowly until the rig starts to slide; read the board's angle (a phone inclinometer).

  --axle both (default)  all four wheels on the board: mu_s = tan(angle), stored as
                         grip.mu_static. A mix of the two axles, weighted by their loads.
  --axle front|rear      that axle alone, stored as grip.front_mu_static / grip.rear_mu_static.
                         Lay a thin low-friction sheet (a smooth plastic sheet on a glass pane)
                         on the board under the OTHER axle's wheels: the blocked axle then holds
                         the whole pull down the board (the sheet's own friction is taken as
                         zero; what it does carry makes the result read high). Give --facing:
      --facing up        the rig's nose points up the board, as on a climb
      --facing down      its nose points down the board
                         No default: the load on the blocked axle, so its mu, depends on it.
                         With --axle both it is optional: it only sharpens the tip-over check.

  one axle:  mu = W sin(a) / N_axle    (W cancels; t = +a facing up, -a facing down)
             N_front = W (b cos t - h sin t) / L,  N_rear = W cos t - N_front
             (axle loads on a grade, Gillespie ch. 2). L, b and h are the rig as it stood on
             the board: --wheelbase, --front-bias (b = bias x L), --cg-height, or the setup
             file's (--from or --write) rig with its ballast items.

With the blocked axle downhill the board must go steeper for the same mu, and a degree of error in
the reading then moves mu less; but the uphill axle lifts at some angle and the rig tips over
instead of sliding. A slide angle is refused when its mu is above the file's limit of 5, or at or
past that tip.

Both axles blocked, the rig tips over before it slides once the uphill axle's load reaches zero
(Gillespie ch. 2): nose up it goes over backwards past tan(a) = b/h, nose down over its nose past
tan(a) = (L - b)/h. When the rig is known (a setup file, or all three of --wheelbase, --front-bias
and --cg-height) a slide angle past that is refused; without --facing, past the steeper of the
two (and one past the other is warned about). A board measures mu only up to that: face a
front-heavy rig nose up for grippy tyres.
"""

# What the blocked axle's mu is in closed form (engine.measure.mu_one_axle_from_slide_angle), printed
# with the result: d is b for the front, L - b for the rear; the sign of h is + for the downhill axle.
ONE_AXLE_FORMULA = {
    ("front", "up"): "L tan a / (b - h tan a)", ("front", "down"): "L tan a / (b + h tan a)",
    ("rear", "up"): "L tan a / (L - b + h tan a)", ("rear", "down"): "L tan a / (L - b - h tan a)",
}
RIG_OPTIONS = ("wheelbase", "front_bias", "cg_height")


def _lift_pair(text: str):
    try:
        h, g = text.split(":")
        return number(h), number(g)
    except (ValueError, argparse.ArgumentTypeError):
        raise argparse.ArgumentTypeError(f"'{text}' is not LIFT_MM:FRONT_G, e.g. 100:1206") from None


def _common(q) -> None:
    q.add_argument("--from", dest="source", metavar="FILE",
                   help="take readings not given here from this setup file (default: the --write file)")
    q.add_argument("--write", metavar="FILE", help="store the result in this setup file")
    q.set_defaults(func=run)


def register(sub) -> None:
    p = sub.add_parser("measure", help="bench measurements into setup values", description=HELP,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    kinds = p.add_subparsers(dest="kind", metavar="KIND", required=True, title="kinds")

    b = kinds.add_parser("bias", help="front bias from a front-axle scale reading")
    b.add_argument("--front", type=number, required=True, metavar="G", help="front-axle reading, rig level [g]")
    b.add_argument("--total", type=number, metavar="G", help="all-up weight [g] (default: the file's rig.mass_g)")

    c = kinds.add_parser("cg-height", help="CG height by raising the rear axle (ISO 10392)", description=CG_HELP,
                         formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("--level-front", type=number, required=True, metavar="G", help="front reading, rig level [g]")
    c.add_argument("--lift", type=_lift_pair, action="append", required=True, metavar="MM:G",
                   help="rear raised by MM, front reading G; repeat for several lifts (least squares)")
    c.add_argument("--total", type=number, metavar="G", help="all-up weight [g] (default: the file's rig.mass_g)")
    c.add_argument("--wheelbase", type=number, metavar="MM", help="[mm] (default: the file's)")
    c.add_argument("--axle-height", type=number, metavar="MM",
                   help="axle centre above the ground = loaded tyre radius [mm] (default: the file's mean tyre radius)")

    m = kinds.add_parser("mu", help="static friction from a tilt-board slide angle", description=MU_HELP,
                         formatter_class=argparse.RawDescriptionHelpFormatter)
    m.add_argument("--angle", type=number, required=True, metavar="DEG", help="board angle at the first slide [deg]")
    m.add_argument("--axle", choices=tuple(MU_KEYS), default="both",
                   help="both axles on the board (default; tan of the angle), or one axle alone with the "
                        "other on a low-friction sheet (its per-axle override)")
    m.add_argument("--facing", choices=FACINGS,
                   help="the rig's nose up the board (up) or down it (down): needed with --axle front|rear; "
                        "with --axle both optional, for the tip-over check")
    m.add_argument("--wheelbase", type=number, metavar="MM",
                   help="the rig on the board [mm] (default: the file's); with --axle both for the tip-over check")
    m.add_argument("--front-bias", type=number, metavar="PCT",
                   help="the rig on the board [%%] (default: the file's, ballast included); with --axle both "
                        "for the tip-over check")
    m.add_argument("--cg-height", type=number, metavar="MM",
                   help="the rig on the board [mm] (default: the file's, ballast included); with --axle both "
                        "for the tip-over check")

    for q in (b, c, m):
        _common(q)

    from .measure_slip import register_kinds  # the slip stiffness: ramp test and slip test

    register_kinds(kinds, _common)


class _Source:
    """The setup file that supplies missing readings (--from, else --write), read once when needed."""

    def __init__(self, args) -> None:
        self.path: Optional[str] = args.source or args.write
        self._loaded = None
        self.used: list[str] = []
        self.note = ""  # said after the file's name on the "from FILE" line
        self.purpose = ""  # said before the readings on that line, when they are not the result's own
        self.warnings: list[str] = []  # one line each on stderr, once the result stands

    def setup(self):
        if self.path is None:
            return None
        if self._loaded is None:
            self._loaded = load_setup(self.path)  # SetupError: one line from main, exit 2
        return self._loaded.setup

    def value(self, given, option: str, key: str, words: str):
        """The option's value, else the file's `key`; a missing one names both ways to give it."""
        if given is not None:
            return given
        setup = self.setup()
        if setup is None:
            raise ArgumentRefused(f"{option} is needed: give it, or --from FILE to take {words} from a setup")
        self.used.append(words)
        if key == "axle":
            return (setup.rig.tire_dia_front_mm + setup.rig.tire_dia_rear_mm) / 4.0
        if key.startswith("effective."):  # the rig as it stands now: measured rig plus its ballast
            from slopetune.engine.ballast import combine_ballast

            _mass, x, z = combine_ballast(setup.rig)
            return 100.0 * x / setup.rig.wheelbase_mm if key == "effective.front_bias_pct" else z
        return setup.value(key)

    def ballast_note(self) -> str:
        """Said when the rig taken from the file includes ballast items."""
        setup = self.setup()
        n = len(setup.rig.ballast) if setup is not None else 0
        return f", its {n} ballast item{'s' if n > 1 else ''} included" if n else ""


# A reading below this is a typo or an underflow (5e-324), not a measurement [g or mm].
TINY = 1e-6


def _checked(value: float, option: str, key: str) -> float:
    """A reading inside the setup file's own range for that kind of value (0 < a weight < 1e6 g), so an
    absurd one (1e300 g, 5e-324 mm) is refused by name instead of giving `inf %` or 300 digits."""
    rule = rule_for(key)
    problem = rule.problem(value)
    if problem is None and value < TINY:
        problem = f"must be at least {TINY:g}"
    if problem:
        raise ArgumentRefused(f"{option} {value:g}: {problem}{' [' + rule.unit + ']' if rule.unit else ''}")
    return value


def _lift_readings(args) -> tuple[list[float], list[float]]:
    for h, g in args.lift:
        _checked(h, f"--lift {h:g}:{g:g}: lift", "rig.wheelbase_mm")
        _checked(g, f"--lift {h:g}:{g:g}: reading", "rig.mass_g")
    return [h for h, _ in args.lift], [g for _, g in args.lift]


def _names(args, check: ReadingCheck) -> str:
    if check.reading == "lift" and check.index is not None:
        h, g = args.lift[check.index]
        return f"--lift {h:g}:{g:g}"
    return {"front": "--front", "total": "--total", "level": "--level-front", "lift": "--lift",
            "axle": "--axle-height", "wheelbase": "--wheelbase", "angle": "--angle",
            "rig": "--wheelbase, --front-bias, --cg-height"}[check.reading]


def _judge(args, checks: list[ReadingCheck], later: Optional[list[str]] = None) -> None:
    """Refuse on the first refusal; print each warning as one line on stderr (or keep it in `later`,
    to be said once the value stands)."""
    for check in checks:
        if check.refuse:
            raise ArgumentRefused(f"{_names(args, check)}: {check.why}")
    for check in checks:
        if later is not None:
            later.append(f"{_names(args, check)}: {check.why}")
        else:
            print(f"slopetune measure {args.kind}: warning: {_names(args, check)}: {check.why}", file=sys.stderr)


def _fixed(key: str, value: float) -> str:
    return f"{value:.{DIGITS[key]}f}"


def mu_problem(setup, key: str, value: float) -> Optional[str]:
    """Why `setup` refuses a measured static mu at `key` (one of MU_KEYS), in a builder's words, or None."""
    problem = check_value(setup, key, value)
    if problem:
        _fs, fk, _rs, rk = setup.grip.axle_mu()
        side, kinetic = {"grip.mu_static": ("", setup.grip.mu_kinetic), "grip.front_mu_static": ("front ", fk),
                         "grip.rear_mu_static": ("rear ", rk)}[key]
        if value < kinetic:
            problem = (f"below the {side}kinetic mu {kinetic:g} there (static grip is never below kinetic: "
                       "check the angle, or measure kinetic mu again)")
    return problem or None


def _rig(args, source: _Source) -> tuple[float, float, float]:
    """L, b and h of the rig as it stood on the board [mm]: the options, else the file's effective rig."""
    wb = _checked(source.value(args.wheelbase, "--wheelbase", "rig.wheelbase_mm", "the wheelbase"),
                  "--wheelbase", "rig.wheelbase_mm")
    bias = _checked(source.value(args.front_bias, "--front-bias", "effective.front_bias_pct", "the front bias"),
                    "--front-bias", "rig.front_bias_pct")
    height = _checked(source.value(args.cg_height, "--cg-height", "effective.cg_height_mm", "the CG height"),
                      "--cg-height", "rig.cg_height_mm")
    if args.front_bias is None or args.cg_height is None:
        source.note = source.ballast_note()
    return wb, bias / 100.0 * wb, height


def _mu(args, source: _Source) -> tuple[str, float, str]:
    """The static mu of `measure mu`: tan of the angle for both axles, the one-axle statics for one."""
    key = MU_KEYS[args.axle]
    if args.axle == "both":
        rig = None
        if source.path is not None or all(getattr(args, name) is not None for name in RIG_OPTIONS):
            rig = _rig(args, source)
            source.purpose = "for the tip-over check: "
        else:
            unused = [f"--{name.replace('_', '-')}" for name in ("facing",) + RIG_OPTIONS
                      if getattr(args, name) is not None]
            if unused:  # said once the value stands, so a refusal stays one line
                source.warnings.append(f"{', '.join(unused)} not used with --axle both (tan of the angle; the "
                                       "tip-over check needs --wheelbase, --front-bias and --cg-height, or --from FILE)")
        wb, b, height = rig if rig is not None else (None, None, None)
        _judge(args, slide_angle_checks(args.angle, facing=args.facing, wheelbase_mm=wb, cg_from_rear_mm=b,
                                        cg_height_mm=height), later=source.warnings)
        value = round(float(mu_from_slide_angle(args.angle)), DIGITS["grip.mu_static"])
        return key, value, f"static mu {_fixed('grip.mu_static', value)} (tan {args.angle:g} deg)"
    if args.facing is None:
        raise ArgumentRefused(f"--facing up|down is needed with --axle {args.axle}: the rig's nose up the board "
                              "or down it (the blocked axle's load depends on it)")
    wb, b, height = _rig(args, source)
    _judge(args, slide_angle_checks(args.angle, axle=args.axle, facing=args.facing, wheelbase_mm=wb,
                                    cg_from_rear_mm=b, cg_height_mm=height))
    mu = mu_one_axle_from_slide_angle(args.angle, wb, b, height, args.axle, args.facing)
    if not math.isfinite(mu):  # the checks above refuse these; a hair's breadth at a tip angle may remain
        raise ArgumentRefused(f"--angle {args.angle:g}: this rig cannot slide on the {args.axle} axle alone there")
    value = round(mu, DIGITS["grip.mu_static"])
    other = "rear" if args.axle == "front" else "front"
    text = (f"{args.axle} static mu {_fixed('grip.mu_static', value)} (W sin a / N_{args.axle}: {args.axle} axle "
            f"alone, {other} on the sheet, rig facing {args.facing} the board)\n"
            f"  mu = {ONE_AXLE_FORMULA[args.axle, args.facing]} with a {args.angle:g} deg, L {wb:g} mm, "
            f"b {b:.1f} mm, h {height:.1f} mm")
    return key, value, text


def run(args) -> int:
    from ..setup_writer import set_keys

    source = _Source(args)
    if args.kind == "bias":
        total = _checked(source.value(args.total, "--total", "rig.mass_g", "the total weight"), "--total", "rig.mass_g")
        front = _checked(args.front, "--front", "rig.mass_g")
        _judge(args, bias_checks(front, total))
        key = "rig.front_bias_pct"
        value = round(float(front_bias_pct(front, total)), DIGITS[key])
        text = f"front bias {_fixed(key, value)} % ({front:g} g of {total:g} g on the front axle)"
    elif args.kind == "cg-height":
        total = _checked(source.value(args.total, "--total", "rig.mass_g", "the total weight"), "--total", "rig.mass_g")
        wb = _checked(source.value(args.wheelbase, "--wheelbase", "rig.wheelbase_mm", "the wheelbase"),
                      "--wheelbase", "rig.wheelbase_mm")
        axle = _checked(source.value(args.axle_height, "--axle-height", "axle", "the axle height (mean tyre radius)"),
                        "--axle-height", "rig.wheelbase_mm")
        level = _checked(args.level_front, "--level-front", "rig.mass_g")
        lifts, readings = _lift_readings(args)
        _judge(args, lift_checks(total, wb, axle, level, lifts, readings))
        key = "rig.cg_height_mm"
        value = round(cg_height_from_lift_mm(total, wb, axle, level, lifts, readings), DIGITS[key])
        _checked(value, "--lift: the readings give a CG height of", key)
        n = len(lifts)
        text = f"CG height {_fixed(key, value)} mm (ISO 10392 axle lift, {n} lift{'s' if n > 1 else ''})"
    else:
        key, value, text = _mu(args, source)
        setup = source.setup()
        problem = setup is not None and mu_problem(setup, key, value)
        if problem:
            raise ArgumentRefused(f"--angle {args.angle:g}: gives {key.split('.')[-1]} {value:g}, "
                                  f"which {source.path} refuses: {problem}")
    for warning in source.warnings:
        print(f"slopetune measure {args.kind}: warning: {warning}", file=sys.stderr)
    print(text)
    if source.used:
        print(f"  ({source.purpose}{', '.join(source.used)} from {source.path}{source.note})")
        setup = source.setup()
        if args.kind in ("bias", "cg-height") and setup.rig.ballast and args.total is None:
            n = len(setup.rig.ballast)
            print(f"slopetune measure {args.kind}: warning: {source.path} adds {n} ballast item"
                  f"{'s' if n > 1 else ''} on top of rig.mass_g: weigh the rig without them", file=sys.stderr)
    if args.write:
        try:
            set_keys(args.write, {key: value})  # a SaveError is one line from main()
        except SetupError as exc:
            raise ArgumentRefused(f"{key} = {value:g} not written: {exc.reason}") from None
        print(f"wrote {key} = {value:g} to {args.write}")
    return 0
