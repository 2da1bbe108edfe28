"""Walk a rig over a course: pose, path ratio, loads, tyre slip and state per position, and events.

The rig crawls forward along a course (x increasing); at each position the tyres carry the
climb (gravity along the ground plus rolling resistance) with the setup's throttle acceleration.
Positions are rear wheel-centre x from the first course point until the front centre reaches the
last one. The course is the setup's own ``[course]`` or one given separately (a course file).

Per position: the pose (`engine.course_geometry`), the path ratio ``ρ`` and pitch rate of the two
wheel centres, the driveline's speed ratio ``K = g D_f(N_f)/D_r(N_r)`` with the rolling diameters
under this position's loads, and the two-contact statics with tyre slip at that K
(`engine.course_loads`: a fixed point, as the loads depend on ``K`` through the tyre forces; the
state is the onset from a gripping start, MODEL §5: both grip wherever the gripping solution
reproduces its own K without saturating an axle). The
axle that is overdriven at a place is the one on its side of
``s_f/s_r = (K + (g − 1) r_f dφ/ds_r)/ρ = 1``, not the one the gears favour: where the front centre
climbs faster than the rear (``ρ > K``) an overdriven front is kinematically underdriven and the
wind-up reverses.

A tyre sitting in a V (touching two faces) has two contacts: that pose is outside this model and
is reported as such (state ``outside``), never solved with one face.

The positions are walked in chunks sized so that positions × terrain points in view stays under a
fixed budget: memory follows the course's size, not the product.

Events mark where a per-position state changes, at the first position in the new state.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade, traction-limited climbing).
.. [2] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, ch. 3 (rolling radius, brush model).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

import numpy as np

from .analysis import effective_rig, setup_overdrive
from .contact_rigid import BINDS
from .overdrive import SAME_SPEED_TOL
from .contact_statics import ContactLoads, CourseTraction
from .course_loads import solve_loads
from .course_geometry import RigPose, concat_poses, place_rig, rig_paths, vertices_within
from .setup_file import SetupError
from .setup_model import Course, Setup
from .traction import BOTH, FRONT, LIFTED, NONE, STATES

DEFAULT_STEP_MM = 5.0
MAX_POSITIONS = 200_000  # a typo in --step should not eat the memory
CHUNK_ELEMENTS = 1 << 18  # positions × terrain points in view, per chunk (2 MiB per float array)
OUTSIDE = len(STATES)  # course only: a tyre in a V, or the front jammed against a wall
WALK_STATES = STATES + ("outside",)


@dataclass(frozen=True)
class CourseEvent:
    """A change of state at position `index` (the first position in the new state)."""

    kind: str  # see EVENT_KINDS
    index: int
    rear_x_mm: float
    front_x_mm: float
    text: str


EVENT_KINDS = (
    "front_lifts", "front_down", "rear_lifts", "rear_down", "outside_model", "inside_model",
    "windup_reverses", "handover", "hand_back", "both_grip", "cannot_hold", "holds_again", "binds",
    "unbinds", "belly_touches", "belly_clear",
)


@dataclass(frozen=True)
class CourseWalk:
    """Per-position results (arrays over positions) and the events along the course."""

    setup: Setup
    course: Course
    overdriven: Optional[str]  # by gears and tyre sizes alone: "front", "rear" or None
    step_mm: float
    pose: RigPose
    front_normal_g: np.ndarray  # [gf]
    rear_normal_g: np.ndarray
    traction: CourseTraction  # state codes into WALK_STATES, tyre forces along each tangent [gf]
    speed_ratio: np.ndarray  # K at each position's loads [-]
    mismatch: np.ndarray  # s_f/s_r with the rear rolling: (K + pitch term)/ρ [-]
    events: tuple  # CourseEvent, in course order
    # True where no loads reproduce their own K: at the gripping solution's own K an axle saturates
    # and lets go (the onset rule, `engine.course_loads.solve_loads`), and at the K of the loads it
    # leaves a fresh onset would grip; K is at the loads shown (those after it let go)
    no_fixed_point: Optional[np.ndarray] = None

    @property
    def rear_x_mm(self) -> np.ndarray:
        return self.pose.rear_centre_mm[:, 0]

    @property
    def path_ratio(self) -> np.ndarray:
        return self.pose.path_ratio

    @property
    def belly_touch(self) -> np.ndarray:
        return self.pose.belly_clearance_mm <= 0

    @property
    def lifted(self) -> list[Optional[str]]:
        """Per position: "front", "rear" or None (no front ground: "front"; outside the model: None)."""
        codes = _lift_code(self.front_normal_g, self.rear_normal_g, self.traction.state == OUTSIDE)
        return [(None, "front", "rear")[c] for c in codes]

    @property
    def slipping(self) -> list[str]:
        return [WALK_STATES[c] for c in self.traction.state]

    @property
    def overdriven_here(self) -> list[Optional[str]]:
        """Per position: the kinematically faster axle, "front", "rear" or None (no mismatch or unknown)."""
        return [_fast_name(m) for m in self.mismatch]

    @property
    def in_v(self) -> list[Optional[str]]:
        """Per position: which tyre sits in a V ("front", "rear", "both") or None."""
        f, r = self.pose.front_in_v, self.pose.rear_in_v
        return [("both" if a and b else "front" if a else "rear" if b else None) for a, b in zip(f, r)]

    def __len__(self) -> int:
        return int(self.rear_x_mm.size)


def _fast_name(mismatch: float) -> Optional[str]:
    if not math.isfinite(mismatch) or abs(mismatch - 1.0) <= SAME_SPEED_TOL:
        return None
    return "front" if mismatch > 1.0 else "rear"


def _course_of(setup: Setup, course: Optional[Course]) -> Course:
    course = setup.course if course is None else course
    if course is None:
        raise SetupError("no course: give a course file (--course) or add [course] with name, points_mm "
                         "and belly_clearance_mm")
    return course


def walk_span_mm(setup: Setup, course: Optional[Course] = None) -> tuple[float, float]:
    """First and last rear wheel-centre x of a walk (front centre within the course). [mm]"""
    course = _course_of(setup, course)
    r = setup.rig
    reach = float(np.hypot(r.wheelbase_mm, (r.tire_dia_front_mm - r.tire_dia_rear_mm) / 2.0))
    x0, x1 = course.points_mm[0][0], course.points_mm[-1][0]
    if x1 - reach < x0:
        raise SetupError(
            f"course.points_mm: the course is {x1 - x0:g} mm long, shorter than the wheelbase "
            f"({r.wheelbase_mm:g} mm); the rig cannot stand on it")
    return x0, x1 - reach


def course_positions(setup: Setup, step_mm: float = DEFAULT_STEP_MM, course: Optional[Course] = None) -> np.ndarray:
    """Rear wheel-centre x of each position, every `step_mm`, front centre within the course. [mm]"""
    x0, end = walk_span_mm(setup, course)
    if not (isinstance(step_mm, (int, float)) and math.isfinite(step_mm) and step_mm > 0):
        raise SetupError(f"step must be a number > 0 [mm], not {step_mm!r}")
    count = (end - x0) / step_mm  # a float: a subnormal step gives inf here, not an OverflowError
    if not count < MAX_POSITIONS - 1:
        raise SetupError(f"step {step_mm:g} mm gives more than {MAX_POSITIONS} positions; use a step of at "
                         f"least {max((end - x0) / (MAX_POSITIONS - 1), 1e-3):.3g} mm")
    return x0 + step_mm * np.arange(int(math.floor(count + 1e-9)) + 1)


def chunk_size(points_mm, rig, clearance_mm: float) -> int:
    """Positions per chunk: the terrain points one position looks at, kept under `CHUNK_ELEMENTS`."""
    r = max(rig.tire_dia_front_mm, rig.tire_dia_rear_mm) / 2.0
    pts = points_mm
    per_wheel = 6 * vertices_within(pts, 2.0 * r)  # the front placement scans six pitch angles
    in_reach = vertices_within(pts, rig.wheelbase_mm + 4.0 * r)
    belly = 3 * vertices_within(pts, rig.wheelbase_mm + 6.0 * r + 4.0 * abs(clearance_mm))
    return max(1, CHUNK_ELEMENTS // max(per_wheel, in_reach, belly))


def _tyre_keys(setup: Setup):
    """(rolling diameters, their losses per 100 g, slip stiffnesses) with the file's defaults."""
    r, g = setup.rig, setup.grip
    dia = (getattr(r, "rolling_dia_front_mm", None) or r.tire_dia_front_mm,
           getattr(r, "rolling_dia_rear_mm", None) or r.tire_dia_rear_mm)
    loss = (getattr(r, "rolling_dia_loss_front_mm_per_100g", 0.0) or 0.0,
            getattr(r, "rolling_dia_loss_rear_mm_per_100g", 0.0) or 0.0)
    stiff = g.axle_stiffness() if hasattr(g, "axle_stiffness") else (math.inf, math.inf)
    return dia, loss, stiff


def _mark(loads: ContactLoads, pose: RigPose, outside) -> ContactLoads:
    """Unplaced fronts are lifted; tyres in a V or a jammed front are outside the model."""
    t = loads.traction
    nan = np.full(outside.shape, np.nan)
    state = np.where(outside, OUTSIDE, t.state)
    state = np.where(~pose.placed, LIFTED, state).astype(np.int8)
    hidden = outside | ~pose.placed

    def hide(a):
        return np.where(hidden, nan, a)

    fields = {k: hide(getattr(t, k)) for k in CourseTraction.__dataclass_fields__ if k != "state"}
    return ContactLoads(hide(loads.front_normal_g), hide(loads.rear_normal_g), CourseTraction(state=state, **fields))


def walk_course(setup: Setup, step_mm: float = DEFAULT_STEP_MM, rear_x_mm=None,
                course: Optional[Course] = None) -> CourseWalk:
    """Place the rig at each position of a course and solve the contact statics.

    Parameters
    ----------
    setup : Setup
        The rig (its own ``course`` is used when `course` is not given).
    step_mm : float, default 5
        Distance between positions. [mm]
    rear_x_mm : array_like, optional
        Explicit rear wheel-centre positions instead of the regular steps. [mm]
    course : Course, optional
        A course from a course file.

    Returns
    -------
    CourseWalk
        Positions where the front wheel cannot be placed have NaN values and the state "lifted".

    Raises
    ------
    SetupError
        No course, a bad step, or a course shorter than the wheelbase.
    """
    course = _course_of(setup, course)
    if rear_x_mm is None:
        xs = course_positions(setup, step_mm, course)
    else:
        xs = np.asarray(rear_x_mm, dtype=float).ravel()
    rig = effective_rig(setup)
    od = setup_overdrive(setup)
    gear = 1.0 + od.gear_pct / 100.0
    points = np.asarray(course.points_mm, dtype=float)
    size = chunk_size(points, rig, course.belly_clearance_mm)
    rf, rr = rig.tire_dia_front_mm / 2.0, rig.tire_dia_rear_mm / 2.0
    paths = rig_paths(points, rig.wheelbase_mm, rf, rr)
    keys = _tyre_keys(setup)
    poses, loads, ks, mism, flips = [], [], [], [], []
    for start in range(0, max(xs.size, 1), size):
        pose = place_rig(points, xs[start:start + size], rig.wheelbase_mm, rf, rr, rig.cg_from_rear_mm,
                         rig.cg_height_mm, course.belly_clearance_mm, paths)
        chunk_loads, k, mismatch, outside, no_fixed_point = solve_loads(setup, rig, gear, pose, keys)
        poses.append(pose)
        loads.append(_mark(chunk_loads, pose, outside))
        ks.append(k)
        mism.append(mismatch)
        flips.append(no_fixed_point & pose.placed & ~outside)
    pose = concat_poses(poses)
    nf = np.concatenate([c.front_normal_g for c in loads])
    nr = np.concatenate([c.rear_normal_g for c in loads])
    traction = CourseTraction(**{k: np.concatenate([getattr(c.traction, k) for c in loads])
                                 for k in CourseTraction.__dataclass_fields__})
    k_all, mismatch = np.concatenate(ks), np.concatenate(mism)
    events = find_events(traction.state, nf, nr, pose.belly_clearance_mm <= 0, xs,
                         pose.front_centre_mm[:, 0], mismatch, pose)
    return CourseWalk(setup, course, od.overdriven_axle, float(step_mm), pose, nf, nr, traction,
                      k_all, mismatch, tuple(events), np.concatenate(flips))


def _lift_code(front_normal_g, rear_normal_g, outside=None) -> np.ndarray:
    """0 on the ground, 1 front lifted, 2 rear lifted (NaN normals count as front lifted)."""
    front_up = ~(np.asarray(front_normal_g) > 0)
    code = np.where(front_up, 1, np.where(np.asarray(rear_normal_g) > 0, 0, 2))
    return code if outside is None else np.where(outside, 0, code)


def state_words(code: int, fast_here: Optional[str]) -> str:
    """Plain words for a slip state code; `fast_here` is the kinematically faster axle there."""
    if code == NONE:
        return "both axles grip"
    if code == BOTH:
        return "both axles slip"
    if code == LIFTED:
        return "an axle is off the ground"
    if code == BINDS:
        return "the driveline binds: no tyre can slip, forces grow (stop)"
    if code == OUTSIDE:
        return "outside this model (a tyre in a V, or jammed): check by hand"
    axle = "front" if code == FRONT else "rear"
    other = "rear" if code == FRONT else "front"
    if fast_here == axle:
        return f"the {axle} (faster here) lets go, the {other} grips"
    return f"the {axle} lets go (dragged), the {other} grips"


def find_events(state, front_normal_g, rear_normal_g, belly_touch, rear_x_mm, front_x_mm, mismatch, pose=None):
    """Events where the per-position states change, in course order.

    Channels change independently: inside / outside the model (a tyre in a V); lift (front /
    rear / none); which axle is kinematically faster; the slip state among the positions on the
    ground, compared with the last such position (a handover: the axle that is faster there now
    lets go; hands back: the slower one does); belly contact.
    """
    state = np.asarray(state)
    outside = state == OUTSIDE
    lift = _lift_code(front_normal_g, rear_normal_g, outside)
    touch = np.asarray(belly_touch, dtype=bool)
    events = []

    def add(kind, i, text):
        events.append(CourseEvent(kind, int(i), float(rear_x_mm[i]), float(front_x_mm[i]), text))

    for i in np.flatnonzero(outside[1:] != outside[:-1]) + 1:
        if outside[i]:
            which = "a tyre touches two faces:"
            if pose is not None:
                f, r = bool(pose.front_in_v[i]), bool(pose.rear_in_v[i])
                which = ("both tyres sit" if f and r else "the front tyre sits" if f else
                         "the rear tyre sits" if r else "the front is jammed:")
                which = which if which.endswith(":") else which + " in a V (two faces):"
            add("outside_model", i, f"{which} outside the model")
        else:
            add("inside_model", i, "back inside the model")

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

    grounded = np.flatnonzero((lift == 0) & ~outside & (state != LIFTED))
    mismatch = np.asarray(mismatch, dtype=float)
    fast = np.where(np.isfinite(mismatch) & (np.abs(mismatch - 1.0) > SAME_SPEED_TOL),
                    np.sign(mismatch - 1.0), 0).astype(int)
    names = {1: "front", -1: "rear", 0: None}
    g_fast, g_state = fast[grounded], state[grounded]
    flips = (g_fast[1:] != g_fast[:-1]) & (g_fast[1:] != 0) & (g_fast[:-1] != 0)
    for k in np.flatnonzero(flips) + 1:
        i = grounded[k]
        ratio = f" (path ratio {pose.path_ratio[i]:.3f})" if pose is not None else ""
        add("windup_reverses", i, f"wind-up reverses: the {names[g_fast[k]]} runs faster{ratio}")
    for k in np.flatnonzero(g_state[1:] != g_state[:-1]) + 1:
        i, before, now = grounded[k], g_state[k - 1], g_state[k]
        words = state_words(int(now), names[fast[i]])
        if now == BINDS:
            add("binds", i, words)
        elif before == BINDS:
            add("unbinds", i, f"the driveline frees: {words}")
        elif now == BOTH:
            add("cannot_hold", i, "cannot hold: both axles slip; the rig stalls or slides back")
        elif before == BOTH:
            add("holds_again", i, f"holds again: {words}")
        elif now == NONE:
            add("both_grip", i, "both axles grip (the tyres absorb the wind-up as slip)")
        elif names[fast[i]] == ("front" if now == FRONT else "rear"):
            add("handover", i, f"handover: {words}")
        else:
            add("hand_back", i, f"hands back: {words}")

    for i in np.flatnonzero(touch[1:] != touch[:-1]) + 1:
        if touch[i]:
            add("belly_touches", i, "the belly touches: the rig high-centres")
        else:
            add("belly_clear", i, "the belly is clear again")

    events.sort(key=lambda e: (e.index, EVENT_KINDS.index(e.kind)))
    return events
