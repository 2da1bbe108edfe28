"""The rows of the setup form and the edits they make, without any widget code.

`build_rows(setup)` lists one `Row` per thing the form shows: every key of a setup file (rig,
ballast items, driveline as a percentage or as gear stages, grip with per-axle overrides, terrain),
plus headings and "add" rows. `step`, `set_typed`, `clear`, `activate` and `remove` return
`Edit(setup, error)`: the new setup, or the old one and the reason the change was refused. Every
numeric check goes through `engine.check_value`, the same rules the file loader uses.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import NamedTuple, Optional

from slopetune.engine import BallastItem, Setup, check_value
from slopetune.engine.setup_model import cross_field_problems

from ..units import Units

# Fine steps per quantity, metric; the coarse step is ten of them.
STEPS = {"mass": 5.0, "length": 1.0, "pct": 0.5, "deg": 1.0, "mu": 0.05, "rr": 0.01, "teeth": 1, "accel": 0.05,
         "heading": 5.0, "stiff": 1.0, "loss": 0.05}
COARSE = 10
# An optional key shows, and steps from, the value it falls back to while it is unset.
FALLBACK = {"rig.rolling_dia_front_mm": "rig.tire_dia_front_mm", "rig.rolling_dia_rear_mm": "rig.tire_dia_rear_mm",
            "grip.front_slip_stiffness": "grip.slip_stiffness", "grip.rear_slip_stiffness": "grip.slip_stiffness"}
RIGID_WORDS = ("rigid", "inf")  # typed into a slip stiffness: the rigid-driveline rule
DRIVE_WORDS = {False: "overdrive %", True: "gear stages"}
# Stages offered when switching from a percentage: a one-stage pair whose ratio gives it.
_STAGE_BASE_TEETH = 40


class Row(NamedTuple):
    """One line of the form.

    kind: "heading", "number", "text", "drive_mode", "add_ballast", "add_stage", "info",
    "derived" (the rig with its ballast, shown, not edited).
    `key` is the setup's dotted key for values (for "derived", the name of the figure); `quantity`
    picks unit and step.
    """

    kind: str
    label: str
    key: str = ""
    quantity: str = ""
    optional: bool = False
    removable: bool = False

    @property
    def selectable(self) -> bool:
        return self.kind not in ("heading", "info", "derived")

    @property
    def typeable(self) -> bool:
        """Digits typed on this row start an edit."""
        return self.kind == "number"


class Edit(NamedTuple):
    setup: Setup
    error: Optional[str] = None
    note: Optional[str] = None  # a message for the status line (what was removed or added)
    structural: bool = False  # rows were added or removed


def shape(setup: Setup) -> tuple:
    """What decides which rows the form has; rows are rebuilt only when this changes."""
    d = setup.driveline
    return (len(setup.rig.ballast), d.uses_stages, len(d.front_stages or ()), len(d.rear_stages or ()),
            setup.course is None)


def build_rows(setup: Setup) -> list[Row]:
    """Every row of the form for `setup`, in screen order (slope first: it is tuned most)."""
    rows = [Row("heading", "Terrain"),
            Row("number", "slope", "terrain.slope_deg", "deg"),
            Row("number", "heading", "terrain.heading_deg", "heading"),
            Row("number", "throttle accel", "terrain.accel_g", "accel"),
            Row("heading", "Rig"),
            Row("number", "mass", "rig.mass_g", "mass"),
            Row("number", "wheelbase", "rig.wheelbase_mm", "length"),
            Row("number", "front bias", "rig.front_bias_pct", "pct"),
            Row("number", "CG height", "rig.cg_height_mm", "length"),
            Row("number", "track", "rig.track_mm", "length"),
            Row("number", "front tyre dia", "rig.tire_dia_front_mm", "length"),
            Row("number", "rear tyre dia", "rig.tire_dia_rear_mm", "length"),
            Row("number", "front roll-out", "rig.rolling_dia_front_mm", "length", optional=True),
            Row("number", "rear roll-out", "rig.rolling_dia_rear_mm", "length", optional=True),
            Row("number", "f loss /100 g", "rig.rolling_dia_loss_front_mm_per_100g", "loss"),
            Row("number", "r loss /100 g", "rig.rolling_dia_loss_rear_mm_per_100g", "loss"),
            # unset: the roll moment splits by axle load (MODEL section 8)
            Row("number", "roll share F", "rig.roll_stiffness_front_pct", "pct", optional=True),
            # what every figure is computed for: the measured rig with its ballast
            Row("derived", "= with ballast", "mass_g", "mass"),
            Row("derived", "  front bias", "front_bias_pct", "pct"),
            Row("derived", "  CG height", "cg_height_mm", "length"),
            Row("derived", "  CG from rear", "cg_from_rear_mm", "length"),
            Row("heading", "Ballast")]
    for i, _item in enumerate(setup.rig.ballast):
        base = f"rig.ballast.{i}"
        # the name row is "#1" alone: the name itself gets the width to tell items apart
        rows += [Row("text", f"#{i + 1}", f"{base}.name", removable=True),
                 Row("number", f"#{i + 1} mass", f"{base}.mass_g", "mass", removable=True),
                 Row("number", f"#{i + 1} x from rear", f"{base}.x_mm", "length", removable=True),
                 Row("number", f"#{i + 1} z height", f"{base}.z_mm", "length", removable=True)]
    rows.append(Row("add_ballast", "+ add ballast item"))
    rows += [Row("heading", "Driveline"), Row("drive_mode", "set by", "driveline.mode")]
    d = setup.driveline
    if d.uses_stages:
        for side in ("front", "rear"):
            stages = getattr(d, f"{side}_stages")
            for j, _stage in enumerate(stages):
                key = f"driveline.{side}_stages.{j}"
                many = len(stages) > 1
                rows += [Row("number", f"{side} {j + 1} driver", f"{key}.0", "teeth", removable=many),
                         Row("number", f"{side} {j + 1} driven", f"{key}.1", "teeth", removable=many)]
            rows.append(Row("add_stage", f"+ add {side} stage", f"driveline.{side}_stages"))
    else:
        rows.append(Row("number", "overdrive", "driveline.overdrive_pct", "pct"))
    rows += [Row("heading", "Grip"),
             Row("number", "mu static", "grip.mu_static", "mu"),
             Row("number", "mu kinetic", "grip.mu_kinetic", "mu"),
             Row("number", "rolling resist", "grip.rolling_resistance", "rr"),
             Row("number", "front mu stat", "grip.front_mu_static", "mu", optional=True),
             Row("number", "front mu kin", "grip.front_mu_kinetic", "mu", optional=True),
             Row("number", "rear mu stat", "grip.rear_mu_static", "mu", optional=True),
             Row("number", "rear mu kin", "grip.rear_mu_kinetic", "mu", optional=True),
             Row("number", "slip stiffness", "grip.slip_stiffness", "stiff"),
             Row("number", "f slip stiff", "grip.front_slip_stiffness", "stiff", optional=True),
             Row("number", "r slip stiff", "grip.rear_slip_stiffness", "stiff", optional=True)]
    if setup.course is not None:
        rows += [Row("heading", "Course"),
                 Row("info", "course", "course.name"),
                 Row("number", "belly clearance", "course.belly_clearance_mm", "length")]
    rows += [Row("heading", "Setup"), Row("text", "name", "name"), Row("text", "notes", "notes")]
    return rows


def common_key(key: str) -> Optional[str]:
    """The key an unset optional key falls back to ("grip.front_mu_static" -> "grip.mu_static")."""
    if key in FALLBACK:
        return FALLBACK[key]
    for side in ("front_", "rear_"):
        if key.startswith("grip." + side):
            return "grip." + key[len("grip." + side):]
    return None


def get_value(setup: Setup, key: str):
    """Value at a dotted key; gear stage teeth are "driveline.front_stages.0.1"."""
    if key == "driveline.mode":
        return DRIVE_WORDS[setup.driveline.uses_stages]
    return setup.value(key)


def effective_value(setup: Setup, row: Row):
    """The value that computes: an unset axle override shows the common value."""
    value = get_value(setup, row.key)
    if value is None and row.optional:
        common = common_key(row.key)
        return None if common is None else setup.value(common)  # None: no fallback key
    return value


def _put(setup: Setup, key: str, value) -> Setup:
    parts = key.split(".")
    if parts[0] == "driveline" and parts[1] in ("front_stages", "rear_stages") and len(parts) == 4:
        j, k = int(parts[2]), int(parts[3])
        stages = [list(s) for s in getattr(setup.driveline, parts[1])]
        stages[j][k] = value
        return replace(setup, driveline=replace(setup.driveline, **{parts[1]: tuple(map(tuple, stages))}))
    return setup.with_value(key, value)


def _checked(setup: Setup, key: str, value) -> Edit:
    """Apply `value` at `key` if the loader's rules allow it; else keep `setup` and say why."""
    if key == "course.belly_clearance_mm" and not value > 0:
        return Edit(setup, "must be a number > 0 [mm]")
    if key in ("name", "notes") or key.endswith(".name"):
        if key.endswith("name") and not str(value).strip():
            return Edit(setup, "must not be empty")
        return Edit(_put(setup, key, value))
    problem = check_value(setup, key, value)
    if problem:
        return Edit(setup, problem)
    candidate = _put(setup, key, value)
    for _key, message in cross_field_problems(candidate):
        return Edit(setup, message)
    return Edit(candidate)


def _round(value: float) -> float:
    """Drop the float noise that repeated 0.05 steps leave behind."""
    return float(round(value, 6))


def step(setup: Setup, row: Row, count: int) -> Edit:
    """Move the value of `row` by `count` fine steps (negative: down)."""
    if row.kind == "drive_mode":
        return toggle_drive_mode(setup)
    if row.kind != "number":
        return Edit(setup)
    old = effective_value(setup, row)
    size = STEPS[row.quantity]
    if old == math.inf:  # a rigid tyre steps down from a very stiff one
        old = 100.0 + size * max(count, 0)
    if old is None:  # an unset share with no fallback starts from an even split
        old = 50.0 - size * count
    if row.quantity == "teeth":
        return _checked(setup, row.key, int(old) + int(size) * count)
    if row.quantity == "heading":  # round the circle: past +180 comes -175
        if abs(count) == COARSE:
            count = 9 if count > 0 else -9  # a coarse heading step is 45 deg: across, diagonals, down
        turned = (old + size * count + 180.0) % 360.0 - 180.0
        return _checked(setup, row.key, _round(180.0 if turned == -180.0 else turned))
    return _checked(setup, row.key, _round(old + size * count))


def parse_typed(row: Row, text: str, units: Units):
    """(metric value, None) from what was typed in display units, or (None, reason)."""
    text = text.strip()
    if row.kind == "text":
        return text, None
    if not text:
        return None, "type a number, Enter to set, Esc to cancel"
    if row.quantity == "stiff" and text.lower() in RIGID_WORDS:
        return math.inf, None
    try:
        shown = float(text)
    except ValueError:
        return None, f"{text!r} is not a number"
    if row.quantity == "teeth":
        if shown != int(shown):
            return None, f"{text} teeth: must be a whole number"
        return int(shown), None
    return units.to_metric(row.quantity, shown), None


def set_typed(setup: Setup, row: Row, text: str, units: Units) -> Edit:
    """Set `row` exactly to what was typed (display units)."""
    value, reason = parse_typed(row, text, units)
    if reason:
        return Edit(setup, reason)
    return _checked(setup, row.key, value)


def clear(setup: Setup, row: Row) -> Edit:
    """Unset a per-axle grip override: the axle uses the common value again."""
    if not row.optional or get_value(setup, row.key) is None:
        return Edit(setup)
    candidate = setup.with_value(row.key, None)
    for _key, message in cross_field_problems(candidate):
        return Edit(setup, message)
    return Edit(candidate, note=f"{row.label}: cleared, uses the common value")


def toggle_drive_mode(setup: Setup) -> Edit:
    """Switch between an overdrive percentage and gear stages that give the same ratio."""
    from slopetune.engine.overdrive import gear_overdrive_pct  # not on the way to the first frame

    d = setup.driveline
    if d.uses_stages:
        pct = round(gear_overdrive_pct(d.front_stages, d.rear_stages), 3)  # 0.001 %: far below any tyre
        new = replace(d, overdrive_pct=pct, front_stages=None, rear_stages=None)
        return Edit(replace(setup, driveline=new), note=f"overdrive set as {pct:g} % from the stages",
                    structural=True)
    pct = d.overdrive_pct or 0.0
    driven = max(1, round(_STAGE_BASE_TEETH * (1 + pct / 100.0)))
    new = replace(d, overdrive_pct=None, front_stages=((_STAGE_BASE_TEETH, _STAGE_BASE_TEETH),),
                  rear_stages=((_STAGE_BASE_TEETH, driven),))
    got = gear_overdrive_pct(new.front_stages, new.rear_stages)
    return Edit(replace(setup, driveline=new), structural=True,
                note=f"gear stages {_STAGE_BASE_TEETH}:{_STAGE_BASE_TEETH} front, "
                     f"{_STAGE_BASE_TEETH}:{driven} rear ({got:.2f} % overdrive)")


def add_ballast(setup: Setup) -> Edit:
    """A new zero-mass item at mid-wheelbase: harmless until its mass is stepped up."""
    rig = setup.rig
    n = len(rig.ballast) + 1
    item = BallastItem(f"item {n}", 0.0, _round(rig.wheelbase_mm / 2.0), _round(rig.cg_height_mm))
    new = setup.with_value("rig.ballast", rig.ballast + (item,))
    return Edit(new, note=f"ballast item #{n} added (0 g); step its mass", structural=True)


def add_stage(setup: Setup, row: Row) -> Edit:
    side = row.key.split(".")[1]
    stages = getattr(setup.driveline, side) + ((10, 10),)
    new = replace(setup, driveline=replace(setup.driveline, **{side: stages}))
    return Edit(new, note=f"{side.replace('_', ' ')[:-1]} {len(stages)} added (10:10, no change)", structural=True)


def remove(setup: Setup, row: Row) -> Edit:
    """Remove the ballast item or gear stage that `row` belongs to."""
    if not row.removable:
        return Edit(setup)
    parts = row.key.split(".")
    if parts[:2] == ["rig", "ballast"]:
        i = int(parts[2])
        item = setup.rig.ballast[i]
        items = setup.rig.ballast[:i] + setup.rig.ballast[i + 1:]
        candidate = setup.with_value("rig.ballast", items)
        for _key, message in cross_field_problems(candidate):
            return Edit(setup, f"cannot remove #{i + 1}: {message}")
        return Edit(candidate, note=f"ballast #{i + 1} {item.name!r} removed", structural=True)
    side, j = parts[1], int(parts[2])
    stages = getattr(setup.driveline, side)
    new = stages[:j] + stages[j + 1:]
    return Edit(replace(setup, driveline=replace(setup.driveline, **{side: new})), structural=True,
                note=f"{side.split('_')[0]} stage {j + 1} removed")


def activate(setup: Setup, row: Row) -> Edit:
    """What Enter does on a row that is not typed into."""
    if row.kind == "add_ballast":
        return add_ballast(setup)
    if row.kind == "add_stage":
        return add_stage(setup, row)
    if row.kind == "drive_mode":
        return step(setup, row, 1)
    return Edit(setup)


def hint(row: Row, inherited: bool, typing: bool) -> Optional[str]:
    """A few words on the keys that are not obvious, for the selected row (None: nothing to add)."""
    if typing:
        return "Enter sets, Esc cancels"
    if row.optional:
        return "= fallback; step to set" if inherited else "Del: back to the fallback"
    if row.kind == "text":
        return "Enter to edit" + (", Del removes it" if row.removable else "")
    if row.removable:
        return "Del removes this " + ("item" if row.key.startswith("rig.ballast") else "stage")
    if row.kind in ("add_ballast", "add_stage"):
        return "Enter adds"
    if row.kind == "drive_mode":
        return "Left/Right or Enter switch"
    if row.quantity == "stiff":
        return 'type "rigid" for no tyre slip'
    return None


def with_ballast(setup: Setup) -> dict[str, float]:
    """The rig that computes (measured rig plus ballast), by the engine's plain-Python sums:
    {"mass_g", "front_bias_pct", "cg_height_mm", "cg_from_rear_mm"}. [g, %, mm, mm]"""
    from slopetune.engine.ballast import combine_ballast  # no numpy: shown in the first frame

    mass, x, z = combine_ballast(setup.rig)
    return {"mass_g": mass, "front_bias_pct": 100.0 * x / setup.rig.wheelbase_mm, "cg_height_mm": z,
            "cg_from_rear_mm": x}


def shown_value(setup: Setup, row: Row, units: Units) -> tuple[str, str, bool]:
    """(value text, unit text, inherited) as the form shows them, in display units."""
    if row.kind == "derived":
        value = round(with_ballast(setup)[row.key], units.decimals(row.quantity))
        return units.number(row.quantity, value), units.unit(row.quantity), False
    if row.kind == "drive_mode":
        return get_value(setup, row.key), "", False
    if row.kind in ("text", "info"):
        return str(get_value(setup, row.key)), "", False
    if row.kind != "number":
        return "", "", False
    raw = get_value(setup, row.key)
    inherited = raw is None and row.optional
    value = effective_value(setup, row)
    if value is None:
        return "by load", "", inherited
    if value == math.inf:
        return "rigid", "", inherited
    return units.number(row.quantity, value), units.unit(row.quantity), inherited
