"""Off-camber and diagonal climbs: the rig on a plane of steepest slope β taken at heading ψ.

Heading ``ψ`` is the angle of the rig's nose from straight up the fall line, clockwise seen from
above: ``ψ = 0`` climbs straight up, ``ψ = 180`` descends straight down, ``ψ = +90`` has the
rig's left side uphill. In the rig's frame (x forward, y left, z out of the plane) gravity per
unit weight is ``(−sin β cos ψ, −sin β sin ψ, −cos β)``; the gravity line through the CG
``(b, 0, h)`` meets the ground plane at the *foot* ``(b − h tan β cos ψ, −h tan β sin ψ)``.

Everything here is quasi-static on a flat plane with a rigid rig, and vectorised over slopes and
headings (arrays broadcast).

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade: here with ``cos θ → cos β``, ``sin θ → sin β cos ψ``).
.. [2] W. F. Milliken & D. L. Milliken, *Race Car Vehicle Dynamics*, SAE, 1995, ch. 18 (lateral
   load transfer distribution by roll stiffness) and ch. 2 (friction circle).
.. [3] E. G. Papadopoulos & D. A. Rey, "The force-angle measure of tipover stability margin for
   mobile manipulators", *Vehicle System Dynamics* 33(1), 2000, pp. 29-48 (support polygon; for
   gravity alone the measure reduces to the gravity line's foot inside the support rectangle).
.. [4] NHTSA, static stability factor ``SSF = T/(2h)``, 68 FR 59250, 2003 (``ψ = ±90``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

# The edges of the support rectangle, named by the wheels that lift when the rig tips over it.
EDGES = ("front", "rear", "left", "right")
WHEELS = ("front_left", "front_right", "rear_left", "rear_right")
# What lifts first: one wheel (0-3, as `WHEELS`) or the pair of an edge (4 + edge index).
LIFTS = WHEELS + tuple(f"{edge} wheels" for edge in EDGES)


def _rad(deg):
    return np.radians(np.asarray(deg, dtype=float))


def gravity_foot_mm(cg_from_rear_mm, cg_height_mm, slope_deg, heading_deg, accel_g=0.0):
    """Where the line of the resultant load through the CG meets the ground plane.

    Parameters
    ----------
    cg_from_rear_mm, cg_height_mm : float
        ``b`` ahead of the rear axle and ``h`` above the plane. [mm]
    slope_deg, heading_deg : array_like
        Steepest slope ``β`` of the plane and the rig's heading ``ψ`` (broadcast). [deg]
    accel_g : float or array_like, default 0
        Acceleration along the rig's heading; its inertia acts at the CG like a steeper climb. [g]

    Returns
    -------
    x_mm, y_mm : ndarray
        ``x = b − h (sin β cos ψ + a_x)/cos β`` ahead of the rear axle and
        ``y = −h tan β sin ψ`` left of the centre line. [mm] NaN at ``β = ±90``.
    """
    beta, psi = _rad(slope_deg), _rad(heading_deg)
    cos_b = np.cos(beta)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = cg_from_rear_mm - cg_height_mm * (np.sin(beta) * np.cos(psi) + accel_g) / cos_b
        y = -cg_height_mm * np.sin(beta) * np.sin(psi) / cos_b
    return x, y


def plane_axle_loads_g(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, slope_deg, heading_deg,
                       accel_g=0.0):
    """Front and rear axle normal forces on the plane [1]_.

    Returns
    -------
    front_g, rear_g : ndarray
        ``N_F = W (b cos β − h sin β cos ψ − h a_x)/L``, ``N_R = W cos β − N_F``. [gf]
        Negative past an axle lift (the caller decides what that means).
    """
    beta, psi = _rad(slope_deg), _rad(heading_deg)
    cos_b = np.cos(beta)
    front = weight_g * (cg_from_rear_mm * cos_b - cg_height_mm * (np.sin(beta) * np.cos(psi) + accel_g)) / wheelbase_mm
    return front, weight_g * cos_b - front


def plane_required_g(weight_g, slope_deg, heading_deg, rolling_resistance=0.0, accel_g=0.0):
    """Force along the heading the tyres must supply: ``W (sin β cos ψ + c_rr cos β + a_x)`` [1]_. [gf]"""
    beta, psi = _rad(slope_deg), _rad(heading_deg)
    return weight_g * (np.sin(beta) * np.cos(psi) + rolling_resistance * np.cos(beta) + accel_g)


def side_demand(slope_deg, heading_deg):
    """Sideways force per unit load every axle needs: ``t = tan β |sin ψ|``. [-]

    With no yaw moment each axle's sideways share is in proportion to its own load, so every axle
    needs the same ratio (exact without driveline wind-up).
    """
    beta, psi = _rad(slope_deg), _rad(heading_deg)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.abs(np.tan(beta) * np.sin(psi))


def friction_circle_mu(mu, side):
    """Longitudinal friction left after a sideways demand ``t``: ``sqrt(μ² − t²)``, 0 past ``t = μ`` [2]_.

    The sideways demand is carried first (a model choice: the simplest combined-slip rule).
    """
    mu = np.asarray(mu, dtype=float)
    return np.sqrt(np.maximum(mu * mu - np.asarray(side, dtype=float) ** 2, 0.0))


@dataclass(frozen=True)
class WheelLoads:
    """Per-wheel normal forces [gf]; every field has the broadcast shape of the inputs.

    Loads are NaN where the rig has tipped (`tipped`). `lifted` names the wheel carrying nothing
    after a three-wheel redistribution (index into `WHEELS`, −1 for none).
    """

    front_left_g: np.ndarray
    front_right_g: np.ndarray
    rear_left_g: np.ndarray
    rear_right_g: np.ndarray
    tipped: np.ndarray
    lifted: np.ndarray
    front_share: np.ndarray  # ξ used [-]

    def as_array(self) -> np.ndarray:
        """Loads stacked on a leading axis in the order of `WHEELS`."""
        return np.stack([self.front_left_g, self.front_right_g, self.rear_left_g, self.rear_right_g])


def wheel_loads_g(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm, slope_deg, heading_deg,
                  front_roll_share=None, accel_g=0.0) -> WheelLoads:
    """The four wheel loads on the plane: roll-moment split, three-wheel statics after a lift.

    Parameters
    ----------
    weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm : float
        ``W``, ``L``, ``b``, ``h`` and the tyre-centre track ``T``. [gf, mm]
    slope_deg, heading_deg : array_like
        ``β`` and ``ψ`` (broadcast). [deg]
    front_roll_share : float, optional
        ``ξ``, the front axle's share of the roll moment (0..1). Default ``N_F/(N_F + N_R)`` at
        each slope and heading.
    accel_g : float, default 0
        Acceleration along the heading. [g]

    Returns
    -------
    WheelLoads

    Notes
    -----
    Four contacts are statically indeterminate; the roll moment ``M = W h sin β sin ψ`` is split
    between the axles, the front taking ``ξ`` [2]_::

        N_FL = N_F/2 − ξ M/T,   N_FR = N_F/2 + ξ M/T,
        N_RL = N_R/2 − (1 − ξ) M/T,   N_RR = N_R/2 + (1 − ξ) M/T.

    Every set of four loads with the same total, pitch and roll moments is this split plus
    ``w (1, −1, −1, 1)`` (a diagonal "warp" that changes none of the three). Where the split
    leaves a wheel negative the rig rocks onto three wheels: ``w`` is moved just far enough to
    bring that wheel to zero, which is the three-wheel statics (three equations, three loads).
    All four loads can be non-negative only while both axle totals and both side totals are,
    i.e. while the foot of the gravity line lies in the support rectangle; outside it the rig
    has tipped and the loads are NaN.
    """
    x_foot, y_foot = gravity_foot_mm(cg_from_rear_mm, cg_height_mm, slope_deg, heading_deg, accel_g)
    normal = weight_g * np.cos(_rad(slope_deg))
    normal, x_foot, y_foot = np.broadcast_arrays(normal, x_foot, y_foot)
    n_front = normal * x_foot / wheelbase_mm
    n_rear = normal - n_front
    transfer = normal * -y_foot / track_mm  # M/T: to the right-hand wheels when > 0
    with np.errstate(divide="ignore", invalid="ignore"):
        share = (np.where(normal > 0, n_front / normal, 0.5) if front_roll_share is None
                 else np.full_like(normal, float(front_roll_share)))
    fl = n_front / 2 - share * transfer
    fr = n_front / 2 + share * transfer
    rl = n_rear / 2 - (1 - share) * transfer
    rr = n_rear / 2 + (1 - share) * transfer
    lo = np.maximum(-fl, -rr)
    hi = np.minimum(fr, rl)
    tipped = ~(lo <= hi) | ~(normal > 0)
    w = np.clip(0.0, lo, hi)
    loads = [fl + w, fr - w, rl - w, rr + w]
    lifted = np.full(normal.shape, -1, dtype=np.int8)
    lifted = np.where(w > 0, np.where(lo > 0, 0, 3), lifted)  # raised to lo: FL or RR at zero
    lifted = np.where(w < 0, np.where(hi == fr, 1, 2), lifted)  # lowered to hi: FR or RL at zero
    nan = np.full(normal.shape, np.nan)
    fl, fr, rl, rr = (np.where(tipped, nan, v) for v in loads)
    return WheelLoads(fl, fr, rl, rr, tipped, np.where(tipped, -1, lifted).astype(np.int8), share)


def tip_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm, heading_deg):
    """Steepest plane the rig stands on at each heading, and the edge it tips over.

    Returns
    -------
    angle_deg : ndarray
        ``β_tip``, exact [3]_: ``tan β_tip = min(b/(h cos ψ) if cos ψ > 0; (L − b)/(h |cos ψ|) if
        cos ψ < 0; (T/2)/(h |sin ψ|) if sin ψ ≠ 0)``. [deg] ``ψ = 0``/``180`` give the planar
        front/rear lift angles, ``ψ = ±90`` the NHTSA roll angle ``atan(T/(2h))`` [4]_.
    edge : ndarray of int
        Index into `EDGES`: the wheels that lift as it tips.
    """
    psi = _rad(heading_deg)
    c, s = np.cos(psi), np.sin(psi)
    # heading components this small are rounding noise of a whole-number heading (cos 90°)
    c = np.where(np.abs(c) < 1e-12, 0.0, c)
    s = np.where(np.abs(s) < 1e-12, 0.0, s)
    h = cg_height_mm
    with np.errstate(divide="ignore"):
        cands = np.stack([
            np.where(c > 0, cg_from_rear_mm / (h * c), np.inf),  # front wheels lift (over the rear axle)
            np.where(c < 0, (wheelbase_mm - cg_from_rear_mm) / (h * -c), np.inf),  # rear wheels lift
            np.where(s > 0, track_mm / 2 / (h * s), np.inf),  # left side uphill: left wheels lift
            np.where(s < 0, track_mm / 2 / (h * -s), np.inf),
        ])
    edge = np.argmin(cands, axis=0)
    return np.degrees(np.arctan(np.min(cands, axis=0))), edge


def edge_margins_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm, slope_deg, heading_deg):
    """Force-angle margin to each edge of the support rectangle, in the order of `EDGES`.

    Returns
    -------
    ndarray, shape (4, ...)
        For each edge, the angle between the gravity line and the line from that edge to the CG,
        in the plane square to the edge [3]_. [deg] Zero: on the point of tipping over that edge;
        negative: tipped.

    Notes
    -----
    An edge at in-plane distance ``d`` from the CG's normal projection, with gravity's in-plane
    component toward it ``g_e`` (per unit weight): margin ``= atan(d/h) − atan(g_e/cos β)``.
    """
    beta, psi = _rad(slope_deg), _rad(heading_deg)
    with np.errstate(divide="ignore", invalid="ignore"):
        tb = np.tan(beta)
    back, right = tb * np.cos(psi), tb * np.sin(psi)  # gravity toward the rear / right, over cos β
    h, b, a, half = cg_height_mm, cg_from_rear_mm, wheelbase_mm - cg_from_rear_mm, track_mm / 2
    return np.degrees(np.stack([
        np.arctan(b / h) - np.arctan(back),  # over the rear axle: front wheels lift
        np.arctan(a / h) + np.arctan(back),  # over the front axle: rear wheels lift
        np.arctan(half / h) - np.arctan(right),  # over the right wheels: left wheels lift
        np.arctan(half / h) + np.arctan(right),
    ]))


def wheel_lift_angle_deg(wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm, heading_deg,
                         front_roll_share=None):
    """Slope at which the first wheel lifts at each heading, and which wheel.

    Returns
    -------
    angle_deg : ndarray
        [deg] NaN where no wheel lifts below 90°.
    lifts : ndarray of int
        Index into `LIFTS`: one wheel, or an edge's pair when both lift together (−1: none).

    Notes
    -----
    With a fixed share ``ξ`` every split load is ``A cos β + B sin β`` (``a_x = 0``), e.g.
    ``N_FL = W b/(2L) cos β − W h (cos ψ/(2L) + ξ sin ψ/T) sin β``; it reaches zero at
    ``β = atan2(A, −B)`` when ``B < 0`` (``A > 0`` with the CG inside the wheelbase). Exact, no
    scan. With the default share ``ξ = N_F/(N_F + N_R)`` each split load factors as an axle load
    times ``(1/2 ∓ M/(T W cos β))``: a wheel lifts only where an axle or a side unloads, exactly
    at the tip angle, and both wheels of the tipping edge together.
    """
    psi = _rad(heading_deg)
    c, s = np.cos(psi), np.sin(psi)
    c = np.where(np.abs(c) < 1e-12, 0.0, c)
    s = np.where(np.abs(s) < 1e-12, 0.0, s)
    L, b, h, T = wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm
    if front_roll_share is None:
        angle, edge = tip_angle_deg(L, b, h, T, heading_deg)
        return angle, (4 + edge).astype(np.int8)
    xi = float(front_roll_share)
    a_front, a_rear = b / (2 * L), (L - b) / (2 * L)
    pitch = h * c / (2 * L)  # per unit weight: half the grade's pitch transfer per wheel
    roll = h * s / T  # M/(W T) per sin β
    A = np.stack(np.broadcast_arrays(a_front, a_front, a_rear, a_rear, np.zeros_like(c))[:4])
    B = np.stack([-pitch - xi * roll, -pitch + xi * roll, pitch - (1 - xi) * roll, pitch + (1 - xi) * roll])
    A = np.broadcast_to(A, B.shape)
    with np.errstate(invalid="ignore"):
        roots = np.where(B < 0, np.degrees(np.arctan2(A, -B)), np.inf)
    order = np.sort(roots, axis=0)
    angle = order[0]
    wheel = np.argmin(roots, axis=0)
    # two wheels of one edge at the same angle (a pure heading): name the pair
    tie = np.isclose(order[1], angle, rtol=0.0, atol=1e-9)
    second = np.argsort(roots, axis=0, kind="stable")[1]
    pair = {(0, 1): 4, (2, 3): 5, (0, 2): 6, (1, 3): 7}
    lo, hi = np.minimum(wheel, second), np.maximum(wheel, second)
    for (i, j), code in pair.items():
        wheel = np.where(tie & (lo == i) & (hi == j), code, wheel)
    none = ~np.isfinite(angle) | (angle >= 90.0)
    return np.where(none, np.nan, angle), np.where(none, -1, wheel).astype(np.int8)


@dataclass(frozen=True)
class AlongHeading:
    """The planar sweep's inputs along a heading (MODEL section 8), for `analysis`'s hook."""

    front_g: np.ndarray
    rear_g: np.ndarray
    required_g: np.ndarray
    mu_front: tuple  # (μ'_s, μ'_k): the planar scalars unchanged where nothing goes sideways
    mu_rear: tuple
    side_demand: np.ndarray  # t = tan β |sin ψ|
    slides: np.ndarray  # t >= min μ_s: the rig slides sideways
    rolls: np.ndarray  # the gravity line has crossed a side edge: rolled over
    kinetic: tuple = (np.inf, np.inf)  # the planar μ_k of each axle (the crab rule's limit)

    def state_codes(self, state, codes) -> np.ndarray:
        """Traction codes (`codes`: the FRONT, REAR, BOTH, LIFTED of `traction`) with a sideways
        slide as BOTH, a scrubbing axle that cannot carry its sideways share (``t >= μ_k``: it
        crabs off downhill) as BOTH, and a roll-over as LIFTED. An axle off the ground stays
        LIFTED: it outranks every other state (MODEL section 5)."""
        front, rear, both, lifted = codes
        crab = ((state == front) & (self.side_demand >= self.kinetic[0])) | (
            (state == rear) & (self.side_demand >= self.kinetic[1]))
        out = np.where((self.slides | crab) & (state != lifted), both, state)
        return np.where(self.rolls, lifted, out).astype(np.int8)


def along_heading(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, track_mm, slope_deg, heading_deg,
                  rolling_resistance, accel_g, mu_front, mu_rear) -> AlongHeading:
    """Axle loads, the load to carry and the friction the friction circle leaves, along a heading.

    Parameters are those of `plane_axle_loads_g` and `plane_required_g` plus the track [mm] and
    each axle's ``(μ_s, μ_k)``. A slope < 0 runs nose down along the same heading.

    At ``sin ψ = 0`` (straight up or down) this is the planar model exactly, with the friction
    scalars handed back untouched. Elsewhere each axle keeps ``sqrt(μ² − t²)`` along the heading
    [2]_ (floored just above 0 so the slip solve stays well posed; `slides` marks where it is gone).
    """
    nf, nr = plane_axle_loads_g(weight_g, wheelbase_mm, cg_from_rear_mm, cg_height_mm, slope_deg, heading_deg,
                                accel_g)
    f_req = plane_required_g(weight_g, slope_deg, heading_deg, rolling_resistance, accel_g)
    t = side_demand(slope_deg, heading_deg)
    nf, nr, f_req, t = np.broadcast_arrays(nf, nr, f_req, t)
    _x, y = gravity_foot_mm(cg_from_rear_mm, cg_height_mm, slope_deg, heading_deg, accel_g)
    rolls = np.broadcast_to(~(np.abs(y) < track_mm / 2), nf.shape)
    if not np.any(t > 0):
        no = np.zeros(nf.shape, dtype=bool)
        return AlongHeading(nf, nr, f_req, tuple(mu_front), tuple(mu_rear), t, no, rolls)
    slides = t >= min(mu_front[0], mu_rear[0]) - 1e-9

    def circle(mu):
        s, k = (np.maximum(friction_circle_mu(m, t), 1e-6) for m in mu)
        return s, np.minimum(k, s)

    return AlongHeading(nf, nr, f_req, circle(mu_front), circle(mu_rear), t, slides, rolls,
                        (mu_front[1], mu_rear[1]))
