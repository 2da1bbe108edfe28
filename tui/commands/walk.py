"""`slopetune walk FILE`: walk the rig along the setup's [course]; events in words and a table."""

from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np

from slopetune.engine import SetupError, load_setup
from slopetune.engine.course_walk import DEFAULT_STEP_MM, CourseWalk, state_words, walk_course
from slopetune.engine.setup_file import find_line

from .report import table_cell as _fmt

HELP = """\
Walk the rig along the terrain profile in the file's [course] section, front and rear on
different ground: pitch, the ground angle under each tyre, loads, which axle lets go first,
and whether the belly touches; then where along the course any of these change.

Positions are the rear axle's x along the course [mm]; the front axle's x is in brackets.
Forces in grams(-force); ground forces act along the ground under each tyre, + forward.
Slip state: front / rear (that axle lets go first, the other grips), both (cannot hold: the rig
stalls or slides back), none (no overdrive, nothing slips), lifted (an axle off the ground).
Belly: height of the lowest chassis line above the terrain under it; 0 or less: it touches.
A static model: check on the bench, hands clear of the driveline.
"""

TABLE_ROWS = 40  # about this many regular rows, plus one per event


def register(sub) -> None:
    p = sub.add_parser("walk", help="walk the rig along the file's [course]", description=HELP,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", help="setup file with a [course] section (TOML, format 1)")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.add_argument("--step", type=float, default=DEFAULT_STEP_MM, metavar="MM",
                   help=f"distance between positions [mm] ({DEFAULT_STEP_MM:g})")
    p.set_defaults(func=run)


def _num(x, digits=3):
    return None if x is None or not math.isfinite(x) else round(float(x), digits)


def walk_dict(w: CourseWalk) -> dict:
    """The walk as plain JSON-ready data."""
    p, t = w.pose, w.traction
    lifted, slipping = w.lifted, w.slipping
    rows = []
    for i in range(len(w)):
        rows.append({
            "rear_x_mm": _num(w.rear_x_mm[i]), "front_x_mm": _num(p.front_centre_mm[i, 0]),
            "pitch_deg": _num(p.pitch_deg[i], 4), "front_angle_deg": _num(p.front_angle_deg[i], 4),
            "rear_angle_deg": _num(p.rear_angle_deg[i], 4),
            "front_normal_g": _num(w.front_normal_g[i]), "rear_normal_g": _num(w.rear_normal_g[i]),
            "front_force_g": _num(t.front_force_g[i]), "rear_force_g": _num(t.rear_force_g[i]),
            "windup_g": _num(t.windup_g[i]), "reserve_g": _num(t.reserve_g[i]),
            "slipping": slipping[i], "lifted": lifted[i],
            "belly_clearance_mm": _num(p.belly_clearance_mm[i]), "belly_touch": bool(w.belly_touch[i]),
        })
    s = w.setup
    return {
        "schema": 1,
        "name": s.name,
        "course": {"name": w.course.name, "points_mm": [list(pt) for pt in w.course.points_mm],
                   "belly_clearance_mm": w.course.belly_clearance_mm},
        "overdriven_axle": w.overdriven,
        "accel_g": s.terrain.accel_g if s.terrain.load == "climb" else 0.0,
        "step_mm": w.step_mm,
        "positions": rows,
        "events": [{"kind": e.kind, "index": e.index, "rear_x_mm": _num(e.rear_x_mm),
                    "front_x_mm": _num(e.front_x_mm), "text": e.text} for e in w.events],
    }


def _where(rear_x, front_x) -> str:
    front = "-" if not math.isfinite(front_x) else f"{front_x:.0f}"
    return f"{rear_x:>6.0f} ({front:>5})"


def table_rows(w: CourseWalk, rows: int = TABLE_ROWS) -> list[int]:
    """Indices for the table: about `rows` evenly spaced, the last one, and every event."""
    n = len(w)
    stride = max(1, math.ceil(n / rows))
    picks = set(range(0, n, stride)) | {n - 1} | {e.index for e in w.events}
    return sorted(picks)


def walk_text(w: CourseWalk) -> str:
    s, c, p, t = w.setup, w.course, w.pose, w.traction
    pts = np.asarray(c.points_mm)
    out = [s.name]
    out.append(f'Course "{c.name}": {pts[-1, 0] - pts[0, 0]:g} mm long, height {pts[:, 1].min():g} to '
               f"{pts[:, 1].max():g} mm, belly {c.belly_clearance_mm:g} mm")
    od = "no overdrive" if w.overdriven is None else f"{w.overdriven} overdriven"
    out.append(f"{len(w)} positions every {w.step_mm:g} mm (rear axle x {w.rear_x_mm[0]:g} to "
               f"{w.rear_x_mm[-1]:g} mm); {od}")
    out.append("")
    out.append("Along the course (rear axle x [mm], front axle x in brackets):")
    lifted = w.lifted[0]
    start = (f"the {lifted} is off the ground" if lifted else state_words(int(t.state[0]), w.overdriven))
    if w.belly_touch[0]:
        start += "; the belly touches"
    out.append(f"  {_where(w.rear_x_mm[0], p.front_centre_mm[0, 0])}  start: {start}")
    for e in w.events:
        out.append(f"  {_where(e.rear_x_mm, e.front_x_mm)}  {e.text}")
    if not w.events:
        out.append("  nothing changes along the course")
    if not p.placed.all():
        out.append(f"  ({int((~p.placed).sum())} positions where the front tyre finds no ground at the "
                   "wheelbase are shown as lifted)")
    out.append("")
    out.append("Table (* an event; angles: ground under each tyre; forces in g, + forward):")
    out.append(f"{'rear x':>7} {'pitch':>5} {'ang F':>5} {'ang R':>5} {'N front':>7} {'N rear':>7}"
               f" {'F front':>7} {'F rear':>7} {'belly':>5}  state")
    out.append(f"{'[mm]':>7} {'[deg]':>5} {'[deg]':>5} {'[deg]':>5} {'[g]':>7} {'[g]':>7}"
               f" {'[g]':>7} {'[g]':>7} {'[mm]':>5}")
    events_at = {e.index for e in w.events}
    slipping, lifted_all = w.slipping, w.lifted
    for i in table_rows(w):
        mark = "*" if i in events_at else " "
        state = f"{lifted_all[i]} up" if lifted_all[i] else slipping[i]
        if w.belly_touch[i]:
            state += ", belly"
        out.append(f"{mark}{w.rear_x_mm[i]:>6.0f} {_fmt(p.pitch_deg[i], 5, 1)} {_fmt(p.front_angle_deg[i], 5, 1)}"
                   f" {_fmt(p.rear_angle_deg[i], 5, 1)} {_fmt(w.front_normal_g[i], 7)} {_fmt(w.rear_normal_g[i], 7)}"
                   f" {_fmt(t.front_force_g[i], 7)} {_fmt(t.rear_force_g[i], 7)}"
                   f" {_fmt(p.belly_clearance_mm[i], 5)}  {state}")
    out.append("")
    out.append("Static model: a touching belly or a lifted axle changes how the rig really sits.")
    return "\n".join(out)


def run(args) -> int:
    if not (math.isfinite(args.step) and args.step > 0):
        raise SetupError(f"--step {args.step:g}: must be a number of mm > 0", "command line")
    loaded = load_setup(args.file)
    for warning in loaded.warnings:
        print(f"slopetune: warning: {warning}", file=sys.stderr)
    if loaded.setup.course is None:
        raise SetupError("no [course] section: add one with name, points_mm and belly_clearance_mm "
                         "to walk the rig along it", str(args.file))
    try:
        w = walk_course(loaded.setup, args.step)
    except SetupError as exc:
        key = "course.points_mm" if exc.reason.startswith("course.") else None
        line = find_line(loaded.text, key) if key else None
        raise SetupError(exc.reason, str(args.file) if key else "command line", line) from None
    if args.json:
        json.dump(walk_dict(w), sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    else:
        print(walk_text(w))
    return 0
