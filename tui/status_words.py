"""The status pane's words: what the analysis means at the setup's slope, in plain sentences.

Pure functions of an `engine.Analysis` (and a baseline one): no widget code, so the wording can be
tested on its own. The flag is a word ("SLIP FLAG", "STOP") as well as a colour. numpy and the
engine's traction states are imported on first use: the widgets import `StatusView` from here
before the first frame, which needs neither.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, NamedTuple, Optional

from .units import Units

if TYPE_CHECKING:
    from slopetune.engine import Analysis

# How far up or down the slope the flag looks for the overdriven axle becoming the one that slips.
LOOKAHEAD_DEG = 3.0
_LOOK_SAMPLES = 25  # every 0.25 deg over +-3 deg
OTHER = {"front": "rear", "rear": "front"}
# Named angles compared with a pinned baseline: (key in angles_deg, words).
COMPARED = (("handover", "handover"), ("max_grade", "max grade"), ("front_lift", "front lift"),
            ("balance", "balance"))


class StatusView(NamedTuple):
    level: str  # "ok", "warn" or "danger"
    flag: str  # the one line that carries the flag
    lines: tuple[str, ...]  # the plain-words status, one fact per line
    compare: Optional[str] = None  # how the named angles moved against the baseline


def handover_deg(analysis: Analysis) -> Optional[float]:
    """The handover of a steady climb (the named figure; the throttle does not move it)."""
    return analysis.angles_deg.get("handover")


class Here(NamedTuple):
    """The setup at one slope: its slip state, lifted axle and per-axle tyre figures."""

    state: str
    lifted: Optional[str]
    grip_used: tuple = (None, None)  # (front, rear) |F|/(mu_s N); None when lifted
    slip_pct: tuple = (None, None)  # (front, rear) kappa [%]; None on a sliding or lifted axle
    windup_g: Optional[float] = None


def _here_of(sweep) -> Here:
    """The first row of a sweep as a `Here`."""
    import math

    t = sweep.traction

    def num(x):
        x = float(x[0])
        return x if math.isfinite(x) else None

    return Here(sweep.slipping[0], sweep.lifted[0], (num(t.front_grip_used), num(t.rear_grip_used)),
                (num(t.front_slip_pct), num(t.rear_slip_pct)), num(t.windup_g))


def here_at(analysis: Analysis, slope_deg: float) -> Here:
    """The setup's state and tyre figures at one slope, from one evaluation."""
    import numpy as np

    return _here_of(analysis.at(np.array([slope_deg])))


class Look(NamedTuple):
    """The setup at one slope and the slip states around it, within +-LOOKAHEAD_DEG."""

    here: Here
    window_deg: object  # _LOOK_SAMPLES slopes, evenly spaced over the window [deg]
    states: object  # the traction state code at each of them


def look_at(analysis: Analysis, slope_deg: float) -> Look:
    """`here_at` and the look-ahead window in one evaluation: each slope's slip solve is its own,
    so solving them together gives what solving them apart would, with one call per key."""
    import numpy as np

    lo, hi = max(-90.0, slope_deg - LOOKAHEAD_DEG), min(90.0, slope_deg + LOOKAHEAD_DEG)
    window = np.linspace(lo, hi, _LOOK_SAMPLES)
    sweep = analysis.at(np.concatenate(([slope_deg], window)))
    return Look(_here_of(sweep), window, sweep.traction.state[1:])


def _nearest_fast_slip(analysis: Analysis, slope_deg: float, fast: str, look: Look) -> Optional[float]:
    """The nearest slope within +-LOOKAHEAD_DEG where the overdriven axle lets go first, else None."""
    import numpy as np

    from slopetune.engine import STATES

    window = look.window_deg
    hits = window[look.states == STATES.index(fast)]
    handover = handover_deg(analysis)
    if handover is not None and window[0] <= handover <= window[-1]:
        hits = np.append(hits, handover)  # the exact crossing, when it lies in the window
    if hits.size == 0:
        return None
    return float(hits[np.argmin(np.abs(hits - slope_deg))])


def flag_line(analysis: Analysis, slope_deg: float, units: Units,
              look: Optional[Look] = None) -> tuple[str, str]:
    """(level, words) of the flag at `slope_deg` (`look`: `look_at` of it, when already known)."""
    look = look or look_at(analysis, slope_deg)
    here, axle = look.here[:2]
    at = units.slope(slope_deg)
    if here == "lifted":
        tips = "flips backwards" if axle == "front" else "tips forwards"
        return "danger", f"STOP: {axle} axle lifts at {at}; the rig {tips}"
    if here == "both":
        return "danger", f"STOP: both axles slip at {at}; the rig cannot hold this grade"
    fast = analysis.overdrive.overdriven_axle
    if fast is None:
        return "ok", "OK: no overdrive, no wind-up; nothing fights the grip"
    if here == fast:
        return "warn", f"SLIP FLAG: overdriven {fast} lets go first here, at {at}"
    near = _nearest_fast_slip(analysis, slope_deg, fast, look)
    if near is not None:
        way = "up" if near > slope_deg else "down"
        return "warn", (f"SLIP FLAG: overdriven {fast} lets go first from {units.angle(near)}"
                        f" ({units.angle(abs(near - slope_deg))} {way})")
    if here == "none":
        return "ok", f"OK: both axles grip here; the tyres carry the {fast} overdrive as slip"
    return "ok", f"OK: {OTHER[fast]} lets go first here; overdriven {fast} keeps its grip"


def _overdrive_line(analysis: Analysis, units: Units) -> str:
    od = analysis.overdrive
    # the tyres' share of the mismatch, from roll-out diameters when measured (what the ground sees)
    tyres = ((1 + od.effective_pct / 100) / (1 + od.gear_pct / 100) - 1) * 100
    parts = f"gears {od.gear_pct:+.1f}%, tyres {tyres:+.1f}%"
    if od.overdriven_axle is None:
        return f"No overdrive ({parts})"
    return f"{od.overdriven_axle.capitalize()} OD {abs(od.effective_pct):.1f}% ({parts})"


def off_straight(analysis: Analysis) -> bool:
    """True when the setup's heading is not straight up the face: the sweep and the verdict follow
    the heading (MODEL section 8), the named angles stay those of a straight climb."""
    return float(analysis.setup.terrain.heading_deg) % 360.0 != 0.0


def _here_line(analysis: Analysis, slope_deg: float, units: Units, here: Here) -> str:
    here, axle = here[:2]
    if off_straight(analysis):
        from .heading_words import wrap_heading

        how = f"on heading {round(wrap_heading(analysis.setup.terrain.heading_deg), 1) + 0.0:+g}{units.deg}"
    else:
        how = "climbing"
    how += f", throttle {analysis.accel_g:+g} g" if analysis.accel_g else ""
    head = f"At {units.slope(slope_deg)} {how}: "
    if here in ("front", "rear"):
        return head + f"{here} lets go, {OTHER[here]} holds"
    if here == "none":
        return head + "both axles grip"
    if here == "both":
        return head + "both axles slip"
    return head + f"{axle} axle off the ground"


STRAIGHT_UP = "straight up"  # what a named angle is for when the heading is not (see `off_straight`)


def _away(angle: float, slope_deg: float, units: Units, above: str, below: str) -> str:
    gap = angle - slope_deg
    if abs(gap) < 0.05:
        return "here"
    return f"{units.angle(abs(gap))} {above if gap > 0 else below}"


def grip_line(here: Here) -> str:
    """Grip used and slip of each axle, in words and figures (not only colour)."""
    if here.state == "lifted":
        return "Grip: an axle is off the ground"
    parts = []
    for name, used, slip in zip(("front", "rear"), here.grip_used, here.slip_pct):
        if used is None:
            continue
        what = "sliding" if slip is None else f"slip {slip:+.1f}%"
        parts.append(f"{name} {100 * used:.0f}% {what}")
    text = "Grip " + ", ".join(parts)
    if here.windup_g is not None and here.state == "none" and abs(here.windup_g) >= 0.5:
        text += f"; wind-up {abs(here.windup_g):.0f} g"
    return text


def _handover_line(analysis: Analysis, slope_deg: float, units: Units) -> str:
    h = handover_deg(analysis)
    od = analysis.overdrive
    if od.overdriven_axle is None:
        return "Handover: none (no overdrive)"
    amount = f"{abs(od.effective_pct):.1f}% OD"
    if h is None:
        return f"Handover: none below max grade at {amount}" + (f", {STRAIGHT_UP}" if off_straight(analysis) else "")
    if off_straight(analysis):
        return f"Handover {units.angle(h)} at {amount}, {STRAIGHT_UP}"
    return f"Handover {units.angle(h)} at {amount}, " + _away(h, slope_deg, units, "up", "down")


def stiffness_text(c) -> str:
    """A slip stiffness in words: "rigid" or the number (per axle when they differ)."""
    import math

    if isinstance(c, tuple):
        return "/".join(stiffness_text(x) for x in c)
    return "rigid" if math.isinf(c) else f"{c:g}"


def sensitivity_line(analysis: Analysis, units: Units) -> Optional[str]:
    """How the handover depends on the slip stiffness: softer, stiffer and rigid tyres (None with
    no overdrive: there is no handover to move)."""
    if analysis.overdrive.overdriven_axle is None or analysis.setup.grip.rigid:
        return None  # no handover to move, or already the rigid worst case
    parts = []
    for label, (c, ang) in analysis.stiffness_sensitivity().items():
        h = ang["handover"]
        name = "rigid" if label == "rigid" else f"c={stiffness_text(c)}"
        parts.append(f"{name}: {'none' if h is None else units.angle(h)}")
    if not parts:
        return "Handover: rigid tyres, no slip (the worst case)"
    return "Handover if " + ", ".join(parts)


def scrub_band_line(analysis: Analysis, units: Units) -> Optional[str]:
    """Once a scrub starts it lasts over a wider range (kinetic < static friction)."""
    bands = analysis.scrub_bands()
    parts = [f"{axle} {units.angle(lo)} to {units.angle(hi)}" for axle, band in bands.items()
             if band is not None for lo, hi in [band]]
    if not parts:
        return None
    return "Once started, a scrub lasts: " + "; ".join(parts)


def slip_lines(analysis: Analysis, units: Units = Units(ascii_only=True)) -> list[str]:
    """The tyre-slip figures of a report beside the angles: how long a scrub persists once started."""
    band = scrub_band_line(analysis, units)
    if band is None:
        return []
    return [band, "  (kinetic friction is below static: roll back a little to unwind between ramp runs)"]


def _max_grade_line(analysis: Analysis, slope_deg: float, units: Units) -> str:
    m = analysis.angles_deg["max_grade"]
    if m >= 90.0:
        return f"Max grade: holds all the way to {units.angle(90)}"
    if off_straight(analysis):
        return f"Max grade {units.angle(m)} {STRAIGHT_UP}, ends by {analysis.max_grade_limit}"
    gap = m - slope_deg
    where = f"{units.angle(gap)} to go" if gap >= 0 else f"{units.angle(-gap)} past it"
    return f"Max grade {units.angle(m)}, ends by {analysis.max_grade_limit}; {where}"


def _lift_line(analysis: Analysis, slope_deg: float, units: Units) -> str:
    a = analysis.angles_deg
    if slope_deg < 0 and a.get("rear_lift") is not None and not off_straight(analysis):
        rl = a["rear_lift"]
        return f"Rear lift {units.angle(rl)}, margin {units.angle(slope_deg - rl)}"
    fl = a.get("front_lift")
    if fl is None:
        return f"Front lift: none below {units.angle(90)}"
    if off_straight(analysis):
        return f"Front lift {units.angle(fl)} {STRAIGHT_UP}"
    return f"Front lift {units.angle(fl)}, margin {units.angle(fl - slope_deg)}"


def _sidehill_line(analysis: Analysis, units: Units) -> str:
    a = analysis.angles_deg
    # the slide figure holds with the driveline unwound (MODEL section 2): say so
    return (f"Sidehill roll {units.angle(a['sidehill_roll'])}, slide {units.angle(a['sidehill_slide'])}"
            " unwound")


def compare_line(analysis: Analysis, baseline: Analysis, units: Units) -> str:
    """How each named angle moved from the baseline, e.g. "handover +3.1 deg"."""
    parts = []
    for key, words in COMPARED:
        now, was = analysis.angles_deg.get(key), baseline.angles_deg.get(key)
        if now is None and was is None:
            continue
        if now is None:
            parts.append(f"{words} gone")
        elif was is None:
            parts.append(f"{words} new {units.angle(now)}")
        else:
            parts.append(f"{words} {units.angle(now - was, signed=True)}")
    return "vs baseline: " + (", ".join(parts) if parts else "no named angles")


def status_view(analysis: Analysis, units: Units, baseline: Optional[Analysis] = None) -> StatusView:
    """Everything the status pane shows for `analysis` at the setup's slope."""
    slope = float(analysis.setup.terrain.slope_deg)
    look = look_at(analysis, slope)
    here = look.here
    level, flag = flag_line(analysis, slope, units, look)
    lines = tuple(line for line in (
        _overdrive_line(analysis, units),
        _here_line(analysis, slope, units, here),
        grip_line(here),
        _handover_line(analysis, slope, units),
        sensitivity_line(analysis, units),
        _max_grade_line(analysis, slope, units),
        _lift_line(analysis, slope, units),
        _sidehill_line(analysis, units),
    ) if line is not None)
    compare = compare_line(analysis, baseline, units) if baseline is not None else None
    return StatusView(level, flag, lines, compare)
