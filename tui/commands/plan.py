"""`slopetune plan FILE --target ANGLE>=DEG --lever LEVER`: what to change to reach a target angle.

The words built here (`plan_lines`, `lever_words`, `ANGLE_LABELS`) are shared with the tuner's
planning screen, so the command line and the screen say the same thing.
"""

from __future__ import annotations

import argparse
import math
import re
import sys
import textwrap
from typing import Optional

from slopetune.engine import load_setup
from slopetune.engine.goal_seek import (
    TARGET_ANGLES, AddBallast, CgHeight, Compound, LeverError, MoveBallast, Overdrive, Plan, Target,
    angle_value_deg, plan,
)

from ._output import print_json, print_warnings

HELP = """\
Find the smallest change of one lever that brings a named angle to a target,
and say what else it moves. With --write the change goes into FILE (comments
and your own keys are kept; the file is replaced atomically).

Target  --target 'ANGLE>=DEG' or 'ANGLE<=DEG'  (quote it: a shell eats > and <)
        --target ANGLE:min=DEG or ANGLE:max=DEG  (the same, no quotes needed)
        angles in degrees, slope > 0 nose up:
  handover          steady climb: above it the overdriven axle slips first
  handover_weight_only  rule of thumb: where the overdriven axle carries the smaller grip
                        with no climbing force (the balance angle with equal mu)
  balance           front and rear axle loads equal
  max_grade         the steepest climb the rig holds
  front_lift        the front axle leaves the ground (tips over backwards)

Lever   --lever KIND[:KEY=VALUE,...]
  ballast:x=MM,z=MM[,min=G][,max=G]
          add one ballast item x mm ahead of the rear axle, z mm above the
          ground; the lever is its mass, 0 to 500 g unless min/max say [g]
          (--name TEXT names the item written)
  move:ITEM[,min=MM][,max=MM]
          move an existing ballast item along the rig; ITEM is its number
          (from 1, in file order) or its name; x from 0 to the wheelbase [mm]
  cg-height[:min=MM,max=MM]
          raise (+) or lower (-) the measured CG; default -30 to +30 [mm]
  overdrive[:min=PCT,max=PCT]
          set the gear overdrive; default -10 to +20 [%]
  mu[:min=MU,max=MU]
          another tyre compound: all static and kinetic mu scaled together;
          the lever is the common mu_static, default 0.3 to 1.5

Examples
  slopetune plan setups/marmot-overdrive.toml --target 'handover>=9' \\
      --lever ballast:x=313,z=40
  slopetune plan setups/marmot-stock.toml --target balance:min=18 \\
      --lever ballast:x=300,z=40,max=400 --write --name "brass knuckle weights"
  slopetune plan setups/marmot-overdrive.toml --target 'balance<=15' \\
      --lever move:2

Exit 0: reached (or already met); 1: this lever cannot reach it within its
limits (the best it can do is printed); 2: bad input. A static model: check
on the bench, hands clear of the driveline.
"""

ANGLE_LABELS = {
    "balance": "balance",
    "front_lift": "front lift",
    "rear_lift": "rear lift",
    "sidehill_roll": "sidehill roll",
    "sidehill_slide": "sidehill slide",
    "handover": "handover (climb)",
    "handover_weight_only": "handover, weight-only rule",
    "max_grade": "max grade",
}
_ALIASES = {"no_load_balance": "handover_weight_only", "no_load": "handover_weight_only", "maxgrade": "max_grade"}
_NUMBER = r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:deg|°)?"
_TARGET = re.compile(r"^\s*([A-Za-z_\- ]+?)\s*(>=|<=|=>|=<)\s*" + _NUMBER + r"\s*$")
_TARGET_WORDS = re.compile(r"^\s*([A-Za-z_\- ]+?)\s*:\s*(min|max)\s*=\s*" + _NUMBER + r"\s*$", re.IGNORECASE)


class PlanSyntaxError(ValueError):
    """A --target or --lever the planner cannot read; `str()` is one line."""


def parse_target(text: str) -> Target:
    """``"handover>=12"`` -> Target; PlanSyntaxError naming what is wrong."""
    m = _TARGET.match(text or "") or _TARGET_WORDS.match(text or "")
    if not m:
        raise PlanSyntaxError(f"--target {text!r}: write 'ANGLE>=DEG' (quoted) or ANGLE:min=DEG, "
                              f"e.g. handover:min=12")
    name = m.group(1).strip().lower().replace("-", "_").replace(" ", "_")
    name = _ALIASES.get(name, name)
    if name not in TARGET_ANGLES:
        raise PlanSyntaxError(f"--target {text!r}: unknown angle {m.group(1)!r}; one of {', '.join(TARGET_ANGLES)}")
    op = {"=>": ">=", "=<": "<=", "min": ">=", "max": "<="}.get(m.group(2).lower(), m.group(2))
    value = float(m.group(3))
    if not -90.0 <= value <= 90.0:
        raise PlanSyntaxError(f"--target {text!r}: {value:g} deg is outside -90 to 90")
    return Target(name, op, value)


def _options(kind: str, parts: list[str], allowed: tuple[str, ...], text: str) -> dict:
    out = {}
    for part in parts:
        if "=" not in part:
            raise PlanSyntaxError(f"--lever {text!r}: {part!r} is not KEY=VALUE ({kind} takes {', '.join(allowed)})")
        key, _, raw = part.partition("=")
        key = key.strip().lower()
        if key not in allowed:
            raise PlanSyntaxError(f"--lever {text!r}: unknown key {key!r} for {kind}; allowed: {', '.join(allowed)}")
        try:
            value = float(raw)
        except ValueError:
            value = math.nan
        if not math.isfinite(value):
            raise PlanSyntaxError(f"--lever {text!r}: {key}={raw.strip()!r} must be a number")
        if key in out:
            raise PlanSyntaxError(f"--lever {text!r}: {key} given twice")
        out[key] = value
    return out


def find_item(setup, ref: str) -> int:
    """Index (from 0) of a ballast item given by number (from 1) or by (part of) its name."""
    items = setup.rig.ballast
    ref = ref.strip()
    if not items:
        raise PlanSyntaxError("--lever move: the setup has no ballast items to move")
    if ref.isdigit():
        i = int(ref)
        if not 1 <= i <= len(items):
            raise PlanSyntaxError(f"--lever move:{ref}: the setup has ballast items 1 to {len(items)}")
        return i - 1
    low = ref.lower()
    exact = [i for i, b in enumerate(items) if b.name.lower() == low]
    part = [i for i, b in enumerate(items) if low in b.name.lower()]
    hits = exact or part
    if len(hits) == 1:
        return hits[0]
    names = "; ".join(f"{i + 1}: {b.name}" for i, b in enumerate(items))
    if not hits:
        raise PlanSyntaxError(f"--lever move:{ref}: no ballast item by that name ({names})")
    raise PlanSyntaxError(f"--lever move:{ref}: matches several items; give its number ({names})")


def parse_lever(text: str, setup, name: Optional[str] = None):
    """``"ballast:x=300,z=40,max=400"`` -> an engine lever; PlanSyntaxError naming what is wrong."""
    kind, _, rest = (text or "").partition(":")
    kind = kind.strip().lower().replace("_", "-")
    parts = [p for p in rest.split(",") if p.strip()] if rest else []
    if kind == "ballast":
        o = _options(kind, parts, ("x", "z", "min", "max"), text)
        missing = [k for k in ("x", "z") if k not in o]
        if missing:
            raise PlanSyntaxError(f"--lever {text!r}: ballast needs {' and '.join(missing)} in mm, e.g. ballast:x=300,z=40")
        return AddBallast(o["x"], o["z"], o.get("min", 0.0), o.get("max", 500.0), name or "planned ballast")
    if name is not None:
        raise PlanSyntaxError("--name: only for --lever ballast (it names the item added)")
    if kind == "move":
        if not parts:
            raise PlanSyntaxError(f"--lever {text!r}: say which item, e.g. move:1 or move:battery")
        o = _options(kind, parts[1:], ("min", "max"), text)
        return MoveBallast(find_item(setup, parts[0]), o.get("min"), o.get("max"))
    if kind in ("cg-height", "cg"):
        o = _options("cg-height", parts, ("min", "max"), text)
        return CgHeight(o.get("min", CgHeight.min_mm), o.get("max", CgHeight.max_mm))
    if kind == "overdrive":
        o = _options(kind, parts, ("min", "max"), text)
        return Overdrive(o.get("min", Overdrive.min_pct), o.get("max", Overdrive.max_pct))
    if kind == "mu":
        o = _options(kind, parts, ("min", "max"), text)
        return Compound(o.get("min", Compound.min_mu), o.get("max", Compound.max_mu))
    raise PlanSyntaxError(f"--lever {text!r}: unknown lever {kind!r}; one of ballast, move, cg-height, overdrive, mu")


# ---------------------------------------------------------------- words


def angle_words(analysis, name: str, deg: str = " deg") -> str:
    """A named angle as text: number, 'none below 90 deg' (handover beyond the climbs) or '-'."""
    v = angle_value_deg(analysis, name)
    if math.isinf(v):
        return f"none below 90{deg}"
    if math.isnan(v):
        return "none (no overdrive)" if name.startswith("handover") else "-"
    return f"{v:.2f}{deg}"


def lever_number(v: float, step: float, strip: bool = True) -> str:
    """`v` with the lever's display digits, or more when the planner needed a finer step."""
    digits = max(0, -int(math.floor(math.log10(step) + 1e-9)))
    while digits < 9 and abs(round(v, digits) - v) > 1e-9 * max(1.0, abs(v)):
        digits += 1
    text = f"{v:.{digits}f}"
    return text.rstrip("0").rstrip(".") if strip and "." in text else text


def lever_words(lever, setup) -> str:
    """What the lever changes and within which limits, in words."""
    lo, hi = lever.limits(setup)
    if isinstance(lever, AddBallast):
        return f"ballast at x {lever.x_mm:g} mm, z {lever.z_mm:g} mm, {lo:g} to {hi:g} g"
    if isinstance(lever, MoveBallast):
        item = setup.rig.ballast[lever.index]
        return f"moving ballast item {lever.index + 1} ({item.name}) along x, {lo:g} to {hi:g} mm"
    if isinstance(lever, CgHeight):
        return f"CG height change, {lo:+g} to {hi:+g} mm"
    if isinstance(lever, Overdrive):
        return f"gear overdrive, {lo:g} to {hi:g} %"
    return f"tyre compound (mu_static), {lo:g} to {hi:g}"


def change_words(p: Plan, short: bool = False) -> str:
    """The change itself as an instruction; `short` fits one line of the plan screen."""
    lever, v, s = p.lever, p.value, p.before.setup
    if isinstance(lever, AddBallast):
        verb = "Add" if v >= 0 else "Remove"
        return f"{verb} {lever_number(abs(v), lever.step)} g at x {lever.x_mm:g} mm, z {lever.z_mm:g} mm"
    if isinstance(lever, MoveBallast):
        item = s.rig.ballast[lever.index]
        what = f"item {lever.index + 1}" if short else f"ballast item {lever.index + 1} ({item.name})"
        return (f"Move {what} from x {lever_number(p.start_value, lever.step)} "
                f"to x {lever_number(v, lever.step)} mm")
    if isinstance(lever, CgHeight):
        word = "Raise" if v >= 0 else "Lower"
        return (f"{word} the CG by {lever_number(abs(v), lever.step)} mm "
                f"(to {lever_number(s.rig.cg_height_mm + v, lever.step)} mm)")
    if isinstance(lever, Overdrive):
        if short:
            return f"Gear overdrive {p.start_value:.2f} -> {lever_number(v, lever.step)} %"
        eff = p.after.overdrive.effective_pct
        stages = " (replaces the gear stages: pick gears that give it)" if s.driveline.uses_stages else ""
        return (f"Set the gear overdrive to {lever_number(v, lever.step)} % (now {p.start_value:.2f} %; "
                f"{round(eff, 2) + 0.0:+.2f} % with the tyres){stages}")
    now = lever_number(p.start_value, lever.step, False)
    if short:
        return f"Tyres with mu_static {lever_number(v, lever.step, False)} (now {now})"
    g = p.setup.grip
    return (f"Use tyres with mu_static {lever_number(v, lever.step, False)} (now {now}; "
            f"mu_kinetic {g.mu_kinetic:.3f})")


def _target_words(t: Target) -> str:
    return f"{t.angle} {t.op} {t.value_deg:g} deg"


def plan_lines(p: Plan, deg: str = " deg") -> list[str]:
    """The answer in plain words, one finding per line."""
    t, name = p.target, p.target.angle
    before = angle_words(p.before, name, deg)
    after = angle_words(p.after, name, deg)
    lines = []
    if p.already_met:
        lines.append(f"Already met: {name} is {before} (target {_target_words(t)}); no change needed.")
        return lines
    if p.reached:
        lines.append(f"{change_words(p)}:")
        lines.append(f"  {name} {before} -> {after} (target {t.op} {t.value_deg:g}{deg}).")
        if p.margin_deg > 0.01 and math.isfinite(p.margin_deg):
            lines.append(f"  The angle jumps here: the smallest change that meets the target overshoots it "
                         f"by {p.margin_deg:.2f}{deg}.")
    else:
        lines.append(f"Cannot reach {_target_words(t)} with {lever_words(p.lever, p.before.setup)}.")
        if math.isnan(p.angle_after_deg) and name.startswith("handover"):
            lines.append("  This setup has no overdriven axle, so it has no handover angle at any lever value;"
                         " try --lever overdrive.")
        elif p.insensitive:
            lines.append(f"  {name} does not change with this lever: it stays {before}.")
        elif p.value == p.start_value:
            lines.append(f"  Best within the limits is no change: this lever only moves {name} the other way"
                         f" (it stays {before}).")
        else:
            short = -p.margin_deg
            lines.append(f"  Best within the limits: {change_words(p)[0].lower()}{change_words(p)[1:]}: "
                         f"{name} {after} ({short:.2f}{deg} short; now {before}).")
    if p.added_mass_g:
        m0 = p.before.rig.mass_g
        lines.append(f"Cost: {p.added_mass_g:+.1f} g (rig {m0:.0f} -> {m0 + p.added_mass_g:.1f} g).")
    moved = p.moved_deg()
    others = [k for k in ANGLE_LABELS if k != name]
    changed = [k for k in others if moved.get(k) is not None and abs(moved[k]) >= 0.005]
    gone = [k for k in others if (p.before.angles_deg.get(k) is None) != (p.after.angles_deg.get(k) is None)]
    if changed or gone:
        lines.append("Other angles:")
        for k in others:
            if k in changed or k in gone:
                delta = f"  ({moved[k]:+.2f})" if moved.get(k) is not None else ""
                wide = max(len(label) for label in ANGLE_LABELS.values()) + 1
                lines.append(f"  {ANGLE_LABELS[k]:<{wide}}{angle_words(p.before, k, deg):>12} -> "
                             f"{angle_words(p.after, k, deg)}{delta}")
    elif p.value != p.start_value:
        lines.append("Other angles: unchanged.")
    return lines


def _j(x) -> Optional[float]:
    return None if x is None or not math.isfinite(x) else round(float(x), 6)


def lever_dict(lever, setup) -> dict:
    lo, hi = lever.limits(setup)
    out = {"kind": lever.kind, "unit": lever.unit, "min": lo, "max": hi}
    if isinstance(lever, AddBallast):
        out.update(x_mm=lever.x_mm, z_mm=lever.z_mm, name=lever.name)
    if isinstance(lever, MoveBallast):
        out.update(item=lever.index + 1, name=setup.rig.ballast[lever.index].name)
    return out


def plan_dict(p: Plan) -> dict:
    """The answer as JSON-ready data: nulls where an angle is absent."""
    return {
        "target": {"angle": p.target.angle, "op": p.target.op, "value_deg": p.target.value_deg},
        "lever": lever_dict(p.lever, p.before.setup),
        "reached": p.reached,
        "already_met": p.already_met,
        "insensitive": p.insensitive,
        "start_value": _j(p.start_value),
        "value": _j(p.value),
        "change": _j(p.change),
        "added_mass_g": _j(p.added_mass_g),
        "angle_before_deg": _j(p.angle_before_deg),
        "angle_after_deg": _j(p.angle_after_deg),
        "beyond_90_deg": math.isinf(p.angle_after_deg),
        "margin_deg": _j(p.margin_deg),
        "angles_before_deg": {k: _j(v) for k, v in p.before.angles_deg.items()},
        "angles_after_deg": {k: _j(v) for k, v in p.after.angles_deg.items()},
        "moved_deg": {k: _j(v) for k, v in p.moved_deg().items()},
        "method": p.method,
        "evaluations": p.evaluations,
        "instruction": change_words(p) if not p.already_met else None,
    }


# ---------------------------------------------------------------- command


def register(sub) -> None:
    p = sub.add_parser("plan", help="what to change (ballast, CG, overdrive, mu) to reach a target angle",
                       description=HELP, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="setup file (TOML, format 1)")
    p.add_argument("--target", required=True, metavar="ANGLE>=DEG", help="e.g. 'handover>=12' or balance:max=15 [deg]")
    p.add_argument("--lever", required=True, metavar="LEVER", help="e.g. ballast:x=300,z=40 (see above)")
    p.add_argument("--json", action="store_true", help="one JSON object on stdout")
    p.add_argument("--write", action="store_true", help="store the change in FILE when the target is reached")
    p.add_argument("--name", metavar="TEXT", help="name of the ballast item added (ballast lever only)")
    p.set_defaults(func=run)


def _fail(message: str) -> int:
    print(f"slopetune plan: {message}", file=sys.stderr)
    return 2


def run(args) -> int:
    try:
        target = parse_target(args.target)
    except (PlanSyntaxError, LeverError) as exc:
        return _fail(str(exc))
    loaded = load_setup(args.file)
    print_warnings(loaded.warnings)
    if args.name is not None and not args.name.strip():
        return _fail("--name: give some text, e.g. --name \"brass weights\"")
    try:
        lever = parse_lever(args.lever, loaded.setup, args.name)
        result = plan(loaded.setup, target, lever)
    except (PlanSyntaxError, LeverError) as exc:
        return _fail(str(exc))

    written = None
    write_note = None
    if args.write:
        if not result.reached:
            write_note = f"{args.file}: not changed (the target is not reached)"
        elif result.already_met:
            write_note = f"{args.file}: not changed (nothing to change)"
        else:
            from ..setup_writer import SaveError, save_setup

            try:
                saved = save_setup(loaded, result.setup)
            except SaveError as exc:
                return _fail(str(exc))
            written = str(saved.path)
            check = load_setup(saved.path)
            from slopetune.engine import analyse

            now = analyse(check.setup)
            write_note = (f"Wrote {written}: {target.angle} is now "
                          f"{angle_words(now, target.angle)} (target {_target_words(target)}).")

    if args.json:
        out = {"file": str(args.file), "name": loaded.setup.name, **plan_dict(result), "written": written}
        print_json(out)
        if write_note and not written:
            print(f"slopetune plan: {write_note}", file=sys.stderr)
    else:
        print(f"{loaded.setup.name} ({args.file})")
        print(f"Target: {_target_words(target)}; now {angle_words(result.before, target.angle)}")
        print(f"Lever: {lever_words(lever, loaded.setup)}")
        print()
        for line in plan_lines(result):
            indent = " " * (len(line) - len(line.lstrip()) + 2)
            print(textwrap.fill(line, width=80, subsequent_indent=indent, break_on_hyphens=False))
        if write_note:
            print()
            print(write_note)
    return 0 if result.reached else 1
