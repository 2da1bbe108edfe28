"""Plain-words verdict of an analysis at the setup's slope, shared by `report` and the tuner.

Each line has a level: "info", "watch" (the overdriven axle is, or within a few degrees becomes,
the one likely to slip) or "alarm" (the rig cannot hold the grade, or an axle lifts). The words
carry the meaning on their own; colour only repeats it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

from engine import Analysis

WATCH_WITHIN_DEG = 3.0
LEVELS = ("info", "watch", "alarm")


@dataclass(frozen=True)
class VerdictLine:
    level: str
    text: str


def deg(x: Optional[float]) -> str:
    return "-" if x is None else f"{x:.1f}°"


def overdrive_words(a: Analysis, ascii_only: bool = False) -> str:
    od, r = a.overdrive, a.rig
    tyres = f"tyres {r.tire_dia_front_mm:g}/{r.tire_dia_rear_mm:g} mm"
    gears = f"gears {od.gear_pct:+.1f}%"
    if od.overdriven_axle is None:
        return f"No overdrive: both axles run at one speed ({gears}, {tyres})"
    return f"{od.overdriven_axle.capitalize()} overdriven {abs(od.effective_pct):.1f}% ({gears}, {tyres})"


def _state_words(code: str, overdriven: Optional[str]) -> str:
    if code == "none":
        return "nothing slips; both axles grip"
    if code == "both":
        return "both axles slip: the rig cannot hold this grade"
    if code == "lifted":
        return "an axle is off the ground"
    other = "rear" if code == "front" else "front"
    who = "overdriven " if code == overdriven else ""
    return f"the {who}{code} lets go first, the {other} grips"


def verdict(a: Analysis, slope_deg: Optional[float] = None, ascii_only: bool = False) -> list[VerdictLine]:
    """Verdict lines at `slope_deg` (default the setup's own slope), most urgent first."""
    d = " deg" if ascii_only else "°"
    fmt = (lambda x: "-" if x is None else f"{x:.1f}{d}")
    slope = a.setup.terrain.slope_deg if slope_deg is None else slope_deg
    here = a.at([slope])
    code = here.slipping[0]
    lifted = here.lifted[0]
    od = a.overdrive.overdriven_axle
    ang = a.angles_deg
    load = "steady climb" if a.load == "climb" else "no load"
    if a.load == "climb" and a.accel_g:
        load += f" + {a.accel_g:g} g throttle"
    lines: list[VerdictLine] = []

    if lifted:
        flip = "over backwards" if lifted == "front" else "over its nose"
        lines.append(VerdictLine("alarm", f"!! {lifted.upper()} LIFTS at {fmt(slope)}: the rig tips {flip}"))
    elif code == "both":
        lines.append(VerdictLine("alarm", f"!! CANNOT HOLD {fmt(slope)}: both axles slip ({load})"))
    elif od is not None and code == od:
        lines.append(VerdictLine("watch", f"! OVERDRIVEN {od.upper()} SLIPS FIRST at {fmt(slope)} ({load})"))
    elif od is not None and ang["handover"] is not None and 0 <= ang["handover"] - slope <= WATCH_WITHIN_DEG:
        lines.append(VerdictLine(
            "watch", f"! overdriven {od} takes over the slip within {ang['handover'] - slope:.1f}{d}"))

    lines.append(VerdictLine("info", overdrive_words(a, ascii_only)))
    lines.append(VerdictLine("info", f"At {fmt(slope)} ({load}): {_state_words(code, od)}"))
    if od is None:
        lines.append(VerdictLine("info", "Handover: none (no overdrive, no wind-up)"))
    elif ang["handover"] is None:
        lines.append(VerdictLine("info", f"Handover: the overdriven {od} never slips first below 90{d}"))
    else:
        gap = ang["handover"] - slope
        where = "below" if gap < 0 else "above"
        lines.append(VerdictLine(
            "info", f"Handover to the {od} at {fmt(ang['handover'])}, {abs(gap):.1f}{d} {where} this slope"))
    mg = ang["max_grade"]
    spare = mg - slope
    lines.append(VerdictLine(
        "info", f"Max grade {fmt(mg)} (ends by {a.max_grade_limit}), "
                + (f"{spare:.1f}{d} to spare" if spare >= 0 else f"{-spare:.1f}{d} past it")))
    fl = ang["front_lift"]
    if fl is not None:
        lines.append(VerdictLine("info", f"Front lifts at {fmt(fl)}, margin {fl - slope:.1f}{d}"))
    lines.append(VerdictLine("info", f"Sidehill roll at {fmt(ang['sidehill_roll'])}"))
    return lines
