"""Where the rig sits on a terrain profile (engine.course_geometry), checked by plane geometry.

Sources named beside each check:
- a wheel of radius r resting against a step of height H < r touches the edge at
  acos((r − H)/r) from horizontal (right triangle: centre height r, edge H below it by r − H);
- a wheel on a straight incline has its centre r from the line along the normal, and a rig with
  both wheels on it pitches at the incline's angle (Jazar, *Vehicle Dynamics*, ch. 2);
- the centre curve is the boundary of the terrain dilated by the wheel disc (Serra, *Image
  Analysis and Mathematical Morphology*, 1982): no terrain point closer than r, and one at r;
- the front wheel settles on the first point of its curve met rotating down from nose-up:
  checked by a dense scan.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, example, given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from slopetune.engine.course_geometry import centre_height, place_rig, wheel_path


def _distance_to_polyline(pts, q):
    """Least distance from points q (n, 2) to a polyline (m, 2), brute force."""
    a, b = pts[:-1][None], pts[1:][None]
    ab = b - a
    t = np.clip(((q[:, None] - a) * ab).sum(-1) / (ab * ab).sum(-1), 0.0, 1.0)
    closest = a + t[..., None] * ab
    return np.sqrt(((q[:, None] - closest) ** 2).sum(-1)).min(axis=1)


@pytest.mark.parametrize("r, h", [(56.0, 20.0), (57.0, 45.0), (30.0, 29.0), (100.0, 1.0)])
def test_step_edge_contact_angle(r, h):
    """Wheel of radius r rolling into a step of height H < r: at the first touch (centre still r
    above the lower ground) the contact angle is acos((r − H)/r) (right-triangle geometry)."""
    edge_x = 500.0
    path = wheel_path([[0.0, 0.0], [edge_x - 1e-3, 0.0], [edge_x, h], [1000.0, h]], r)
    touch_x = edge_x - math.sqrt(r * r - (r - h) ** 2)  # centre x where the wheel meets the edge
    z, angle = centre_height(path, np.array([touch_x - 1e-9, touch_x + 1e-9]))
    assert_allclose(z, [r, r], atol=1e-6)  # still resting on the lower ground
    assert angle[0] == 0.0  # on the ground just before
    assert_allclose(angle[1], math.acos((r - h) / r), atol=1e-6)  # on the edge just after


def test_rolling_onto_the_edge_never_exceeds_the_first_touch_angle():
    """The walk's front contact angle at a 40 mm step peaks at acos((r − H)/r) (geometry, as
    above) and decreases as the wheel climbs it."""
    r, h = 57.0, 40.0
    pts = [[0.0, 0.0], [600.0, 0.0], [600.5, h], [1500.0, h]]
    xs = np.arange(100.0, 400.0, 0.25)
    pose = place_rig(pts, xs, 313.0, r, r, 180.0, 88.0, 45.0)
    first = math.degrees(math.acos((r - h) / r))
    assert pose.front_angle_deg.max() <= first + 1e-6
    assert pose.front_angle_deg.max() > first - 1.0
    climbing = pose.front_angle_deg[np.argmax(pose.front_angle_deg):]
    climbing = climbing[climbing > 0]
    assert np.all(np.diff(climbing) <= 1e-9)


@given(slope=st.floats(-50.0, 50.0), rf=st.floats(25.0, 100.0), rr=st.floats(25.0, 100.0),
       wheelbase=st.floats(150.0, 500.0))
def test_straight_incline_pose(slope, rf, rr, wheelbase):
    """Both wheels on one incline: pitch = incline angle, both contacts on it at that angle, the
    centres r from the line along its normal (Jazar ch. 2), and the CG at (b, h) in its frame."""
    th = math.radians(slope)
    length = 3000.0
    pts = [[0.0, 0.0], [length, length * math.tan(th)]]
    xs = np.array([length * 0.4, length * 0.5])
    b, h = 0.55 * wheelbase, 0.3 * wheelbase
    pose = place_rig(pts, xs, wheelbase, rf, rr, b, h, 40.0)
    assert pose.placed.all()
    assert_allclose(pose.pitch_deg, slope, atol=1e-8)
    assert_allclose(pose.front_angle_deg, slope, atol=1e-8)
    assert_allclose(pose.rear_angle_deg, slope, atol=1e-8)
    along, up = np.array([math.cos(th), math.sin(th)]), np.array([-math.sin(th), math.cos(th)])
    for centre, contact, r in ((pose.front_centre_mm, pose.front_contact_mm, rf),
                               (pose.rear_centre_mm, pose.rear_contact_mm, rr)):
        assert_allclose(centre @ up, r, atol=1e-7)
        assert_allclose(contact @ up, 0.0, atol=1e-7)
    assert_allclose((pose.front_contact_mm - pose.rear_contact_mm) @ along, wheelbase, rtol=1e-10)
    assert_allclose((pose.cg_mm - pose.rear_contact_mm) @ along, b, rtol=1e-10)
    assert_allclose((pose.cg_mm - pose.rear_contact_mm) @ up, h, rtol=1e-9)
    assert_allclose(pose.belly_clearance_mm, 40.0, atol=1e-7)


profiles = st.lists(st.tuples(st.floats(20.0, 200.0), st.floats(-60.0, 60.0)), min_size=3, max_size=12)


def _polyline(steps):
    x, z, pts = 0.0, 0.0, [[0.0, 0.0]]
    for run, angle in steps:
        x += run
        z += run * math.tan(math.radians(angle))
        pts.append([x, z])
    return np.array(pts)


@given(steps=profiles, r=st.floats(20.0, 80.0))
def test_centre_curve_is_r_from_the_terrain(steps, r):
    """Every centre point is at least r from the terrain and touches it (distance exactly r):
    the boundary of the dilation by the wheel disc (Serra 1982). Brute-force distances."""
    pts = _polyline(steps)
    path = wheel_path(pts, r)
    xq = np.linspace(pts[0, 0], pts[-1, 0], 400)
    z, angle = centre_height(path, xq)
    padded = np.vstack(([pts[0, 0] - 10 * r, pts[0, 1]], pts, [pts[-1, 0] + 10 * r, pts[-1, 1]]))
    dist = _distance_to_polyline(padded, np.stack((xq, z), -1))
    assert_allclose(dist, r, rtol=1e-9, atol=1e-7)
    contact = np.stack((xq + r * np.sin(angle), z - r * np.cos(angle)), -1)  # centre − r n
    assert_allclose(_distance_to_polyline(padded, contact), 0.0, atol=1e-7)


@given(steps=profiles, wheelbase=st.floats(150.0, 450.0), rf=st.floats(25.0, 70.0), rr=st.floats(25.0, 70.0))
@example(steps=[(20.0, 0.0), (20.0, 0.0), (62.0, 0.0), (200.0, 60.0), (136.0, -39.0)], wheelbase=214.0,
         rf=25.0, rr=25.0)
def test_front_wheel_settles_on_the_first_touch(steps, wheelbase, rf, rr):
    """The front centre is on its curve at the centre distance, and rotating the chassis about the
    rear centre from nose-up, no earlier angle would have met the front curve (dense scan)."""
    pts = _polyline(steps)
    reach = math.hypot(wheelbase, rf - rr)
    span = pts[-1, 0] - pts[0, 0]
    assume(span > reach + 1.0)
    xs = np.linspace(pts[0, 0], pts[-1, 0] - reach, 7)
    pose = place_rig(pts, xs, wheelbase, rf, rr, 0.5 * wheelbase, 0.3 * wheelbase, 40.0)
    front = wheel_path(pts, rf, reach + 4 * max(rf, rr))
    ok = pose.placed
    d = pose.front_centre_mm[ok] - pose.rear_centre_mm[ok]
    assert_allclose(np.hypot(d[:, 0], d[:, 1]), reach, rtol=1e-9)
    z_curve, _ = centre_height(front, pose.front_centre_mm[ok, 0])
    assert_allclose(pose.front_centre_mm[ok, 1], z_curve, atol=1e-6)
    psi = np.arctan2(d[:, 1], d[:, 0])
    for rear, found in zip(pose.rear_centre_mm[ok], psi):
        above = np.linspace(found + 1e-6, math.radians(89.0), 3000)
        gap = rear[1] + reach * np.sin(above) - centre_height(front, rear[0] + reach * np.cos(above))[0]
        assert np.all(gap > -1e-6)


def test_belly_touches_a_narrow_ridge():
    """A ridge between the wheels: clearance = belly height − ridge height (level rig, both wheels
    on level ground either side), so a 50 mm ridge touches a 45 mm belly and a 40 mm one does not."""
    r = 50.0
    for ridge, touches in ((50.0, True), (40.0, False)):
        pts = [[0.0, 0.0], [480.0, 0.0], [500.0, ridge], [520.0, 0.0], [1200.0, 0.0]]
        pose = place_rig(pts, [350.0], 313.0, r, r, 180.0, 88.0, 45.0)
        assert_allclose(pose.pitch_deg, 0.0, atol=1e-9)
        assert_allclose(pose.belly_clearance_mm, 45.0 - ridge, atol=1e-9)
        assert_allclose(pose.belly_point_mm[0], [500.0, ridge], atol=1e-9)
        assert bool(pose.belly_clearance_mm[0] <= 0) == touches


def test_belly_over_a_crest_hand_worked():
    """Rig straddling a symmetric crest: 20° faces up to a peak at x = 500 and down again.

    Wheel radius r = 50, centres 156.5 mm either side of the peak, belly c = 45 mm. On a face the
    centre is r along the face normal, i.e. r/cos 20° straight above the face:
        z_c = (500 − 156.5) tan 20° + 50/cos 20° = 125.02 + 53.21 = 178.23 mm.
    By symmetry the rig is level; its ground line is r below the centres and the belly c above
    that, so the clearance over the peak (500 tan 20° = 181.99) is
        c − r − 156.5 tan 20° + r/cos 20° = 45 − 50 − 56.96 + 53.21 = −8.75 mm: it touches.
    """
    r, c, half = 50.0, 45.0, 156.5
    t, sec = math.tan(math.radians(20.0)), 1.0 / math.cos(math.radians(20.0))
    pts = [[0.0, 0.0], [500.0, 500.0 * t], [1000.0, 0.0]]
    pose = place_rig(pts, [500.0 - half], 2 * half, r, r, half, 80.0, c)
    assert_allclose(pose.rear_centre_mm[0, 1], 178.23, atol=0.005)
    assert_allclose(pose.pitch_deg, 0.0, atol=1e-9)
    assert_allclose(pose.rear_angle_deg, 20.0, atol=1e-9)
    assert_allclose(pose.front_angle_deg, -20.0, atol=1e-9)
    assert_allclose(pose.belly_clearance_mm, c - r - half * t + r * sec, rtol=1e-12)
    assert_allclose(pose.belly_clearance_mm, -8.75, atol=0.005)
    assert_allclose(pose.belly_point_mm[0], [500.0, 500.0 * t], atol=1e-9)


# ----- path ratio (MODEL §6) ----------------------------------------------------------------------

def _ramp_foot_pose_by_hand(x_r, r, reach, alpha_deg, foot_x):
    """Rear centre on the flat at (x_r, r); front centre on the line r above the face, which rises
    at α from (foot_x, 0): solve |F − R| = reach on that line (a quadratic, worked by hand)."""
    a = math.radians(alpha_deg)
    # offset line: points (foot_x, 0) + s (cos a, sin a) + r (−sin a, cos a)
    p0 = np.array([foot_x - r * math.sin(a), r * math.cos(a)])
    u = np.array([math.cos(a), math.sin(a)])
    d = p0 - np.array([x_r, r])
    b, c = 2.0 * (d @ u), d @ d - reach * reach
    s = (-b + math.sqrt(b * b - 4.0 * c)) / 2.0
    front = p0 + s * u
    return front, math.atan2(front[1] - r, front[0] - x_r)


@pytest.mark.parametrize("alpha", [20.0, 35.0, 55.0])
def test_ramp_foot_path_ratio_worked_by_hand(alpha):
    """Rear on the flat, front on a face at α (equal tyres): ρ = cos φ / cos(α − φ), with the pitch
    φ from the hand-solved pose (velocities of the two ends of a rigid link have equal components
    along it: Meriam & Kraige, *Dynamics*, ch. 5). Worked example at α = 35°, rear x = 300 mm,
    r = 56, L = 313, foot at 600 mm: φ = 3.842°, ρ = cos 3.842° / cos 31.158° = 1.1659."""
    r, reach, foot = 56.0, 313.0, 600.0
    top = 400.0 * math.tan(math.radians(alpha))
    pts = [[0.0, 0.0], [foot, 0.0], [foot + 400.0, top], [foot + 1000.0, top]]
    xs = np.array([300.0, 330.0, 360.0])
    pose = place_rig(pts, xs, reach, r, r, 180.0, 88.0, 44.0)
    for i, x in enumerate(xs):
        front, phi = _ramp_foot_pose_by_hand(x, r, reach, alpha, foot)
        assert pose.front_angle_deg[i] == pytest.approx(alpha) and pose.rear_angle_deg[i] == 0.0
        assert_allclose(pose.front_centre_mm[i], front, atol=1e-7)
        assert_allclose(math.radians(pose.pitch_deg[i]), phi, atol=1e-9)
        expected = math.cos(phi) / math.cos(math.radians(alpha) - phi)
        assert_allclose(pose.path_ratio[i], expected, rtol=1e-9)
    if alpha == 35.0:
        assert pose.pitch_deg[0] == pytest.approx(3.842, abs=1e-3)
        assert pose.path_ratio[0] == pytest.approx(1.1659, abs=1e-4)


@st.composite
def rough_courses(draw):
    """Polylines of 4 to 12 points, x increasing, slopes within ±50°, steps of 20 to 200 mm."""
    n = draw(st.integers(4, 12))
    xs, zs = [0.0], [0.0]
    for _ in range(n - 1):
        dx = draw(st.floats(20.0, 200.0))
        slope = draw(st.floats(-50.0, 50.0))
        xs.append(xs[-1] + dx)
        zs.append(zs[-1] + dx * math.tan(math.radians(slope)))
    return np.stack((xs, zs), -1)


@given(pts=rough_courses(), r=st.floats(30.0, 70.0), share=st.floats(0.05, 0.6), rf=st.floats(30.0, 70.0))
def test_path_ratio_matches_finite_differences(pts, r, share, rf):
    """ρ and the pitch rate against central differences of the placement itself: the arc lengths
    travelled by the two centres (chords of ±0.001 mm steps) and the change of pitch, on random
    courses, away from kinks and contact changes (where the one-sided derivatives differ)."""
    wheelbase = 250.0
    span = pts[-1, 0] - pts[0, 0]
    assume(span > wheelbase + 2 * max(r, rf) + 50.0)
    x = pts[0, 0] + share * (span - wheelbase - 2 * max(r, rf))
    h = 1e-3
    xs = np.array([x - h, x, x + h])
    pose = place_rig(pts, xs, wheelbase, rf, r, 120.0, 80.0, 40.0)
    assume(pose.placed.all())
    # the same contact element either side: same contact angle at all three (no switch inside)
    assume(np.ptp(pose.front_angle_deg) < 0.05 and np.ptp(pose.rear_angle_deg) < 0.05)
    assume(np.isfinite(pose.path_ratio[1]))
    fc, rc = pose.front_centre_mm, pose.rear_centre_mm
    ds_f = np.linalg.norm(fc[2] - fc[0]) * np.sign(fc[2, 0] - fc[0, 0])
    ds_r = np.linalg.norm(rc[2] - rc[0])
    assert_allclose(pose.path_ratio[1], ds_f / ds_r, rtol=1e-4, atol=1e-4)
    rate = math.radians(pose.pitch_deg[2] - pose.pitch_deg[0]) / ds_r
    assert_allclose(pose.pitch_rate_rad_per_mm[1], rate, atol=1e-6 + 1e-4 * abs(rate))


def test_wheel_in_a_v_is_flagged_not_given_one_face():
    """A symmetric notch with ±45° faces, narrower than the tyre: at x = 150 the rear tyre touches
    both faces (its centre sits on the bisector at the kink of its centre curve); the contact
    angle jumps by 90° there. Away from it one face touches and nothing is flagged."""
    r = 56.0
    pts = [[0.0, 0.0], [100.0, 0.0], [150.0, -50.0], [200.0, 0.0], [700.0, 0.0]]
    pose = place_rig(pts, np.array([140.0, 150.0, 160.0]), 313.0, r, r, 180.0, 88.0, 44.0)
    assert_allclose(pose.rear_kink_deg, [0.0, 90.0, 0.0], atol=1e-6)
    assert pose.rear_in_v.tolist() == [False, True, False]
    assert math.isnan(pose.path_ratio[1])
    # the centre of a wheel resting on both 45° faces: r/sin 45° above the notch bottom (by hand)
    assert_allclose(pose.rear_centre_mm[1], [150.0, -50.0 + r / math.sin(math.radians(45.0))], atol=1e-9)
