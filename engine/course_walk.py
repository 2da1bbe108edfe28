"""Walk a setup's course: pose, loads and slip state at each rear-wheel position, and the events.

The rig crawls forward along ``[course]`` (x increasing); at each position the tyres carry the
climb (gravity along the ground plus rolling resistance), with the setup's throttle acceleration
when its ``terrain.load`` is "climb" (as in `engine.analyse`). Positions are rear wheel-centre x
from the first course point until the front centre reaches the last one.

Events mark where a per-position state changes, at the first position in the new state: an axle
lifts or comes back down, the overdriven axle takes over as the one that lets go first
(handover) or hands back, the rig can no longer hold (both axles slip) or holds again, the belly
touches or clears.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade, traction-limited climbing).
.. [2] J. L. Meriam, L. G. Kraige, *Engineering Mechanics: Statics*, Wiley, ch. 3 (planar
   equilibrium).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np

from .analysis import effective_rig, setup_overdrive
from .contact_statics import solve_contacts
from .course_geometry import RigPose, place_rig
from .setup_file import SetupError
from .setup_model import Course, Setup
from .traction import BOTH, FRONT, LIFTED, NONE, REAR, STATES, TractionState

DEFAULT_STEP_MM = 5.0
MAX_POSITIONS = 200_000  # a typo in --step should not eat the memory


@dataclass(frozen=True)
class CourseEvent:
    """A change of state at position `index` (the first position in the new state)."""

    kind: str  # see EVENT_KINDS
    index: int
    rear_x_mm: float
    front_x_mm: float
    text: str


EVENT_KINDS = (
    "front_lifts", "front_down", "rear_lifts", "rear_down", "handover", "hand_back",
    "cannot_hold", "holds_again", "belly_touches", "belly_clear",
)


@dataclass(frozen=True)
class CourseWalk:
    """Per-position results (arrays over positions) and the events along the course."""

    setup: Setup
    course: Course
    overdriven: Optional[str]  # "front", "rear" or None
    step_mm: float
    pose: RigPose
    front_normal_g: np.ndarray  # [gf]
    rear_normal_g: np.ndarray
    traction: TractionState  # state codes, ground forces along each contact tangent [gf]
    events: tuple  # CourseEvent, in course order

    @property
    def rear_x_mm(self) -> np.ndarray:
        return self.pose.rear_centre_mm[:, 0]

    @property
    def belly_touch(self) -> np.ndarray:
        return self.pose.belly_clearance_mm <= 0

    @property
    def lifted(self) -> list[Optional[str]]:
        """Per position: "front", "rear" or None (as `engine.Sweep.lifted`; no front ground: "front")."""
        return [(None, "front", "rear")[c] for c in _lift_code(self.front_normal_g, self.rear_normal_g)]

    @property
    def slipping(self) -> list[str]:
        return [STATES[c] for c in self.traction.state]

    def __len__(self) -> int:
        return int(self.rear_x_mm.size)


def course_positions(setup: Setup, step_mm: float = DEFAULT_STEP_MM) -> np.ndarray:
    """Rear wheel-centre x of each position, every `step_mm`, front centre within the course. [mm]"""
    course = setup.course
    if course is None:
        raise SetupError("no [course] in this setup: add [course] with name, points_mm and belly_clearance_mm")
    if not (np.isfinite(step_mm) and step_mm > 0):
        raise SetupError(f"step must be a number > 0 [mm], not {step_mm!r}")
    r = setup.rig
    reach = float(np.hypot(r.wheelbase_mm, (r.tire_dia_front_mm - r.tire_dia_rear_mm) / 2.0))
    x0, x1 = course.points_mm[0][0], course.points_mm[-1][0]
    end = x1 - reach
    if end < x0:
        raise SetupError(
            f"course.points_mm: the course is {x1 - x0:g} mm long, shorter than the wheelbase "
            f"({r.wheelbase_mm:g} mm); the rig cannot stand on it")
    count = int(np.floor((end - x0) / step_mm + 1e-9)) + 1
    if count > MAX_POSITIONS:
        raise SetupError(f"step {step_mm:g} mm gives {count} positions; use a step of at least "
                         f"{(end - x0) / (MAX_POSITIONS - 1):.3g} mm")
    return x0 + step_mm * np.arange(count)


def walk_course(setup: Setup, step_mm: float = DEFAULT_STEP_MM, rear_x_mm=None) -> CourseWalk:
    """Place the rig at each position of the setup's course and solve the contact statics.

    Parameters
    ----------
    setup : Setup
        A setup with ``course`` set.
    step_mm : float, default 5
        Distance between positions. [mm]
    rear_x_mm : array_like, optional
        Explicit rear wheel-centre positions instead of the regular steps. [mm]

    Returns
    -------
    CourseWalk
        Positions where the front wheel cannot be placed have NaN values and the state "lifted".

    Raises
    ------
    SetupError
        No ``[course]``, a bad step, or a course shorter than the wheelbase.
    """
    xs = course_positions(setup, step_mm) if rear_x_mm is None else np.asarray(rear_x_mm, dtype=float).ravel()
    course = setup.course
    rig = effective_rig(setup)
    overdriven = setup_overdrive(setup).overdriven_axle
    pose = place_rig(
        course.points_mm, xs, rig.wheelbase_mm, rig.tire_dia_front_mm / 2.0, rig.tire_dia_rear_mm / 2.0,
        rig.cg_from_rear_mm, rig.cg_height_mm, course.belly_clearance_mm,
    )
    fs, fk, rs, rk = setup.grip.axle_mu()
    accel = setup.terrain.accel_g if setup.terrain.load == "climb" else 0.0
    loads = solve_contacts(
        rig.mass_g, pose.front_contact_mm - pose.cg_mm, pose.rear_contact_mm - pose.cg_mm,
        pose.front_angle_deg, pose.rear_angle_deg, pose.pitch_deg, (fs, fk), (rs, rk), overdriven,
        setup.grip.rolling_resistance, accel,
    )
    t = loads.traction
    unplaced = ~pose.placed
    traction = TractionState(
        state=np.where(unplaced, LIFTED, t.state).astype(np.int8),
        front_force_g=t.front_force_g, rear_force_g=t.rear_force_g,
        windup_g=t.windup_g, reserve_g=t.reserve_g,
    )
    events = find_events(
        traction.state, loads.front_normal_g, loads.rear_normal_g, pose.belly_clearance_mm <= 0,
        xs, pose.front_centre_mm[:, 0], overdriven,
    )
    return CourseWalk(setup, course, overdriven, float(step_mm), pose, loads.front_normal_g,
                      loads.rear_normal_g, traction, tuple(events))


def _lift_code(front_normal_g, rear_normal_g) -> np.ndarray:
    """0 on the ground, 1 front lifted, 2 rear lifted (NaN normals count as front lifted)."""
    front_up = ~(np.asarray(front_normal_g) > 0)
    return np.where(front_up, 1, np.where(np.asarray(rear_normal_g) > 0, 0, 2))


def state_words(code: int, overdriven: Optional[str]) -> str:
    """Plain words for a slip state code."""
    if code == NONE:
        return "both axles grip"
    if code == BOTH:
        return "both axles slip"
    if code == LIFTED:
        return "an axle is off the ground"
    axle = "front" if code == FRONT else "rear"
    other = "rear" if code == FRONT else "front"
    if overdriven == axle:
        return f"the overdriven {axle} lets go first, the {other} grips"
    return f"the {axle} lets go first (dragged), the {other} grips"


def find_events(state, front_normal_g, rear_normal_g, belly_touch, rear_x_mm, front_x_mm, overdriven):
    """Events where the per-position states change, in course order.

    Three channels change independently: lift (front / rear / none), slip state among the
    holding and both-slip states (compared with the last position on the ground), and belly
    contact. Each change is reported at the first position in the new state.
    """
    lift = _lift_code(front_normal_g, rear_normal_g)
    state = np.asarray(state)
    touch = np.asarray(belly_touch, dtype=bool)
    fast = {"front": FRONT, "rear": REAR}.get(overdriven)
    slow = {"front": REAR, "rear": FRONT}.get(overdriven)
    events = []

    def add(kind, i, text):
        events.append(CourseEvent(kind, int(i), float(rear_x_mm[i]), float(front_x_mm[i]), text))

    for i in np.flatnonzero(lift[1:] != lift[:-1]) + 1:
        before, now = lift[i - 1], lift[i]
        if before == 1:
            add("front_down", i, "the front is back on the ground")
        elif before == 2:
            add("rear_down", i, "the rear is back on the ground")
        if now == 1:
            add("front_lifts", i, "the front lifts: the rig tips over backwards")
        elif now == 2:
            add("rear_lifts", i, "the rear lifts: the rig tips over its nose")

    grounded = np.flatnonzero(lift == 0)
    if grounded.size:
        s = state[grounded]
        for k in np.flatnonzero(s[1:] != s[:-1]) + 1:
            i, before, now = grounded[k], s[k - 1], s[k]
            words = state_words(int(now), overdriven)
            if now == BOTH:
                add("cannot_hold", i, "cannot hold: both axles slip; the rig stalls or slides back")
            elif before == BOTH:
                add("holds_again", i, f"holds again: {words}")
            elif now == fast:
                add("handover", i, f"handover: {words}")
            elif now == slow:
                add("hand_back", i, f"hands back: {words}")

    for i in np.flatnonzero(touch[1:] != touch[:-1]) + 1:
        if touch[i]:
            add("belly_touches", i, "the belly touches: the rig high-centres")
        else:
            add("belly_clear", i, "the belly is clear again")

    events.sort(key=lambda e: (e.index, EVENT_KINDS.index(e.kind)))
    return events
