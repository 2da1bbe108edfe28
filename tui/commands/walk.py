"""`slopetune walk SETUP [--course COURSE]`: walk the rig over a course; events in words and a table."""

from __future__ import annotations

import argparse
import math
import sys

import numpy as np

from slopetune.engine import SetupError, load_setup
from slopetune.engine.course_file import load_course
from slopetune.engine.course_walk import (
    DEFAULT_STEP_MM, OUTSIDE, CourseWalk, _tyre_keys, state_words, walk_course, walk_span_mm,
)
from slopetune.engine.setup_file import find_line

from ._args import number
from .report import table_cell as _fmt
from ._output import print_json, print_warnings

HELP = """\
Walk the rig over a course (a course file given with --course, or the setup's own [course]):
front and rear on different ground. Pitch, the ground angle under each tyre, the path ratio,
loads, tyre slip, which axle lets go, and whether the belly touches; then where along the course
any of these change.

Positions are the rear axle's x along the course [mm]; the front axle's x is in brackets.
Forces in grams(-force); tyre forces act along the ground under each tyre, + forward.
Path ratio: how far the front wheel centre travels per mm of the rear's. The tyres must absorb
the driveline's speed ratio K divided by it: where the front centre climbs faster than the
rear (path ratio above K), an overdriven front is kinematically underdriven and the wind-up
reverses, so "overdriven here" can be the rear.
Slip state: none (both grip, the mismatch carried as tyre slip), front / rear (that axle lets
go, the other grips), both (cannot hold: the rig stalls or slides back), lifted (an axle off
the ground), binds (the driveline locks: no tyre can slip and the forces grow with motor torque;
stop), outside (a tyre sits in a V touching two faces, or the front is jammed: this model
cannot say; check by hand).
Belly: height of the lowest chassis line above the terrain under it; 0 or less: it touches.
A static model: wind-up loads gears and motors. Test on the bench, hands clear of the driveline.
"""

TABLE_ROWS = 40  # about this many regular rows, plus one per event


def register(sub) -> None:
    p = sub.add_parser("walk", help="walk the rig over a course (--course FILE or the setup's [course])",
                       description=HELP, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="setup file (TOML, format 1)")
    p.add_argument("--course", metavar="COURSE", help="course file: schema = 1 and [course] only "
                                                      "(default: the setup's own [course])")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.add_argument("--step", type=number, default=DEFAULT_STEP_MM, metavar="MM",
                   help=f"distance between positions [mm] ({DEFAULT_STEP_MM:g})")
    p.set_defaults(func=run)


def _num(x, digits=3):
    return None if x is None or not math.isfinite(x) else round(float(x), digits)


def walk_dict(w: CourseWalk) -> dict:
    """The walk as plain JSON-ready data."""
    p, t = w.pose, w.traction
    lifted, slipping, fast, in_v = w.lifted, w.slipping, w.overdriven_here, w.in_v
    flagged = _no_fixed_point(w)
    rows = []
    for i in range(len(w)):
        rows.append({
            "rear_x_mm": _num(w.rear_x_mm[i]), "front_x_mm": _num(p.front_centre_mm[i, 0]),
            "pitch_deg": _num(p.pitch_deg[i], 4), "front_angle_deg": _num(p.front_angle_deg[i], 4),
            "rear_angle_deg": _num(p.rear_angle_deg[i], 4),
            "path_ratio": _num(p.path_ratio[i], 5), "speed_ratio": _num(w.speed_ratio[i], 5),
            "no_fixed_point": bool(flagged[i]), "overdriven_here": fast[i],
            "front_normal_g": _num(w.front_normal_g[i]), "rear_normal_g": _num(w.rear_normal_g[i]),
            "front_force_g": _num(t.front_force_g[i]), "rear_force_g": _num(t.rear_force_g[i]),
            "front_grip_used": _num(t.front_grip_used[i], 4), "rear_grip_used": _num(t.rear_grip_used[i], 4),
            "front_slip_pct": _num(t.front_slip_pct[i], 4), "rear_slip_pct": _num(t.rear_slip_pct[i], 4),
            "windup_g": _num(t.windup_g[i]), "reserve_g": _num(t.reserve_g[i]),
            "slipping": slipping[i], "lifted": lifted[i], "in_v": in_v[i],
            "belly_clearance_mm": _num(p.belly_clearance_mm[i]), "belly_touch": bool(w.belly_touch[i]),
        })
    s = w.setup
    return {
        "schema": 1,
        "name": s.name,
        "course": {"name": w.course.name, "points_mm": [list(pt) for pt in w.course.points_mm],
                   "belly_clearance_mm": w.course.belly_clearance_mm},
        "overdriven_axle": w.overdriven,
        "slip_stiffness": [_stiffness_json(c) for c in _tyre_keys(s)[2]],
        "accel_g": s.terrain.accel_g,
        "step_mm": w.step_mm,
        "no_fixed_point_count": int(flagged.sum()),
        "positions": rows,
        "events": [{"kind": e.kind, "index": e.index, "rear_x_mm": _num(e.rear_x_mm),
                    "front_x_mm": _num(e.front_x_mm), "text": e.text} for e in w.events],
    }


def _no_fixed_point(w: CourseWalk) -> np.ndarray:
    """Per position: no loads reproduce their own K, the state decided at the onset (MODEL §5)."""
    if w.no_fixed_point is None:
        return np.zeros(len(w), dtype=bool)
    return np.asarray(w.no_fixed_point, dtype=bool)


def _stiffness_json(c):
    return "rigid" if math.isinf(c) else c


def _where(rear_x, front_x) -> str:
    front = "-" if not math.isfinite(front_x) else f"{front_x:.0f}"
    return f"{rear_x:>6.0f} ({front:>5})"


def table_rows(w: CourseWalk, rows: int = TABLE_ROWS) -> list[int]:
    """Indices for the table: about `rows` evenly spaced, the last one, and every event."""
    n = len(w)
    stride = max(1, math.ceil(n / rows))
    picks = set(range(0, n, stride)) | {n - 1} | {e.index for e in w.events}
    return sorted(picks)


def _state_cell(w: CourseWalk, i: int, lifted, slipping) -> str:
    state = f"{lifted[i]} up" if lifted[i] else slipping[i]
    return state + (", belly" if w.belly_touch[i] else "")


def _stiffness_words(setup) -> str:
    c_f, c_r = _tyre_keys(setup)[2]
    if math.isinf(c_f) and math.isinf(c_r):
        return ("Tyres: rigid (the rigid-driveline limit: any mismatch makes an axle let go,\n"
                "and on uneven ground the driveline can bind).")
    shown = [("rigid" if math.isinf(c) else f"{c:g}") for c in (c_f, c_r)]
    return (f"Tyres: slip stiffness {shown[0]} front, {shown[1]} rear (per unit load); a small\n"
            "mismatch is carried as slip with both axles gripping.")


def walk_text(w: CourseWalk) -> str:
    s, c, p, t = w.setup, w.course, w.pose, w.traction
    pts = np.asarray(c.points_mm)
    out = [s.name]
    out.append(f'Course "{c.name}": {pts[-1, 0] - pts[0, 0]:g} mm long, height {pts[:, 1].min():g} to '
               f"{pts[:, 1].max():g} mm, belly {c.belly_clearance_mm:g} mm")
    od = ("No overdrive" if w.overdriven is None
          else f"{w.overdriven.capitalize()} overdriven by the gears and tyres on level ground")
    out.append(f"{len(w)} positions every {w.step_mm:g} mm (rear axle x {w.rear_x_mm[0]:g} to "
               f"{w.rear_x_mm[-1]:g} mm);")
    out.append(f"{od}.")
    rho, k = p.path_ratio, w.speed_ratio
    fast = w.overdriven_here
    if np.isfinite(rho).any():
        n_front = sum(f == "front" for f in fast)
        n_rear = sum(f == "rear" for f in fast)
        out.append(f"Path ratio (front centre travel per mm of the rear's) {np.nanmin(rho):.3f} to "
                   f"{np.nanmax(rho):.3f};")
        out.append(f"driveline speed ratio K {np.nanmin(k):.3f} to {np.nanmax(k):.3f}. Faster axle: the front "
                   f"at {n_front}, the rear")
        out.append(f"at {n_rear} of {len(w)} positions (where the front centre climbs faster than K,")
        out.append("the wind-up reverses).")
    out.append(_stiffness_words(s))
    out.append("")
    out.append("Along the course (rear axle x [mm], front axle x in brackets):")
    lifted = w.lifted[0]
    start = (f"the {lifted} is off the ground" if lifted else state_words(int(t.state[0]), fast[0]))
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
    n_out = int((t.state == OUTSIDE).sum())
    if n_out:
        out.append(f"  ({n_out} positions outside the model: a tyre in a V; check by hand)")
    n_onset = int(_no_fixed_point(w).sum())
    if n_onset:
        out.append(f"  ({n_onset} position{'s' if n_onset > 1 else ''} decided at the onset: no steady K there, "
                   "the state flips with K)")
    out.append("")
    out.append("Table (* an event; angles: ground under each tyre; path: path ratio;")
    out.append("F: tyre force, + forward; states as in --help):")
    out.append(f"{'rear x':>7} {'pitch':>5} {'ang F':>5} {'ang R':>5} {'path':>5} {'N F':>6} {'N R':>6}"
               f" {'F F':>6} {'F R':>6} {'belly':>5}  state")
    out.append(f"{'[mm]':>7} {'[deg]':>5} {'[deg]':>5} {'[deg]':>5} {'[-]':>5} {'[g]':>6} {'[g]':>6}"
               f" {'[g]':>6} {'[g]':>6} {'[mm]':>5}")
    events_at = {e.index for e in w.events}
    slipping, lifted_all = w.slipping, w.lifted
    for i in table_rows(w):
        mark = "*" if i in events_at else " "
        out.append(f"{mark}{w.rear_x_mm[i]:>6.0f} {_fmt(p.pitch_deg[i], 5, 1)} {_fmt(p.front_angle_deg[i], 5, 1)}"
                   f" {_fmt(p.rear_angle_deg[i], 5, 1)} {_fmt(rho[i], 5, 2)} {_fmt(w.front_normal_g[i], 6)}"
                   f" {_fmt(w.rear_normal_g[i], 6)} {_fmt(t.front_force_g[i], 6)} {_fmt(t.rear_force_g[i], 6)}"
                   f" {_fmt(p.belly_clearance_mm[i], 5)}  {_state_cell(w, i, lifted_all, slipping)}")
    out.append("")
    out.append("Static model: driveline wind-up loads gears and motors; a binding driveline can")
    out.append("break parts or stall the motor. Test on the bench, keep hands clear of the")
    out.append("driveline. A touching belly or a lifted axle changes how the rig really sits.")
    return "\n".join(out)


def run(args) -> int:
    if not (math.isfinite(args.step) and args.step > 0):
        raise SetupError(f"--step {args.step:g}: must be a number of mm > 0", "command line")
    loaded = load_setup(args.file)
    print_warnings(loaded.warnings)
    if args.course is not None:
        course_file = load_course(args.course)
        print_warnings(course_file.warnings)
        course, where, text = course_file.course, str(args.course), course_file.text
    elif loaded.setup.course is not None:
        course, where, text = loaded.setup.course, str(args.file), loaded.text
    else:
        raise SetupError("no course to walk: give a course file with --course COURSE, or add [course] "
                         "(name, points_mm, belly_clearance_mm) to the setup", str(args.file))
    try:
        x0, end = walk_span_mm(loaded.setup, course)
        if args.step > end - x0 > 0:
            print(f"slopetune: note: --step {args.step:g} mm is longer than the rear axle's travel on this "
                  f"course ({end - x0:g} mm): one position only", file=sys.stderr)
        w = walk_course(loaded.setup, args.step, course=course)
    except SetupError as exc:
        key = "course.points_mm" if exc.reason.startswith("course.") else None
        line = find_line(text, key) if key else None
        raise SetupError(exc.reason, where if key else "command line", line) from None
    if args.json:
        print_json(walk_dict(w))
    else:
        print(walk_text(w))
    return 0
