"""`slopetune headings FILE`: the steepest plane the rig holds from every direction."""

from __future__ import annotations

import argparse
import math
import textwrap

from slopetune.engine import SetupError, load_setup

from ..heading_words import (CAUTION, LIMIT_SHORT, heading_label, heading_text, here_line, light_wheel_line,
                             margins_line, summary_lines)
from ..units import Units
from ._args import number
from ._output import print_json, print_warnings

HELP = """\
Tip, first wheel lift and hold angle of one setup at every heading across a plane face.

Heading: the rig's nose from straight up the fall line, clockwise seen from above; 0 climbs
straight up, 180 descends straight down, +90 has the rig's left side uphill (its right wheels carry
more). Angles in degrees, loads in grams(-force). For each heading:
  tip         the steepest plane it stands on (the CG's gravity line reaches an edge of the wheels)
  wheel lift  the slope where the first wheel leaves the ground (the tip, unless the file sets
              [rig] roll_stiffness_front_pct: then a wheel can lift earlier and the rig rocks onto
              three wheels; sensitive to the setup, not a stability limit)
  hold        the steepest plane it holds its line on, climbing or descending under control, and
              what ends it: tips, axle lifts, slides sideways, crabs (an axle that scrubs under
              wind-up slides downhill and lets go sideways), slips (both axles let go)
Then the wheel loads at the file's slope_deg and heading_deg, and in words the worst heading and
the best line. Steady travel (no throttle punch).
""" + CAUTION


def register(sub) -> None:
    p = sub.add_parser("headings", help="tip, wheel lift and hold angle at every heading", description=HELP,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="setup file (TOML, format 1)")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.add_argument("--step", type=number, default=5.0, metavar="DEG", help="heading step [deg] (5)")
    p.set_defaults(func=run)


def heading_steps(step: float):
    """Headings 0, step, ... below 360; SetupError naming the option when impossible."""
    import numpy as np

    if not math.isfinite(step) or not 0.1 <= step <= 180.0:
        raise SetupError(f"--step {step:g}: must be a number of degrees from 0.1 to 180", "command line")
    return np.arange(0.0, 360.0 - 1e-9, step)


def _num(x, digits=2):
    return None if x is None or not math.isfinite(x) else round(float(x), digits)


def headings_dict(hs) -> dict:
    """The headings report as plain JSON-ready data (documented in the README)."""
    from slopetune.engine.heading_sweep import LIMITS

    fl, fr, rl, rr = (float(v) for v in hs.wheels.as_array())
    return {
        "schema": 1,
        "slope_deg": hs.slope_deg,
        "heading_deg": hs.setup_heading_deg,
        "wheels_g": {"front_left": _num(fl, 1), "front_right": _num(fr, 1), "rear_left": _num(rl, 1),
                     "rear_right": _num(rr, 1)},
        "rows": [{"heading_deg": _num(h, 3), "tip_deg": _num(t), "wheel_lift_deg": _num(w),
                  "hold_deg": _num(hd), "hold_limit": LIMITS[c]}
                 for h, t, w, hd, c in zip(hs.heading_deg, hs.tip_deg, hs.wheel_lift_deg, hs.hold_deg,
                                           hs.hold_limit)],
    }


def top_view(hs, units: Units) -> list[str]:
    """The four wheel loads at the corners of a plan view, nose up the page."""
    loads = [float(v) for v in hs.wheels.as_array()]
    cell = lambda v: "-" if math.isnan(v) else units.force(v)  # noqa: E731
    fl, fr, rl, rr = (cell(v) for v in loads)
    w = max(len(fl), len(rl))
    return [f"  {'front':^{w + 22}}",
            f"  {fl:>{w}} o----------o {fr}",
            f"  {'':>{w}} |  (top)   |",
            f"  {rl:>{w}} o----------o {rr}"]


def headings_text(setup, hs) -> str:
    from slopetune.engine.heading_sweep import LIMITS

    units = Units(ascii_only=True)
    d = units.deg
    out = [setup.name,
           f"Face: {hs.slope_deg:g}{d} steepest slope, heading {heading_text(hs.setup_heading_deg, units)} "
           f"({heading_label(hs.setup_heading_deg)})",
           ""]
    share = (f"front takes {setup.rig.roll_stiffness_front_pct:g} % of the roll moment" if hs.share_given
             else "roll moment split by axle load")
    out.append(f"Wheel loads there ({share}):")
    out += top_view(hs, units)
    out.append(f"  {light_wheel_line(hs, units)}")
    if not bool(hs.wheels.tipped):
        out.append(f"  {margins_line(hs, units)}")
    out.append("")
    out.append(f"{'heading':>8} {'tip':>6} {'lift':>6} {'hold':>6}  hold ends by")
    for h, t, w, hd, c in zip(hs.heading_deg, hs.tip_deg, hs.wheel_lift_deg, hs.hold_deg, hs.hold_limit):
        lift = "-" if not math.isfinite(w) else f"{w:.1f}"
        out.append(f"{h:>8g} {t:>6.1f} {lift:>6} {hd:>6.1f}  {LIMIT_SHORT[LIMITS[c]]}")
    out.append("")
    out.append(here_line(setup, units))
    out += summary_lines(hs, units)
    out.append("")
    out += textwrap.wrap(CAUTION, 96)
    return "\n".join(out)


def run(args) -> int:
    from slopetune.engine.heading_sweep import heading_sweep

    loaded = load_setup(args.file)
    print_warnings(loaded.warnings)
    hs = heading_sweep(loaded.setup, heading_steps(args.step))
    if args.json:
        print_json(headings_dict(hs))
    else:
        print(headings_text(loaded.setup, hs))
    return 0
