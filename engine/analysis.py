"""One call that analyses a setup over any array of slopes: loads, traction and named angles.

The CLI, the tuner and the planner all go through `analyse`; no physics lives outside `engine/`.

The named angles are exact. Every boundary between traction states is a zero of a function of
the form ``p cos θ + q sin θ + c`` (normal forces and friction limits are all linear in
``cos θ``, ``sin θ`` and 1), so the candidates are found in closed form by
`slope_statics.solve_cos_sin` and the state is then checked between them.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from . import slope_statics as st
from .ballast import combine_ballast
from .overdrive import OverdriveFigures, gear_overdrive_pct, overdrive_figures
from .setup_model import Setup
from .traction import HOLDING, LIFTED, STATES, TractionState, required_force_g, traction_state


@dataclass(frozen=True)
class EffectiveRig:
    """The rig that computes: measured rig plus ballast."""

    mass_g: float
    wheelbase_mm: float
    cg_from_rear_mm: float
    cg_height_mm: float
    track_mm: float
    tire_dia_front_mm: float
    tire_dia_rear_mm: float

    @property
    def front_bias_pct(self) -> float:
        return 100.0 * self.cg_from_rear_mm / self.wheelbase_mm


def effective_rig(setup: Setup) -> EffectiveRig:
    r = setup.rig
    mass, x, z = combine_ballast(r)
    return EffectiveRig(mass, r.wheelbase_mm, x, z, r.track_mm, r.tire_dia_front_mm, r.tire_dia_rear_mm)


def setup_overdrive(setup: Setup) -> OverdriveFigures:
    d = setup.driveline
    gear = gear_overdrive_pct(d.front_stages, d.rear_stages) if d.uses_stages else (d.overdrive_pct or 0.0)
    return overdrive_figures(gear, setup.rig.tire_dia_front_mm, setup.rig.tire_dia_rear_mm)


@dataclass(frozen=True)
class Sweep:
    """Per-slope results; every array has the shape of `slope_deg`."""

    slope_deg: np.ndarray
    front_normal_g: np.ndarray
    rear_normal_g: np.ndarray
    required_g: np.ndarray
    traction: TractionState

    @property
    def lifted(self) -> list[Optional[str]]:
        """Per slope: "front", "rear" or None (the axle whose normal force is <= 0)."""
        return [
            "front" if f <= 0 else "rear" if r <= 0 else None
            for f, r in zip(self.front_normal_g.ravel(), self.rear_normal_g.ravel())
        ]

    @property
    def slipping(self) -> list[str]:
        return [STATES[c] for c in self.traction.state.ravel()]


@dataclass(frozen=True)
class Analysis:
    setup: Setup
    rig: EffectiveRig
    overdrive: OverdriveFigures
    load: str  # "climb" or "none"
    accel_g: float
    angles_deg: dict  # name -> float or None
    max_grade_limit: str  # "slip" or "lift"
    sweep: Sweep
    _model: "_Model" = field(repr=False, compare=False, default=None)

    def at(self, slope_deg) -> Sweep:
        """The same setup, load and acceleration evaluated at other slopes (cheap: no angles)."""
        return self._model.sweep(slope_deg)


class _Model:
    """The setup reduced to numbers, evaluating loads and traction at any slopes."""

    def __init__(self, rig: EffectiveRig, setup: Setup, overdriven, load: str, accel_g: float):
        self.rig, self.overdriven = rig, overdriven
        self.climb = load == "climb"
        self.accel = accel_g if self.climb else 0.0
        fs, fk, rs, rk = setup.grip.axle_mu()
        self.mu_f, self.mu_r = (fs, fk), (rs, rk)
        self.crr = setup.grip.rolling_resistance

    def loads(self, slope_deg):
        r = self.rig
        return st.axle_loads_g(r.mass_g, r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, slope_deg, self.accel)

    def required(self, slope_deg):
        if not self.climb:
            return np.zeros_like(np.asarray(slope_deg, dtype=float))
        return required_force_g(self.rig.mass_g, slope_deg, self.crr, self.accel)

    def state(self, slope_deg) -> TractionState:
        nf, nr = self.loads(slope_deg)
        return traction_state(nf, nr, self.required(slope_deg), self.mu_f, self.mu_r, self.overdriven)

    def sweep(self, slope_deg) -> Sweep:
        slopes = np.asarray(slope_deg, dtype=float)
        nf, nr = self.loads(slopes)
        f_req = self.required(slopes)
        return Sweep(slopes, nf, nr, f_req, traction_state(nf, nr, f_req, self.mu_f, self.mu_r, self.overdriven))

    def fast_first_margin(self, slope_deg):
        """``μ_s,fast N_fast − μ_s,slow N_slow − F_req``: negative where the fast axle slips first."""
        nf, nr = self.loads(slope_deg)
        f = self.required(slope_deg)
        (msf, _), (msr, _) = self.mu_f, self.mu_r
        if self.overdriven == "rear":
            return msr * nr - msf * nf - f
        return msf * nf - msr * nr - f

    def boundary_weights(self):
        """(α, β, γ) of every function ``α N_f + β N_r + γ F_req`` whose zeros can separate two
        traction states: lift, which axle slips first, and each axle holding what the other leaves."""
        (msf, mkf), (msr, mkr) = self.mu_f, self.mu_r
        out = [(1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (msf, -msr, -1.0), (-msf, msr, -1.0)]
        for s in (1.0, -1.0):
            out += [
                (s * mkf, msr, -s), (-s * mkf, msr, -s),  # rear holds what the slipping front leaves
                (msf, s * mkr, -s), (msf, -s * mkr, -s),  # front holds what the slipping rear leaves
                (msf, msr, -s),  # no overdrive: both together
            ]
        return out

    def trig_coefficients(self):
        """(p, q, c) of N_f, N_r and F_req, each ``p cos θ + q sin θ + c``, from 0°, 90°, 180°."""
        t = np.array([0.0, 90.0, 180.0])
        nf, nr = self.loads(t)
        rows = np.array([nf, nr, self.required(t)])
        c = (rows[:, 0] + rows[:, 2]) / 2.0
        return np.column_stack([rows[:, 0] - c, rows[:, 1] - c, c])


def _breakpoints(model: _Model, weights, lo_deg, hi_deg):
    """`lo_deg`, `hi_deg` and every zero in between of the weighted functions, sorted."""
    coef = np.asarray(weights, dtype=float) @ model.trig_coefficients()
    pts = {lo_deg, hi_deg}
    for p, q, c in coef:
        pts.update(r for r in st.solve_cos_sin(p, q, c) if lo_deg < r < hi_deg)
    return np.array(sorted(pts))


def _first_failure(pred, pts):
    """First angle of `pts` after which `pred` (array -> bool array) stops being true.

    Returns (angle, sample) where `sample` is an angle just past it, or (None, None) when `pred`
    holds up to the last point. `pred` is checked at the first point and between each pair.
    """
    mids = (pts[:-1] + pts[1:]) / 2.0
    probe = np.concatenate(([pts[0]], mids))
    ok = pred(probe)
    if not ok[0]:
        return float(pts[0]), float(pts[0])
    bad = np.flatnonzero(~ok[1:])
    if bad.size == 0:
        return None, None
    i = int(bad[0])
    return float(pts[i]), float(mids[i])


def _handover_deg(model: _Model) -> Optional[float]:
    """Smallest climbing slope >= 0 where the overdriven axle is the first to slip.

    Only where both axles are on the ground: past a lift nothing slips (the rig has tipped).
    """
    if model.overdriven is None:
        return None
    (msf, _), (msr, _) = model.mu_f, model.mu_r
    w = (-msf, msr, -1.0) if model.overdriven == "rear" else (msf, -msr, -1.0)
    pts = _breakpoints(model, [w, (1.0, 0.0, 0.0), (0.0, 1.0, 0.0)], 0.0, 90.0)

    def not_handed_over(t):
        nf, nr = model.loads(t)
        return (model.fast_first_margin(t) >= 0) | (nf <= 0) | (nr <= 0)

    angle, _ = _first_failure(not_handed_over, pts)
    return angle


def _max_grade(model: _Model) -> tuple[float, str]:
    pts = _breakpoints(model, model.boundary_weights(), 0.0, 90.0)
    angle, sample = _first_failure(lambda t: np.isin(model.state(t).state, HOLDING), pts)
    if angle is None:
        return 90.0, "lift"
    code = int(model.state(np.array([sample])).state[0])
    return angle, ("lift" if code == LIFTED else "slip")


def _finite_or_none(x) -> Optional[float]:
    return float(x) if x is not None and np.isfinite(x) else None


def analyse(setup: Setup, slopes_deg=None, *, accel_g: Optional[float] = None, load: Optional[str] = None) -> Analysis:
    """Loads, traction state and named angles of `setup` over `slopes_deg`.

    Parameters
    ----------
    setup : Setup
        The setup as loaded or edited; ballast is applied here.
    slopes_deg : array_like, optional
        Slopes to sweep, nose up positive. [deg] Default 0 to 90 by 1.
    accel_g : float, optional
        Throttle acceleration along the slope; default the setup's ``terrain.accel_g``. [g]
        Ignored with ``load="none"`` (no tyre force, no acceleration).
    load : {"climb", "none"}, optional
        Steady climb (tyres carry ``F_req``) or no load; default the setup's ``terrain.load``.

    Returns
    -------
    Analysis
        ``angles_deg`` holds ``balance``, ``front_lift``, ``rear_lift``, ``sidehill_roll``,
        ``sidehill_slide``, ``handover``, ``handover_no_load`` and ``max_grade`` [deg]; None where
        an angle does not exist (no overdrive, or no such slope below 90°).
    """
    if slopes_deg is None:
        slopes_deg = np.arange(0.0, 91.0, 1.0)
    slopes = np.asarray(slopes_deg, dtype=float)
    load = setup.terrain.load if load is None else load
    accel = setup.terrain.accel_g if accel_g is None else accel_g
    if load not in ("climb", "none"):
        raise ValueError(f"load must be 'climb' or 'none', not {load!r}")
    rig = effective_rig(setup)
    od = setup_overdrive(setup)
    model = _Model(rig, setup, od.overdriven_axle, load, accel)
    no_load = _Model(rig, setup, od.overdriven_axle, "none", 0.0)

    sweep = model.sweep(slopes)

    climb = model if model.climb else _Model(rig, setup, od.overdriven_axle, "climb", 0.0)
    max_grade, limit = _max_grade(model)
    a = model.accel
    b, h, L = rig.cg_from_rear_mm, rig.cg_height_mm, rig.wheelbase_mm
    angles = {
        "balance": _finite_or_none(st.balance_angle_deg(L, b, h, a)),
        "front_lift": _finite_or_none(st.front_lift_angle_deg(b, h, a)),
        "rear_lift": _finite_or_none(st.rear_lift_angle_deg(L, b, h, a)),
        "sidehill_roll": st.sidehill_roll_angle_deg(rig.track_mm, h),
        "sidehill_slide": st.sidehill_slide_angle_deg(model.mu_f[0], model.mu_r[0]),
        "handover": _handover_deg(climb),
        "handover_no_load": _handover_deg(no_load),
        "max_grade": max_grade,
    }
    return Analysis(setup, rig, od, load, a, angles, limit, sweep, model)
