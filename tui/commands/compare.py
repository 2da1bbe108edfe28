"""`slopetune compare FILE...`: named angles, overdrive and max grade of several setups side by side."""

from __future__ import annotations

import argparse
import math
from pathlib import Path
from typing import Callable, Optional

from slopetune.engine import analyse, load_setup

from ._output import print_json, print_warnings

HELP = """\
Several setups side by side in one table of 80 columns: the rig with its
ballast, the overdrive and the named angles. Each column after the first shows
its difference against the first file in brackets. More than four files go on
in further blocks, each again against the first.

Units: grams, millimetres, overdrive in %, angles in degrees (nose up > 0).
Angles are for each file's own terrain (load mode and throttle).
"overdrive+tyres" is what the ground sees: gears and tyre sizes together.
"none>90": the overdriven axle never slips first below 90 deg.
"-": the angle does not exist (no handover without overdrive).
"""

WIDTH = 80
LABEL_W = 20
MAX_PER_BLOCK = 4


def _finite(x) -> Optional[float]:
    return None if x is None or not math.isfinite(x) else float(x)


def _handover(a, key) -> Optional[float]:
    v = a.angles_deg.get(key)
    if v is None and a.overdrive.overdriven_axle is not None:
        return math.inf  # an overdriven axle that never lets go first below 90°
    return v


def _stiffness(pair) -> str:
    words = ["rigid" if math.isinf(c) else f"{c:g}" for c in pair]
    return words[0] if words[0] == words[1] else "/".join(words)


# (key, label, getter, format, unit); a None format marks a text row
ROWS: list[tuple[str, str, Callable, Optional[str]]] = [
    ("mass_g", "mass [g]", lambda a: a.rig.mass_g, ".0f"),
    ("front_bias_pct", "front bias [%]", lambda a: a.rig.front_bias_pct, ".1f"),
    ("cg_height_mm", "CG height [mm]", lambda a: a.rig.cg_height_mm, ".1f"),
    ("gear_overdrive_pct", "gear overdrive [%]", lambda a: a.overdrive.gear_pct, "+.2f"),
    ("effective_overdrive_pct", "overdrive+tyres [%]", lambda a: a.overdrive.effective_pct, "+.2f"),
    ("overdriven_axle", "overdriven axle", lambda a: a.overdrive.overdriven_axle or "none", None),
    ("balance", "balance", lambda a: a.angles_deg["balance"], ".2f"),
    ("handover", "handover, climb", lambda a: _handover(a, "handover"), ".2f"),
    ("handover_weight_only", "handover by weight", lambda a: _handover(a, "handover_weight_only"), ".2f"),
    ("max_grade", "max grade", lambda a: a.angles_deg["max_grade"], ".2f"),
    ("max_grade_limit", "max grade ends by", lambda a: a.max_grade_limit, None),
    ("front_lift", "front lift", lambda a: a.angles_deg["front_lift"], ".2f"),
    ("rear_lift", "rear lift", lambda a: a.angles_deg["rear_lift"], ".2f"),
    ("sidehill_roll", "sidehill roll", lambda a: a.angles_deg["sidehill_roll"], ".2f"),
    ("sidehill_slide", "side slide, unwound", lambda a: a.angles_deg["sidehill_slide"], ".2f"),
    ("slope_deg", "tuned slope", lambda a: a.setup.terrain.slope_deg, ".1f"),
    ("slip_stiffness", "slip stiffness", lambda a: _stiffness(a.setup.grip.axle_stiffness()), None),
    ("throttle", "throttle [g]", lambda a: f"{a.accel_g:+g}" if a.accel_g else "steady", None),
]
assert all(len(label) < LABEL_W for _key, label, _get, _fmt in ROWS), "a label would run into its values"


def _cell(value, fmt: Optional[str], ref=None, show_diff: bool = False, width: int = 99) -> str:
    """One table cell: the value, and its difference against the reference when asked.

    The difference drops decimals before it would be cut off at `width`.
    """
    if fmt is None:
        return str(value)
    if value is None:
        return "-"
    if math.isinf(value):
        return "none>90"
    text = format(value + 0.0, fmt)
    if not (show_diff and ref is not None and math.isfinite(ref)):
        return text
    d = float(value) - float(ref)
    digits = int(fmt.lstrip("+")[1:-1] or 0)
    if abs(d) < 0.5 * 10.0 ** -digits:
        return text + " (=)"
    for places in range(digits, -1, -1):
        cell = f"{text} ({round(d, places) + 0.0:+.{places}f})"
        if len(cell) <= width:
            return cell
    return cell


def compare_table(analyses: list, labels: list[str]) -> list[str]:
    """Lines of the side-by-side table, at most `WIDTH` columns, in blocks of `MAX_PER_BLOCK`."""
    first = analyses[0]
    out: list[str] = []
    rest = list(range(1, len(analyses)))
    blocks = [[0] + rest[i:i + MAX_PER_BLOCK - 1] for i in range(0, max(len(rest), 1), MAX_PER_BLOCK - 1)]
    for n, block in enumerate(blocks):
        col = max(15, (WIDTH - LABEL_W) // len(block))
        col = min(col, 29)
        if n:
            out.append("")
        out.append(f"{'':<{LABEL_W}}" + "".join(f"{labels[i][:col - 1]:<{col}}" for i in block).rstrip())
        for key, label, get, fmt in ROWS:
            ref = get(first)
            cells = [_cell(get(analyses[i]), fmt, ref, show_diff=(i != 0), width=col - 1) for i in block]
            out.append((f"{label:<{LABEL_W}}" + "".join(f"{c[:col - 1]:<{col}}" for c in cells)).rstrip())
    return out


def _json_value(v):
    if isinstance(v, float):
        return None if not math.isfinite(v) else round(v, 6)
    return v


def compare_dict(files: list[str], analyses: list) -> dict:
    """JSON-ready data: every row's value per file and its difference against the first."""
    first = analyses[0]
    out = []
    for f, a in zip(files, analyses):
        values, diffs = {}, {}
        for key, _, get, fmt in ROWS:
            v, r = get(a), get(first)
            values[key] = _json_value(v)
            if fmt is not None and v is not None and r is not None and math.isfinite(v) and math.isfinite(r):
                diffs[key] = round(float(v) - float(r), 6)
            elif fmt is not None:
                diffs[key] = None
        beyond = [k for k in ("handover", "handover_weight_only") if _handover(a, k) == math.inf]
        out.append({"file": f, "name": a.setup.name, "values": values, "diff_vs_first": diffs,
                    "handover_beyond_90": beyond})
    return {"schema": 1, "reference": files[0], "setups": out}


def register(sub) -> None:
    p = sub.add_parser("compare", help="several setups side by side, with differences against the first",
                       description=HELP, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("files", nargs="+", metavar="FILE", help="setup files (TOML, format 1); the first is the reference")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.set_defaults(func=run)


def run(args) -> int:
    loaded = [load_setup(f) for f in args.files]  # SetupError: one line, exit 2
    for ld in loaded:
        print_warnings(ld.warnings)
    analyses = [analyse(ld.setup) for ld in loaded]
    if args.json:
        print_json(compare_dict([str(f) for f in args.files], analyses))
        return 0
    print("Setups compared" + (" (differences against 1)" if len(analyses) > 1 else "") + "; angles in degrees:")
    for i, (f, ld) in enumerate(zip(args.files, loaded), 1):
        line = f"  {i} {f}: {ld.setup.name}"
        print(line if len(line) <= WIDTH else line[:WIDTH - 3] + "...")
    print()
    labels = [f"{i} {Path(f).stem}" for i, f in enumerate(args.files, 1)]
    for line in compare_table(analyses, labels):
        print(line)
    return 0
