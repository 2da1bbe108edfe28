"""What to change for the current verdict: the planner's smallest change of each lever the setup has.

Pure functions (no widgets): `fixes_for(setup, analysis)` picks the target the flag is about and
asks `engine.goal_seek.plan` once per lever. It costs tens of planner runs (about 1 ms each here,
several times that on a Pi), so the tuner calls it in a worker once the keys have paused, never
in a key handler.

- SLIP FLAG (the overdriven axle lets go first here or within the look-ahead): move the handover
  above the slope and the look-ahead, so the flag clears.
- STOP, an axle lifts (front on a climb): the front lift angle above the slope by a margin.
- STOP, both axles slip: the max grade above the slope.
"""

from __future__ import annotations

from typing import NamedTuple, Optional

from slopetune.engine import Analysis, Setup

from .status_words import LOOKAHEAD_DEG, off_straight, flag_line, look_at
from .units import Units

MARGIN_DEG = 1.0  # past the look-ahead (slip) or the slope (lift, grip): clear of the boundary


class Fix(NamedTuple):
    kind: str  # the planner's lever kind: "ballast", "cg-height", "overdrive", "move"
    words: str  # e.g. "+42 g at the front axle"
    setup: Setup  # the setup with the change applied


class Fixes(NamedTuple):
    target: object  # engine.goal_seek.Target the fixes reach
    fixes: tuple[Fix, ...]
    place: tuple[float, float]  # (x, z) of the added ballast at the front axle [mm]
    # the setup runs on a heading: the flag follows it, the target is the straight climb's angle
    # (the planner has no heading targets), and the line says so
    straight_climb: bool = False

    def line(self, ascii_only: bool = False) -> str:
        """One line for the status pane: the fixes, or that no one change reaches the target."""
        head = "Fix (f, for a straight climb): " if self.straight_climb else "Fix (f): "
        if not self.fixes:
            t = self.target
            return f"{head}no one change reaches {t.angle} {t.op} {t.value_deg:g}"
        sep = "; " if ascii_only else " \u00b7 "
        return head + sep.join(f.words for f in self.fixes)


def target_for(analysis: Analysis):
    """The target that clears the current verdict at the setup's slope, or None when it is OK."""
    from slopetune.engine.goal_seek import Target

    slope = float(analysis.setup.terrain.slope_deg)
    look = look_at(analysis, slope)
    if flag_line(analysis, slope, Units(ascii_only=True), look)[0] == "ok":
        return None  # the flag is down (e.g. on a heading where the straight climb's handover is near)
    here, axle = look.here[:2]
    if here == "lifted":
        return Target("front_lift", ">=", round(slope + MARGIN_DEG, 1)) if axle == "front" else None
    if here == "both":
        return Target("max_grade", ">=", round(min(slope + MARGIN_DEG, 90.0), 1))
    fast = analysis.overdrive.overdriven_axle
    if fast is None:
        return None
    name = "handover"  # the named figure: a steady climb
    handover = analysis.angles_deg.get(name)
    need = slope + LOOKAHEAD_DEG + MARGIN_DEG
    if handover is not None and handover >= need:
        return None
    if here != fast and handover is None:
        return None
    return Target(name, ">=", round(min(need, 90.0), 1))


def _words(kind: str, p, units: Units) -> str:
    if kind == "ballast":
        return f"{'+' if p.value >= 0 else '-'}{units.force(abs(p.value))} at the front axle"
    if kind == "cg-height":
        return f"CG {p.value:+.0f} mm" if abs(p.value) >= 0.5 else f"CG {p.value:+.1f} mm"
    if kind == "overdrive":
        return f"overdrive {p.value:.1f} %"
    return f"item {p.lever.index + 1} to x {p.value:.0f} mm"


def fixes_for(setup: Setup, analysis: Analysis, units: Units) -> Optional[Fixes]:
    """The smallest change of each lever that reaches the verdict's target; None when all is OK."""
    from slopetune.engine.goal_seek import AddBallast, CgHeight, LeverError, MoveBallast, Overdrive, plan

    target = target_for(analysis)
    if target is None:
        return None
    rig = setup.rig
    place = (float(rig.wheelbase_mm), round(rig.tire_dia_front_mm / 2.0, 1))  # on the front axle
    levers = [("ballast", AddBallast(*place)), ("cg-height", CgHeight())]
    if not setup.driveline.uses_stages:
        levers.append(("overdrive", Overdrive()))
    heaviest = max(range(len(rig.ballast)), key=lambda i: rig.ballast[i].mass_g, default=None)
    if heaviest is not None and rig.ballast[heaviest].mass_g > 0:
        levers.append(("move", MoveBallast(heaviest)))
    found = []
    for kind, lever in levers:
        try:
            p = plan(setup, target, lever)
        except LeverError:
            continue
        if p.reached and not p.already_met and p.value != p.start_value:
            found.append(Fix(kind, _words(kind, p, units), p.setup))
    if target.angle.startswith("handover") and not any(f.kind == "overdrive" for f in found):
        # Past the reach of every lever, the sure fix for the slip flag is no wind-up at all: the
        # gear overdrive that matches the tyres' ground speeds (then no axle is overdriven).
        lever = Overdrive()
        even = lever.extra_samples(setup)[0]
        if setup.driveline.uses_stages:
            found.append(Fix("overdrive", f"gears for {even:.1f} % overdrive (no wind-up)", lever.apply(setup, even)))
        else:
            found.append(Fix("overdrive", f"overdrive {even:.1f} % (no wind-up)", lever.apply(setup, even)))
    return Fixes(target, tuple(found), place, straight_climb=off_straight(analysis))
