"""The steepest plane a setup holds from every direction: tip, first wheel lift and hold angle.

The plane's geometry and statics are in `off_camber`; this module adds the traction of each axle
(the section 5 slip solve with the longitudinal friction the friction circle leaves) and finds,
per heading, the top of the contiguous range of slopes the rig holds. Vectorised over headings
and slopes together: one scan on a (heading x slope) grid, then bisection of every heading's
bracket at once; no per-heading Python loop.

References
----------
.. [1] W. F. Milliken & D. L. Milliken, *Race Car Vehicle Dynamics*, SAE, 1995, ch. 2 (friction
   circle) and ch. 18 (lateral load transfer distribution).
.. [2] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., Butterworth-Heinemann, 2012, ch. 3
   (brush model; combined slip, here in its simplest form: the sideways demand is carried first).
.. [3] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np

from . import off_camber as oc
from .analysis import effective_rig, setup_overdrive
from .setup_model import Setup
from .traction import BOTH, FRONT, LIFTED, REAR, slip_traction_state, traction_state

# What ends the hold at a heading, in the order a tie is named.
LIMITS = ("none", "tip", "lift", "slide", "crab", "slip")
HOLDS, TIP, LIFT, SLIDE, CRAB, SLIP = range(6)
LIMIT_WORDS = {
    "none": "holds to 90 deg", "tip": "tips over sideways", "lift": "an axle lifts (flips over an end)",
    "slide": "slides sideways", "crab": "the scrubbing axle crabs downhill and lets go sideways",
    "slip": "the tyres cannot hold the line (both axles let go)",
}
SCAN_STEP_DEG = 0.5
BISECT_TO_DEG = 0.01
DEFAULT_STEP_DEG = 5.0


def plane_pose(slope_deg: float, heading_deg: float) -> tuple[float, float]:
    """(β >= 0, ψ) for a setup's slope and heading: a nose-down slope is the same plane faced the
    other way (β < 0 at ψ is |β| at ψ + 180). [deg]"""
    if slope_deg < 0:
        return -slope_deg, (heading_deg + 360.0) % 360.0 - 180.0
    return slope_deg, heading_deg


def heading_grid(step_deg: float = DEFAULT_STEP_DEG) -> np.ndarray:
    """Headings 0, step, ... below 360. [deg]"""
    return np.arange(0.0, 360.0 - 1e-9, step_deg)


def _traction(nf, nr, f_req, mu_f, mu_r, stiffness, speed_ratio):
    """The section 5 solve (tyre slip under wind-up) with per-sample friction.

    The rigid limit is the Coulomb rule per overdriven axle (it broadcasts array friction)."""
    if not (np.isinf(stiffness[0]) and np.isinf(stiffness[1])):
        return slip_traction_state(nf, nr, f_req, mu_f, mu_r, stiffness[0], stiffness[1], speed_ratio)
    ratio = np.broadcast_to(np.asarray(speed_ratio, dtype=float), np.shape(f_req))
    state = np.zeros(np.shape(f_req), dtype=np.int8)
    for axle, pick in ((None, np.abs(ratio - 1.0) <= 1e-12), ("front", ratio - 1.0 > 1e-12),
                       ("rear", ratio - 1.0 < -1e-12)):  # three array calls, not a loop over samples
        if pick.any():
            state = np.where(pick, traction_state(nf, nr, f_req, mu_f, mu_r, axle).state, state)
    return _States(state)


@dataclass(frozen=True)
class _States:
    state: np.ndarray


class PlaneModel:
    """A setup reduced to numbers, classifying (slope, heading) pairs on a plane (``a_x = 0``)."""

    def __init__(self, setup: Setup):
        rig = effective_rig(setup)
        self.rig = rig
        self.weight = rig.mass_g
        self.L, self.b, self.h, self.T = rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm, rig.track_mm
        fs, fk, rs, rk = setup.grip.axle_mu()
        self.mu_f, self.mu_r = (fs, fk), (rs, rk)
        self.crr = setup.grip.rolling_resistance
        pct = setup.rig.roll_stiffness_front_pct
        self.share = None if pct is None else pct / 100.0
        self.stiffness = setup.grip.axle_stiffness() if hasattr(setup.grip, "axle_stiffness") else (np.inf, np.inf)
        self.od = setup_overdrive(setup)
        self.setup = setup
        from . import analysis

        make_ratio = getattr(analysis, "speed_ratio_of", None)  # K under load (roll-out diameters)
        self._ratio = make_ratio(setup) if make_ratio is not None else None

    # ----- pieces

    def wheel_loads(self, slope_deg, heading_deg) -> oc.WheelLoads:
        return oc.wheel_loads_g(self.weight, self.L, self.b, self.h, self.T, slope_deg, heading_deg, self.share)

    def tip(self, heading_deg):
        return oc.tip_angle_deg(self.L, self.b, self.h, self.T, heading_deg)

    def wheel_lift(self, heading_deg):
        return oc.wheel_lift_angle_deg(self.L, self.b, self.h, self.T, heading_deg, self.share)

    def speed_ratio(self, front_g, rear_g):
        """``K`` (``ρ = 1`` on a plane): the driveline's front/rear tyre speed ratio at these loads."""
        if self._ratio is not None:
            return self._ratio(front_g, rear_g)
        return np.full(np.shape(front_g), self.od.ratio)

    def traction(self, slope_deg, heading_deg, only_needed: bool = False):
        """(front N, rear N, side demand t, state codes) along the heading, steady (``a_x = 0``).

        With `only_needed`, the slip solve runs only where its answer can matter: both axles down
        and no sideways slide (the state is `LIFTED` elsewhere). States are codes into
        `traction.STATES`.
        """
        nf, nr = oc.plane_axle_loads_g(self.weight, self.L, self.b, self.h, slope_deg, heading_deg)
        f_req = oc.plane_required_g(self.weight, slope_deg, heading_deg, self.crr)
        t = oc.side_demand(slope_deg, heading_deg)
        nf, nr, f_req, t = np.broadcast_arrays(nf, nr, f_req, t)
        need = (t < self.slide_at) & (nf > 0) & (nr > 0) if only_needed else np.ones(nf.shape, bool)
        state = np.full(nf.shape, LIFTED, dtype=np.int8)
        if need.any():
            nf_, nr_, f_, t_ = nf[need], nr[need], f_req[need], t[need]
            # the friction circle; a floor keeps the solve well posed on the edge of a slide
            mu_f = tuple(np.maximum(oc.friction_circle_mu(m, t_), 1e-6) for m in self.mu_f)
            mu_r = tuple(np.maximum(oc.friction_circle_mu(m, t_), 1e-6) for m in self.mu_r)
            mu_f = (mu_f[0], np.minimum(mu_f[1], mu_f[0]))
            mu_r = (mu_r[0], np.minimum(mu_r[1], mu_r[0]))
            ts = _traction(nf_, nr_, f_, mu_f, mu_r, self.stiffness, self.speed_ratio(nf_, nr_))
            state[need] = ts.state
        return nf, nr, t, state

    @property
    def slide_at(self) -> float:
        """Side demand ``t`` at which the first axle slides sideways: ``min(μ_s,f, μ_s,r)``, less a
        rounding margin (``tan 45° sin 90°`` is 1 − 1e-16: no grip left to solve with there)."""
        return min(self.mu_f[0], self.mu_r[0]) - 1e-9

    def classify(self, slope_deg, heading_deg, with_tip: bool = True) -> np.ndarray:
        """What stops the rig at each (slope, heading): codes into `LIMITS` (``HOLDS``: it holds).

        ``with_tip=False`` leaves tip and axle lift out (their angle is exact in closed form).
        """
        slope = np.asarray(slope_deg, dtype=float)
        heading = np.asarray(heading_deg, dtype=float)
        nf, nr, t, st = self.traction(slope, heading, only_needed=True)
        code = np.full(nf.shape, HOLDS, dtype=np.int8)
        code = np.where(st == BOTH, SLIP, code)
        # a scrubbing axle slides sideways too: past its own kinetic mu it cannot carry its share
        crab = ((st == FRONT) & (t >= self.mu_f[1])) | ((st == REAR) & (t >= self.mu_r[1]))
        code = np.where(crab, CRAB, code)
        code = np.where(t >= self.slide_at, SLIDE, code)
        if with_tip:
            x, y = oc.gravity_foot_mm(self.b, self.h, slope, heading)
            x, y = np.broadcast_arrays(x, y)
            code = np.where(~(np.abs(y) < self.T / 2), TIP, code)
            code = np.where(~((x > 0) & (x < self.L)), LIFT, code)
        return code.astype(np.int8)

    # ----- the hold angle

    def hold(self, heading_deg, scan_step_deg: float = SCAN_STEP_DEG):
        """Top of the contiguous range of slopes from 0 held along each heading, and what ends it.

        Returns
        -------
        hold_deg : ndarray
            [deg], within 0.005 deg (tip and axle lift exact); 90 where nothing stops it.
        limit : ndarray of int
            Codes into `LIMITS`.

        Notes
        -----
        The traction limits are scanned every `scan_step_deg` on the whole (heading x slope) grid
        and each heading's first failure is bisected to 0.01 deg, all headings at once. The rig
        is left-right symmetric, so ``ψ`` and ``−ψ`` share one evaluation.
        """
        headings = np.atleast_1d(np.asarray(heading_deg, dtype=float))
        tip, edge = self.tip(headings)
        tip_code = np.where(edge <= 1, LIFT, TIP)
        # fold onto 0..180: the mirror heading holds exactly the same
        folded = np.abs((headings + 180.0) % 360.0 - 180.0)
        uniq, back = np.unique(folded, return_inverse=True)
        slopes = np.arange(0.0, 90.0, scan_step_deg)
        grid = self.classify(slopes[None, :], uniq[:, None], with_tip=False)
        bad = grid != HOLDS
        any_bad = bad.any(axis=1)
        first = np.argmax(bad, axis=1)
        lo = np.where(first > 0, slopes[np.maximum(first - 1, 0)], 0.0)
        hi = np.where(any_bad, slopes[first], 90.0)
        at_zero = any_bad & (first == 0)
        limit = np.where(any_bad, grid[np.arange(len(uniq)), first], HOLDS)
        todo = any_bad & ~at_zero
        while np.any(hi - lo > BISECT_TO_DEG):
            mid = (lo + hi) / 2.0
            code = self.classify(mid, uniq, with_tip=False)
            failing = code != HOLDS
            hi = np.where(todo & failing, mid, hi)
            limit = np.where(todo & failing, code, limit)
            lo = np.where(todo & ~failing, mid, lo)
            lo = np.where(todo, lo, hi)  # settled headings stop narrowing
        traction_hold = np.where(at_zero, 0.0, np.where(any_bad, (lo + hi) / 2.0, 90.0))[back]
        limit = limit[back]
        use_tip = tip <= traction_hold
        return np.where(use_tip, tip, traction_hold), np.where(use_tip, tip_code, limit).astype(np.int8)


@dataclass(frozen=True)
class HeadingSweep:
    """Per heading: tip, first wheel lift, hold; and the wheel loads at the setup's slope and heading."""

    heading_deg: np.ndarray
    tip_deg: np.ndarray
    tip_edge: np.ndarray  # into off_camber.EDGES
    wheel_lift_deg: np.ndarray  # NaN: no wheel lifts below 90
    lift_what: np.ndarray  # into off_camber.LIFTS
    hold_deg: np.ndarray
    hold_limit: np.ndarray  # into LIMITS
    slope_deg: float  # the setup's
    setup_heading_deg: float
    wheels: oc.WheelLoads  # at the setup's slope and heading, steady
    margins_deg: np.ndarray  # force-angle margin to each edge there, order of off_camber.EDGES
    share_given: bool  # the file sets the roll-stiffness share

    def limit_names(self) -> list[str]:
        return [LIMITS[c] for c in self.hold_limit]

    def worst(self) -> int:
        """Index of the heading with the lowest hold angle (first of a tie)."""
        return int(np.argmin(self.hold_deg))

    def best_climb(self) -> Optional[int]:
        """Index of the climbing heading (nose uphill, |ψ| < 90) with the highest hold angle; the
        one nearest straight up on a tie. None when the grid has no climbing heading."""
        wrapped = (self.heading_deg + 180.0) % 360.0 - 180.0
        climbing = np.abs(wrapped) < 90.0
        if not climbing.any():
            return None
        score = np.where(climbing, self.hold_deg, -np.inf)
        top = score.max()
        ties = np.flatnonzero(score >= top - 1e-9)
        return int(ties[np.argmin(np.abs(wrapped[ties]))])


def heading_sweep(setup: Setup, headings_deg=None) -> HeadingSweep:
    """Tip, first wheel lift and hold angle at every heading, steady (``a_x = 0``).

    Parameters
    ----------
    setup : Setup
    headings_deg : array_like, optional
        Default every 5 deg from 0 to 355. [deg]
    """
    headings = heading_grid() if headings_deg is None else np.asarray(headings_deg, dtype=float)
    model = PlaneModel(setup)
    tip, edge = model.tip(headings)
    lift, what = model.wheel_lift(headings)
    hold, limit = model.hold(headings)
    slope, heading = plane_pose(setup.terrain.slope_deg, setup.terrain.heading_deg)
    wheels = model.wheel_loads(slope, heading)
    margins = oc.edge_margins_deg(model.L, model.b, model.h, model.T, slope, heading)
    return HeadingSweep(headings, tip, edge, lift, what, hold, limit, float(slope), float(heading), wheels,
                        margins, model.share is not None)


def at_pose(hs: HeadingSweep, setup: Setup) -> HeadingSweep:
    """`hs` with the wheel loads and margins at `setup`'s slope and heading (the per-heading curves
    do not depend on them, so stepping the slope or heading needs no new sweep)."""
    from dataclasses import replace

    model = PlaneModel(setup)
    slope, heading = plane_pose(setup.terrain.slope_deg, setup.terrain.heading_deg)
    return replace(hs, slope_deg=float(slope), setup_heading_deg=float(heading),
                   wheels=model.wheel_loads(slope, heading),
                   margins_deg=oc.edge_margins_deg(model.L, model.b, model.h, model.T, slope, heading))
