"""Plain words for the off-camber results, shared by `slopetune headings` and the tuner.

Pure functions of an `engine.heading_sweep.HeadingSweep`; no widget code.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from .units import Units

if TYPE_CHECKING:
    from slopetune.engine.heading_sweep import HeadingSweep

WHEEL_WORDS = {"front_left": "front left", "front_right": "front right", "rear_left": "rear left",
               "rear_right": "rear right"}
LIMIT_SHORT = {"none": "-", "tip": "tips over", "lift": "an axle lifts", "slide": "slides sideways",
               "crab": "crabs and lets go", "slip": "slips"}
LIMIT_LONG = {
    "none": "nothing stops it below 90",
    "tip": "it tips over sideways",
    "lift": "an axle lifts and it flips over an end",
    "slide": "it slides sideways",
    "crab": "the scrubbing axle crabs downhill and lets go sideways",
    "slip": "the tyres cannot hold the line",
}
CAUTION = ("Static model on a flat plane, steady travel (no throttle punch); real faces are rough and "
           "the rig is not rigid. Track taken at the tyre centres: the real pivot is the outer edge of "
           "the downhill tyre and soft springs lean the chassis downhill, so real rigs go over sooner. "
           "Keep hands clear on the bench.")


def wrap_heading(deg: float) -> float:
    """A heading in (−180, 180]. [deg]"""
    w = (float(deg) + 180.0) % 360.0 - 180.0
    return 180.0 if w == -180.0 else w + 0.0


def heading_label(deg: float) -> str:
    """Where the rig points on the face, in words."""
    w = wrap_heading(deg)
    side = "left side high" if w > 0 else "right side high"
    if w == 0:
        return "straight up"
    if w == 180:
        return "straight down"
    if abs(w) == 90:
        return f"across, {'left' if w > 0 else 'right'} side uphill"
    return f"{'diagonal up' if abs(w) < 90 else 'diagonal down'}, {side}"


def heading_label_short(deg: float) -> str:
    """`heading_label` in at most 16 cells."""
    w = wrap_heading(deg)
    if w in (0.0, 180.0):
        return heading_label(w)
    side = "left" if w > 0 else "right"
    if abs(w) == 90:
        return f"across, {side} up"
    return f"{'up' if abs(w) < 90 else 'down'}, {side} high"


def heading_text(deg: float, units: Units) -> str:
    w = wrap_heading(deg)
    return f"{w:+g}{units.deg}" if w not in (0.0, 180.0) else f"{w:g}{units.deg}"


def light_wheel_line(hs: HeadingSweep, units: Units) -> str:
    """One line naming the light wheel(s) (or saying the rig has tipped)."""
    from slopetune.engine.off_camber import WHEELS

    if bool(hs.wheels.tipped):
        return "Tipped: the CG's gravity line falls outside the wheels at this slope and heading"
    loads = [float(v) for v in hs.wheels.as_array()]
    lifted = int(hs.wheels.lifted)
    if lifted >= 0:
        return (f"{WHEEL_WORDS[WHEELS[lifted]].capitalize()} wheel is off the ground (rocks onto three "
                "wheels; depends on the roll-stiffness share)")
    low = min(loads)
    light = [WHEEL_WORDS[WHEELS[i]] for i in range(4) if loads[i] - low < 0.5]
    if len(light) == 2 and light[0].split()[0] == light[1].split()[0]:
        return f"Light wheels: both {light[0].split()[0]} ({units.force(low)} each)"
    if len(light) == 2 and light[0].split()[1] == light[1].split()[1]:
        return f"Light wheels: both {light[0].split()[1]} ({units.force(low)} each)"
    return f"Light wheel: {light[0]}, {units.force(low)}"


def here_line(setup, units: Units, short: bool = False) -> str:
    """What the rig does at the setup's own slope and heading (steady), in words (`short`: under
    78 cells, without the slope and heading, which the screen's title shows)."""
    from slopetune.engine.heading_sweep import LIMITS, PlaneModel, plane_pose
    from slopetune.engine.traction import STATES

    model = PlaneModel(setup)
    slope, heading = plane_pose(setup.terrain.slope_deg, setup.terrain.heading_deg)
    where = "Here" if short else f"At {slope:g}{units.deg}, heading {heading_text(heading, units)}"
    code = LIMITS[int(model.classify(slope, heading))]
    if code != "none":
        return f"{where}: {LIMIT_LONG[code]}"
    _nf, _nr, t, st = model.traction(slope, heading)
    state = STATES[int(st)]
    if state in ("front", "rear"):
        other = "rear" if state == "front" else "front"
        crab = " and crabs downhill" if float(t) > 0 else ""
        return f"{where}: holds its line; the {state} scrubs{crab}, the {other} grips"
    return f"{where}: holds its line, both axles grip"


def _runs(mask: list[bool], headings: list[float]) -> list[tuple[float, float]]:
    """Contiguous runs of True around the circle, as (first, last) headings."""
    n = len(mask)
    if all(mask):
        return [(headings[0], headings[-1])]
    start = next(i for i in range(n) if not mask[i])  # begin on a gap so runs do not split at 0
    out, run = [], None
    for k in range(1, n + 1):
        i = (start + k) % n
        if mask[i] and run is None:
            run = [i, i]
        elif mask[i]:
            run[1] = i
        elif run is not None:
            out.append((headings[run[0]], headings[run[1]]))
            run = None
    if run is not None:
        out.append((headings[run[0]], headings[run[1]]))
    return out


def summary_lines(hs: HeadingSweep, units: Units, short: bool = False) -> list[str]:
    """The worst heading, the best line up the face and which headings hold the setup's slope
    (`short`: a line each within 78 cells, for the tuner)."""
    from slopetune.engine.heading_sweep import LIMITS

    d = units.deg
    words = LIMIT_SHORT if short else LIMIT_LONG
    label = heading_label_short if short else heading_label
    out = []
    w = hs.worst()
    h = heading_text(hs.heading_deg[w], units)
    if short:
        out.append(f"Worst {h} ({label(hs.heading_deg[w])}): holds to {hs.hold_deg[w]:.1f}{d}, then "
                   f"{words[LIMITS[hs.hold_limit[w]]]}")
    else:
        out.append(f"Worst heading: {h} ({label(hs.heading_deg[w])}), holds only to {hs.hold_deg[w]:.1f}{d}: "
                   f"{words[LIMITS[hs.hold_limit[w]]]}")
    b = hs.best_climb()
    if b is not None:
        lead = "Best line up:" if short else "Best line up the face:"
        out.append(f"{lead} {heading_text(hs.heading_deg[b], units)} ({label(hs.heading_deg[b])}), "
                   f"holds to {hs.hold_deg[b]:.1f}{d}, then {words[LIMITS[hs.hold_limit[b]]]}")
    slope = hs.slope_deg
    heads = [wrap_heading(h) for h in hs.heading_deg.tolist()]
    ok = [bool(v >= abs(slope)) for v in hs.hold_deg]
    if not any(ok):
        out.append(f"At {slope:g}{d} it holds its line at none of these headings")
    elif all(ok):
        out.append(f"At {slope:g}{d} it holds its line at every heading")
    else:
        runs = ", ".join(f"{a:+g}" if a == b_ else f"{a:+g}..{b_:+g}" if a < b_ else f"{a:+g}..180..{b_:+g}"
                         for a, b_ in _runs(ok, heads))
        out.append(f"At {slope:g}{d} it holds its line at headings {runs}{d}")
    return out


def margins_line(hs: HeadingSweep, units: Units) -> str:
    """Force-angle margin to the two nearest edges."""
    from slopetune.engine.off_camber import EDGES

    parts = sorted(zip(hs.margins_deg.tolist(), EDGES))
    return "Tip margin: " + ", ".join(f"{m:.1f}{units.deg} before the {e} wheels lift" for m, e in parts[:2])


def light_wheel_short(hs: HeadingSweep, units: Units) -> str:
    """The light wheel in a few words, for the top view (about 26 cells)."""
    from slopetune.engine.off_camber import WHEELS

    if bool(hs.wheels.tipped):
        return "TIPPED: over the edge"
    lifted = int(hs.wheels.lifted)
    if lifted >= 0:
        return f"Lifted: {WHEEL_WORDS[WHEELS[lifted]]}"
    loads = [float(v) for v in hs.wheels.as_array()]
    low = min(loads)
    light = [WHEEL_WORDS[WHEELS[i]] for i in range(4) if loads[i] - low < 0.5]
    if len(light) == 2:
        a, b = light[0].split(), light[1].split()
        pair = a[0] if a[0] == b[0] else a[1] if a[1] == b[1] else None
        if pair:
            return f"Light: both {pair}"
    return f"Light: {light[0]} wheel"
