"""Where the rig sits on a terrain profile: wheel centres, pitch, contacts and belly clearance.

The terrain is a polyline ``(x, z)`` in mm, x increasing, taken as level beyond its first and
last points. A wheel of radius ``r`` resting on it has its centre on the curve offset by ``r``:
the upper envelope of the circles of radius ``r`` around the vertices and of the segments moved
``r`` along their normals (the boundary of the Minkowski sum of the terrain and the wheel disc).
The element that gives the envelope is the contact: a segment (contact angle = its slope) or a
vertex, i.e. a step edge, whose normal runs from the edge to the wheel centre.

Pose of the rig for a rear-wheel position: the rear centre sits on the rear tyre's curve; the front
centre is on the front tyre's curve at the centre-to-centre distance. Rotating the chassis about
the rear centre from nose-up down, the front wheel settles on the first point of its curve it
meets: the highest angle at which the circle about the rear centre meets a vertex arc or an
offset segment, each in closed form, for all positions at once.

Path ratio. Rolling without slip, each wheel turns by the travel of its own centre along its
centre curve, whose tangent at a contact of surface angle ``α`` is ``(cos α, sin α)`` (on a
vertex arc too: the arc is square to the edge-to-centre normal). The centres stay ``D`` apart
along the chord at angle ``ψ``, so differentiating ``|F − R| = D`` and its direction gives
``ρ = ds_f/ds_r = cos(α_r − ψ)/cos(α_f − ψ)`` and
``dψ/ds_r = [ρ sin(α_f − ψ) − sin(α_r − ψ)]/D`` (the pitch rate; ``ψ`` and the pitch differ by
a constant). On a uniform slope ``ρ = 1``; a rear on the flat and a front on a face at ``α``
give ``cos ψ/cos(α − ψ)`` [3]_.

A wheel in a V (the centre curve has a kink: two faces, or two edges, touch the tyre at once)
has two contacts and no single contact angle; the kink is found by comparing the contact angle
a hair either side of the centre. Such poses are flagged, not silently given one face.

Rig frame: the ground line through both contacts on level ground, x forward from the rear
contact, z up. Rear centre ``(0, r_r)``, front centre ``(L, r_f)``, CG ``(b, h)``, belly (the
lowest line of the chassis) ``z = c`` for ``0 <= x <= L``. On a uniform slope this frame lies on
the slope, so the pose reduces to the uniform-slope geometry exactly.

References
----------
.. [1] J. Serra, *Image Analysis and Mathematical Morphology*, Academic Press, 1982 (dilation by
   a disc: the set of centres of a disc touching but not entering a shape).
.. [2] R. N. Jazar, *Vehicle Dynamics: Theory and Application*, Springer, 2008, ch. 2 (wheel on
   an incline; vehicle frame on a grade).
.. [3] J. L. Meriam, L. G. Kraige, *Engineering Mechanics: Dynamics*, Wiley, ch. 5 (plane
   kinematics of a rigid body: the velocities of two points of a rigid link have equal
   components along the link).
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

_GAP_TOL_MM = 1e-9
# A kink in the centre curve is looked for this far either side of the centre [mm]; a contact
# angle that jumps by more than KINK_MIN_DEG across it is a wheel touching two faces at once.
# A smooth vertex arc turns by 2·KINK_PROBE_MM/r [rad] over the same span, far below that.
KINK_PROBE_MM = 0.01
KINK_MIN_DEG = 1.0
# |cos(α_f − ψ)| below this: the front centre cannot move along its curve as the rear moves (the
# tyre is pushed straight into a wall); the path ratio is then not defined.
_JAM_COS = 1e-9


@dataclass(frozen=True)
class WheelPath:
    """Curve of one wheel's centre over a terrain (vertices padded with level ground).

    Segment k (vertex k to k+1) moved out by ``r`` spans ``seg_lo[k] <= x <= seg_hi[k]`` with
    height ``seg_z0[k] + (x − seg_lo[k]) tan(seg_angle[k])``.
    """

    radius_mm: float
    x_mm: np.ndarray  # vertices
    z_mm: np.ndarray
    seg_angle: np.ndarray  # slope of each segment [rad]
    seg_tan: np.ndarray
    seg_lo: np.ndarray  # [mm]
    seg_hi: np.ndarray
    seg_z0: np.ndarray
    window: int  # most vertices within any 2r of x, plus one


def wheel_path(points_mm, radius_mm, pad_mm=None) -> WheelPath:
    """Prepare the centre curve of a wheel of `radius_mm` over a polyline.

    Parameters
    ----------
    points_mm : array_like, shape (m, 2)
        Terrain ``(x, z)``, x strictly increasing. [mm]
    radius_mm : float
        Tyre radius. [mm]
    pad_mm : float, optional
        Level ground added before the first and after the last point. [mm] Default ``4 r``.
    """
    p = np.asarray(points_mm, dtype=float)
    r = float(radius_mm)
    pad = 4.0 * r if pad_mm is None else float(pad_mm)
    x = np.concatenate(([p[0, 0] - pad], p[:, 0], [p[-1, 0] + pad]))
    z = np.concatenate(([p[0, 1]], p[:, 1], [p[-1, 1]]))
    ang = np.arctan2(np.diff(z), np.diff(x))
    shift = r * np.sin(ang)
    counts = np.searchsorted(x, x + 2.0 * r, side="right") - np.arange(x.size)
    return WheelPath(r, x, z, ang, np.tan(ang), x[:-1] - shift, x[1:] - shift, z[:-1] + r * np.cos(ang),
                     int(counts.max()) + 1)


def centre_height(path: WheelPath, x_mm):
    """Height of the wheel centre resting on the terrain, and the contact angle.

    Parameters
    ----------
    path : WheelPath
    x_mm : array_like
        Wheel-centre x. [mm] Must lie within the padded terrain.

    Returns
    -------
    z_mm : ndarray
        Centre height. [mm]
    angle_rad : ndarray
        Surface angle at the contact, nose-up positive; at a vertex the direction of the
        edge-to-centre normal [1]_. [rad]

    Notes
    -----
    Only the vertices within ``r`` of `x_mm` and the segments around them can touch, so each
    query looks at a fixed window of elements found by `numpy.searchsorted`.
    """
    xq = np.asarray(x_mm, dtype=float)
    r, xs, zs, w = path.radius_mm, path.x_mm, path.z_mm, path.window
    m = xs.size
    i0 = np.searchsorted(xs, xq - r, side="left")[..., None]
    vi = np.minimum(i0 + np.arange(w), m - 1)  # vertices i0 .. i0+w-1
    si = np.clip(i0 + np.arange(-1, w), 0, m - 2)  # the segments around them
    xc = xq[..., None]
    dx = xc - xs[vi]
    v_z = np.where(np.abs(dx) <= r, zs[vi] + np.sqrt(np.maximum(r * r - dx * dx, 0.0)), -np.inf)
    lo = path.seg_lo[si]
    s_z = np.where((xc >= lo) & (xc <= path.seg_hi[si]), path.seg_z0[si] + (xc - lo) * path.seg_tan[si], -np.inf)
    # segments first: on a tie (the edge of an offset segment) the segment is the contact
    cand = np.concatenate((s_z, v_z), axis=-1)
    best = np.argmax(cand, axis=-1)
    rows = np.arange(best.size).reshape(best.shape)
    z = cand.reshape(-1)[best + cand.shape[-1] * rows]
    on_seg = best <= w
    s_idx = si.reshape(-1)[np.minimum(best, w) + (w + 1) * rows]
    v_idx = vi.reshape(-1)[np.maximum(best - (w + 1), 0) + w * rows]
    # vertex normal n = (x - x_v, z - z_v)/r = (-sin α, cos α)
    angle = np.where(on_seg, path.seg_angle[s_idx], np.arctan2(xs[v_idx] - xq, z - zs[v_idx]))
    return z, angle


@dataclass(frozen=True)
class RigPose:
    """The rig placed at each rear-wheel position; arrays over positions, points (..., 2) [mm]."""

    rear_centre_mm: np.ndarray
    front_centre_mm: np.ndarray
    pitch_deg: np.ndarray  # rig ground line, nose-up positive
    front_angle_deg: np.ndarray  # surface angle at each contact
    rear_angle_deg: np.ndarray
    front_contact_mm: np.ndarray
    rear_contact_mm: np.ndarray
    cg_mm: np.ndarray
    belly_clearance_mm: np.ndarray  # least height of the belly above the terrain (<= 0: touches)
    belly_point_mm: np.ndarray  # the terrain point that comes closest
    placed: np.ndarray  # False where the front wheel found no ground at the wheelbase
    path_ratio: np.ndarray  # ρ = ds_f/ds_r of the two centres' arc lengths [-]; NaN in a V
    pitch_rate_rad_per_mm: np.ndarray  # dφ/ds_r [rad/mm]; NaN where ρ is
    front_kink_deg: np.ndarray  # jump of the contact angle across the front wheel's centre [deg]
    rear_kink_deg: np.ndarray  # (> KINK_MIN_DEG: the tyre sits in a V, touching two faces)

    @property
    def front_in_v(self) -> np.ndarray:
        return self.front_kink_deg > KINK_MIN_DEG

    @property
    def rear_in_v(self) -> np.ndarray:
        return self.rear_kink_deg > KINK_MIN_DEG


def kink_deg(path: WheelPath, x_mm):
    """How much the contact angle jumps across a wheel centre at `x_mm` (0 on a smooth stretch).

    Parameters
    ----------
    path : WheelPath
    x_mm : array_like
        Wheel-centre x. [mm]

    Returns
    -------
    ndarray
        Contact angle just ahead minus just behind, ``KINK_PROBE_MM`` either side. [deg] The
        centre curve is an upper envelope, so its kinks always turn nose-up (positive): there the
        wheel touches two faces (or edges) at once.
    """
    xq = np.asarray(x_mm, dtype=float)
    _, behind = centre_height(path, xq - KINK_PROBE_MM)
    _, ahead = centre_height(path, xq + KINK_PROBE_MM)
    return np.degrees(ahead - behind)


def path_ratio(front_angle_rad, rear_angle_rad, chord_rad, reach_mm):
    """Path ratio ``ρ = ds_f/ds_r`` and pitch rate ``dψ/ds_r`` of two centres a fixed `reach_mm` apart.

    Parameters
    ----------
    front_angle_rad, rear_angle_rad : array_like
        Surface angle at each contact (direction of each centre's travel). [rad]
    chord_rad : array_like
        Direction of the line from the rear centre to the front centre. [rad]
    reach_mm : float
        Centre-to-centre distance ``D``. [mm]

    Returns
    -------
    rho : ndarray
        ``cos(α_r − ψ)/cos(α_f − ψ)`` [3]_. [-] NaN where the front cannot move along its curve.
    rate : ndarray
        ``[ρ sin(α_f − ψ) − sin(α_r − ψ)]/D``. [rad/mm]
    """
    af, ar, psi = (np.asarray(a, dtype=float) for a in (front_angle_rad, rear_angle_rad, chord_rad))
    cf = np.cos(af - psi)
    jammed = ~(np.abs(cf) > _JAM_COS)
    with np.errstate(divide="ignore", invalid="ignore"):
        rho = np.where(jammed, np.nan, np.cos(ar - psi) / np.where(jammed, 1.0, cf))
    rate = (rho * np.sin(af - psi) - np.sin(ar - psi)) / reach_mm
    return rho, rate


def _rotate(v, phi):
    """Rotate body-frame vectors `v` (..., 2) by pitch `phi` (...) [rad] into the world."""
    c, s = np.cos(phi), np.sin(phi)
    return np.stack((c * v[..., 0] - s * v[..., 1], s * v[..., 0] + c * v[..., 1]), axis=-1)


def _vertex_window(xs, x_lo, x_hi, extra=0):
    """Indices of the vertices with ``x_lo <= x <= x_hi`` (plus `extra` on each side), padded.

    Returns
    -------
    idx : ndarray, shape (..., w)
        Vertex indices, clipped to the polyline.
    inside : ndarray of bool, shape (..., w)
        False for padding.
    """
    i0 = np.maximum(np.searchsorted(xs, x_lo, side="left") - extra, 0)
    i1 = np.minimum(np.searchsorted(xs, x_hi, side="right") + extra, xs.size)
    idx = i0[..., None] + np.arange(int(np.max(i1 - i0, initial=0)))
    return np.minimum(idx, xs.size - 1), idx < i1[..., None]


def _terrain_range(path: WheelPath, x_lo, x_hi):
    """Lowest and highest terrain height over ``[x_lo, x_hi]`` (element-wise). [mm]

    The terrain is linear between vertices, so the extremes are at the vertices inside or at
    the ends of the interval.
    """
    xs, zs = path.x_mm, path.z_mm
    ends = np.stack((np.interp(x_lo, xs, zs), np.interp(x_hi, xs, zs)), axis=-1)
    idx, inside = _vertex_window(xs, x_lo, x_hi)
    vz = zs[idx]
    lo = np.minimum(ends.min(axis=-1), np.where(inside, vz, np.inf).min(axis=-1, initial=np.inf))
    hi = np.maximum(ends.max(axis=-1), np.where(inside, vz, -np.inf).max(axis=-1, initial=-np.inf))
    return lo, hi


def _front_on_ground(front: WheelPath, rear_xz, reach_mm):
    """Angle from the rear centre to the front centre where the front wheel first touches.

    ``g(ψ) = z_R + D sin ψ − z_f(x_R + D cos ψ)`` is the front centre's height above its curve
    with the chassis at angle ψ about the rear centre. The front centre is at least ``r_f`` above
    the lowest terrain within reach and at most ``r_f`` above the highest, which brackets ψ
    (``g(top) >= 0``, ``g(bottom) <= 0``). The first zero coming down from nose-up is the highest ψ
    in that bracket at which the circle of radius ``D`` about the rear centre meets any element of
    the curve: the upper half of a vertex circle or an offset segment within its span. Each of
    these meets the circle at angles in closed form (circle–circle, circle–line); every such point
    is on or below the envelope, so the highest one has ``g = 0`` with ``g >= 0`` above it.

    A sampled search cannot promise that: the circle can dip into a crest's vertex arc by a
    fraction of a millimetre over a degree or two and come out again, and a scan stepping over
    the dip then settles on a later root with the tyre passed through the crest.
    """
    xr, zr = rear_xz[..., 0], rear_xz[..., 1]
    r = front.radius_mm
    z_lo, z_hi = _terrain_range(front, xr - r, xr + reach_mm + r)
    top = np.arcsin(np.clip((z_hi + r - zr) / reach_mm, -1.0, 1.0))
    bottom = np.arcsin(np.clip((z_lo + r - zr) / reach_mm, -1.0, 1.0))
    g_top = zr + reach_mm * np.sin(top) - centre_height(front, xr + reach_mm * np.cos(top))[0]
    # g(top) >= 0 by construction; rounding may leave it a hair below when top is the root
    placed = g_top >= -_GAP_TOL_MM
    xs, zs = front.x_mm, front.z_mm
    idx, inside = _vertex_window(xs, xr - r, xr + reach_mm + r, extra=1)
    x0, z0 = xr[..., None], zr[..., None]
    # vertex circles: |R + D u(ψ) − v| = r  ->  cos(ψ − θ) = (D² + l² − r²)/(2 D l)
    dx, dz = xs[idx] - x0, zs[idx] - z0
    ell = np.hypot(dx, dz)
    with np.errstate(divide="ignore", invalid="ignore"):
        cos_gap = (reach_mm ** 2 + ell * ell - r * r) / (2.0 * reach_mm * ell)
    spread = np.arccos(np.clip(cos_gap, -1.0, 1.0))
    meets = inside & (np.abs(cos_gap) <= 1.0)
    vert = np.arctan2(dz, dx)[..., None] + np.stack((spread, -spread), axis=-1)
    upper = z0[..., None] + reach_mm * np.sin(vert) >= zs[idx][..., None] - _GAP_TOL_MM
    vert = np.where(meets[..., None] & upper, np.arctan2(np.sin(vert), np.cos(vert)), -np.inf)
    vert = vert.reshape(vert.shape[:-2] + (-1,))
    # offset segments: n·(R + D u(ψ) − P0) = 0 with n = (−sin a, cos a)  ->  sin(ψ − a) = m/D
    k = np.minimum(idx, xs.size - 2)
    a, lo, hi = front.seg_angle[k], front.seg_lo[k], front.seg_hi[k]
    m = -np.sin(a) * (lo - x0) + np.cos(a) * (front.seg_z0[k] - z0)
    turn = np.arcsin(np.clip(m / reach_mm, -1.0, 1.0))
    seg = a[..., None] + np.stack((turn, np.pi - turn), axis=-1)
    sx = x0[..., None] + reach_mm * np.cos(seg)
    on = ((inside & (np.abs(m) <= reach_mm))[..., None] & (sx >= lo[..., None] - _GAP_TOL_MM)
          & (sx <= hi[..., None] + _GAP_TOL_MM))
    seg = np.where(on, np.arctan2(np.sin(seg), np.cos(seg)), -np.inf).reshape(seg.shape[:-2] + (-1,))
    cand = np.concatenate((vert, seg), axis=-1)
    # a rounding error above the bracket is the root at its top
    slack = 1e-7  # asin is ill-conditioned near ±90°: its rounding is ~sqrt(eps) there [rad]
    cand = np.where((cand >= bottom[..., None] - slack) & (cand <= top[..., None] + slack), cand, -np.inf)
    psi = np.clip(cand.max(axis=-1, initial=-np.inf), bottom, top)
    psi = np.where(placed & np.isfinite(psi), psi, top)
    return psi, placed


def _belly_clearance(path: WheelPath, rear_centre, front_centre, phi, rear_radius_mm, wheelbase_mm,
                     clearance_mm):
    """Least height of the belly line above the terrain under it, in the rig frame.

    The terrain near the rig is moved into the rig frame and cut to the belly's span
    ``0 <= x <= L``; a straight belly comes closest to it at a vertex inside the span or where
    the polyline crosses one of the span's ends.

    Returns
    -------
    gap_mm : ndarray
        Belly height minus the highest terrain under it (<= 0: touching). [mm]
    point_mm : ndarray, shape (..., 2)
        That terrain point, world frame. [mm]
    """
    xs, zs = path.x_mm, path.z_mm
    reach = 2.0 * (path.radius_mm + abs(clearance_mm))
    idx, inside = _vertex_window(xs, rear_centre[..., 0] - reach, front_centre[..., 0] + reach, extra=1)
    wx, wz = xs[idx] - rear_centre[..., 0, None], zs[idx] - rear_centre[..., 1, None]
    c, s = np.cos(phi)[..., None], np.sin(phi)[..., None]
    bx = c * wx + s * wz
    bz = -s * wx + c * wz + rear_radius_mm
    seg = inside[..., :-1] & inside[..., 1:] & (idx[..., 1:] > idx[..., :-1])
    x0, x1, z0, z1 = bx[..., :-1], bx[..., 1:], bz[..., :-1], bz[..., 1:]
    heights = [np.where(inside & (bx >= 0) & (bx <= wheelbase_mm), bz, -np.inf)]
    shares = []
    for end in (0.0, wheelbase_mm):
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (end - x0) / (x1 - x0)
        crosses = seg & (t >= 0) & (t <= 1)
        shares.append(np.where(crosses, t, 0.0))
        heights.append(np.where(crosses, z0 + shares[-1] * (z1 - z0), -np.inf))
    heights = np.concatenate(heights, axis=-1)
    k = np.argmax(heights, axis=-1)
    top = np.take_along_axis(heights, k[..., None], -1)[..., 0]
    # the winner: vertex k (k < w), or the segment starting at window slot j where it crosses
    # the span's rear end (w <= k < 2w - 1) or front end (k >= 2w - 1), a share t along it
    w = idx.shape[-1]
    at_rear_end = k < 2 * w - 1
    j = np.where(k < w, k, np.where(at_rear_end, k - w, k - (2 * w - 1)))
    share = np.where(at_rear_end[..., None], shares[0], shares[1])
    t = np.where(k < w, 0.0, np.take_along_axis(share, np.minimum(j, w - 2)[..., None], -1)[..., 0])
    a = np.take_along_axis(idx, j[..., None], -1)[..., 0]
    b = np.minimum(a + 1, xs.size - 1)
    point = np.stack((xs[a] + t * (xs[b] - xs[a]), zs[a] + t * (zs[b] - zs[a])), axis=-1)
    return clearance_mm - top, point


def rig_paths(points_mm, wheelbase_mm, front_radius_mm, rear_radius_mm) -> tuple[WheelPath, WheelPath]:
    """The front and rear wheels' centre curves, prepared once for a walk in chunks."""
    pts = np.asarray(points_mm, dtype=float)
    rf, rr = float(front_radius_mm), float(rear_radius_mm)
    pad = float(np.hypot(wheelbase_mm, rf - rr)) + 4.0 * max(rf, rr)
    return wheel_path(pts, rf, pad), wheel_path(pts, rr, pad)


def place_rig(points_mm, rear_x_mm, wheelbase_mm, front_radius_mm, rear_radius_mm,
              cg_from_rear_mm, cg_height_mm, belly_clearance_mm, paths=None) -> RigPose:
    """Pose of the rig at each rear-wheel-centre position along a terrain profile.

    Parameters
    ----------
    points_mm : array_like, shape (m, 2)
        Terrain ``(x, z)``, x strictly increasing. [mm]
    rear_x_mm : array_like
        Rear wheel-centre x of each position. [mm]
    wheelbase_mm : float
        Distance between the contacts on level ground, ``L``. [mm]
    front_radius_mm, rear_radius_mm : float
        Tyre radii. [mm]
    cg_from_rear_mm, cg_height_mm : float
        CG ahead of the rear contact and above the ground line, on level ground. [mm]
    belly_clearance_mm : float
        Belly height above the ground line on level ground. [mm]
    paths : (WheelPath, WheelPath), optional
        `rig_paths` of the same terrain and tyres, when the caller places the rig in chunks.

    Returns
    -------
    RigPose
        Positions where the front wheel cannot be placed have ``placed`` False and NaN values.

    Notes
    -----
    The axle centres are ``D = hypot(L, r_f − r_r)`` apart; the chassis pitch is the angle of
    the centre line minus ``atan2(r_f − r_r, L)`` [2]_.
    """
    xr = np.asarray(rear_x_mm, dtype=float)
    rf, rr, L = float(front_radius_mm), float(rear_radius_mm), float(wheelbase_mm)
    reach = float(np.hypot(L, rf - rr))
    offset = float(np.arctan2(rf - rr, L))
    front_path, rear_path = paths if paths is not None else rig_paths(points_mm, L, rf, rr)

    zr, rear_ang = centre_height(rear_path, xr)
    rear_c = np.stack((xr, zr), axis=-1)
    psi, placed = _front_on_ground(front_path, rear_c, reach)
    xf = xr + reach * np.cos(psi)
    zf, front_ang = centre_height(front_path, xf)
    front_c = np.stack((xf, zf), axis=-1)
    chord = np.arctan2(zf - zr, xf - xr)
    phi = chord - offset
    rho, rate = path_ratio(front_ang, rear_ang, chord, reach)
    front_kink = kink_deg(front_path, xf)
    rear_kink = kink_deg(rear_path, xr)
    # in a V the one-sided angles give two different ratios: none is the pose's
    in_v = (front_kink > KINK_MIN_DEG) | (rear_kink > KINK_MIN_DEG)
    rho = np.where(in_v, np.nan, rho)
    rate = np.where(in_v, np.nan, rate)

    def normal(a):
        return np.stack((-np.sin(a), np.cos(a)), axis=-1)

    front_p = front_c - rf * normal(front_ang)
    rear_p = rear_c - rr * normal(rear_ang)
    cg = rear_c + _rotate(np.stack(np.broadcast_arrays(cg_from_rear_mm, cg_height_mm - rr), -1), phi)
    gap, closest = _belly_clearance(rear_path, rear_c, front_c, phi, rr, L, belly_clearance_mm)

    def nan_out(a, deg=False):
        a = np.degrees(a) if deg else a
        mask = placed.reshape(placed.shape + (1,) * (np.ndim(a) - placed.ndim))
        return np.where(mask, a, np.nan)

    return RigPose(
        rear_centre_mm=rear_c,
        front_centre_mm=nan_out(front_c),
        pitch_deg=nan_out(phi, True),
        front_angle_deg=nan_out(front_ang, True),
        rear_angle_deg=np.degrees(rear_ang),
        front_contact_mm=nan_out(front_p),
        rear_contact_mm=rear_p,
        cg_mm=nan_out(cg),
        belly_clearance_mm=nan_out(gap),
        belly_point_mm=nan_out(closest),
        placed=placed,
        path_ratio=nan_out(rho),
        pitch_rate_rad_per_mm=nan_out(rate),
        front_kink_deg=np.where(placed, front_kink, 0.0),
        rear_kink_deg=rear_kink,
    )


def concat_poses(poses) -> RigPose:
    """One `RigPose` from the poses of consecutive chunks of positions."""
    poses = list(poses)
    return RigPose(**{f.name: np.concatenate([getattr(p, f.name) for p in poses])
                      for f in fields(RigPose)})


def vertices_within(points_mm, span_mm) -> int:
    """Most terrain vertices inside any window of `span_mm` along x (plus the padding points)."""
    xs = np.asarray(points_mm, dtype=float)[:, 0]
    return int((np.searchsorted(xs, xs + span_mm, side="right") - np.arange(xs.size)).max()) + 2
