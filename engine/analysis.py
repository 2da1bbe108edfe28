"""One call that analyses a setup over any array of slopes: loads, tyre slip and named angles.

The CLI, the tuner and the planner all go through `analyse`; no physics lives outside `engine/`.

Named results are for a steady climb (``a_x = 0``), the rig's own figures; the file's throttle
applies to the sweep rows and gives a second set of angles beside them (``angles_with_throttle_deg``).
Named angles come from `slope_angles` (exact with a constant speed ratio, scanned and bisected to
0.01° when the roll-out diameters change with load).

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2.
.. [2] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2 (brush model).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Optional

import numpy as np

from . import slope_statics as st
from .ballast import combine_ballast
from .overdrive import (
    SAME_SPEED_TOL, OverdriveFigures, gear_overdrive_pct, loaded_speed_ratio, overdrive_figures,
    rolling_dia_under_load_mm,
)
from .setup_model import Setup
from .slope_angles import named_climb_angles, saturation_weights, weight_only_handover_deg
from .traction import (
    BOTH, FRONT, LIFTED, REAR, RIGID_STAND_IN, STATES, TractionState, required_force_g, slip_traction_state,
)


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


def gear_pct(setup: Setup) -> float:
    """Gear overdrive of the setup's driveline (stages or percentage). [%]"""
    d = setup.driveline
    return gear_overdrive_pct(d.front_stages, d.rear_stages) if d.uses_stages else (d.overdrive_pct or 0.0)


def setup_overdrive(setup: Setup) -> OverdriveFigures:
    """Overdrive figures at the level static load, from the roll-out diameters when the file has
    them (they are the reference of the tyres' slip, MODEL section 5), else the tyre diameters."""
    dia_f, dia_r = setup.rig.rolling_dia_mm()
    return overdrive_figures(gear_pct(setup), dia_f, dia_r)


class SpeedRatio:
    """``K`` of a setup at any axle loads: gears and roll-out diameters under load (MODEL sec. 4)."""

    def __init__(self, setup: Setup, level_front_g: float, level_rear_g: float):
        r = setup.rig
        self.gear_pct = gear_pct(setup)
        self.dia_f, self.dia_r = r.rolling_dia_mm()
        self.loss_f, self.loss_r = r.rolling_dia_loss_front_mm_per_100g, r.rolling_dia_loss_rear_mm_per_100g
        self.free_f, self.free_r = r.tire_dia_front_mm, r.tire_dia_rear_mm
        self.level_f, self.level_r = level_front_g, level_rear_g
        self.constant = self.loss_f == 0 and self.loss_r == 0
        self.level = float(loaded_speed_ratio(self.gear_pct, self.dia_f, self.dia_r))

    def __call__(self, front_normal_g, rear_normal_g):
        """``K`` at these axle loads [gf]; the shape of the loads. [-]"""
        nf, nr = np.broadcast_arrays(np.asarray(front_normal_g, float), np.asarray(rear_normal_g, float))
        if self.constant:
            return np.full(nf.shape, self.level)
        d_f = rolling_dia_under_load_mm(self.dia_f, self.loss_f, nf, self.level_f, self.free_f)
        d_r = rolling_dia_under_load_mm(self.dia_r, self.loss_r, nr, self.level_r, self.free_r)
        return loaded_speed_ratio(self.gear_pct, d_f, d_r)


def speed_ratio_of(setup: Setup) -> SpeedRatio:
    """The setup's `SpeedRatio`, with the level loads of its effective rig (ballast included)."""
    rig = effective_rig(setup)
    nf, nr = st.axle_loads_g(rig.mass_g, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm, 0.0)
    return SpeedRatio(setup, float(nf), float(nr))


@dataclass(frozen=True)
class Sweep:
    """Per-slope results; every array has the shape of `slope_deg`."""

    slope_deg: np.ndarray
    front_normal_g: np.ndarray
    rear_normal_g: np.ndarray
    required_g: np.ndarray
    traction: TractionState
    speed_ratio: np.ndarray = field(default=None)  # K at each slope [-]

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
    accel_g: float  # the file's throttle: applies to `sweep` and `angles_with_throttle_deg` [g]
    angles_deg: dict  # steady climb (a_x = 0): name -> float or None
    max_grade_limit: str  # "slip" or "lift"
    sweep: Sweep
    angles_with_throttle_deg: Optional[dict] = None  # same keys with the throttle; None at 0 g
    throttle_max_grade_limit: Optional[str] = None
    _model: "_Model" = field(repr=False, compare=False, default=None)

    def at(self, slope_deg) -> Sweep:
        """The same setup and throttle evaluated at other slopes (cheap: no angles)."""
        return self._model.sweep(slope_deg)

    def scrub_bands(self) -> dict:
        """How far a scrub, once started, persists (MODEL section 5): see `scrub_band.scrub_bands`."""
        from .scrub_band import scrub_bands

        return scrub_bands(self._model.steady())

    def stiffness_sensitivity(self) -> dict:
        """Handover and max grade with half and double the slip stiffness and with rigid tyres:
        {"softer": (c, angles), "stiffer": ..., "rigid": ...} (steady climb).

        Three more named-angle searches, so the answer is kept per rig: the slope, heading and
        throttle being tuned do not change it, and a held slope key must not redo it."""
        key = replace(self.setup, terrain=replace(self.setup.terrain, slope_deg=0.0, accel_g=0.0, heading_deg=0.0))
        if key not in _SENSITIVITY:
            if len(_SENSITIVITY) >= 16:
                _SENSITIVITY.pop(next(iter(_SENSITIVITY)))
            _SENSITIVITY[key] = self._sensitivity()
        return _SENSITIVITY[key]

    def _sensitivity(self) -> dict:
        steady = self._model.steady()
        out = {}
        cf, cr = steady.stiffness
        for label, scale in (("softer", 0.5), ("stiffer", 2.0), ("rigid", math.inf)):
            if math.isinf(cf) and math.isinf(cr) and label != "rigid":
                continue
            c = (cf * scale, cr * scale)
            if not math.isinf(scale) and min(c[0] - 3 * steady.mu_f[0], c[1] - 3 * steady.mu_r[0]) <= 0:
                continue  # a brush tyre that soft cannot slide fully; not a tyre to compare with
            angles = named_climb_angles(steady.with_stiffness(c))
            out[label] = (c[0] if c[0] == c[1] else c, angles)
        return out


_SENSITIVITY: dict = {}  # rig (terrain zeroed) -> stiffness_sensitivity(), the last few


class _Model:
    """The setup reduced to numbers, evaluating loads and traction at any slopes."""

    def __init__(self, rig: EffectiveRig, setup: Setup, accel_g: float, ratio: SpeedRatio,
                 stiffness: Optional[tuple] = None):
        self.rig, self.setup, self.accel, self.ratio = rig, setup, accel_g, ratio
        fs, fk, rs, rk = setup.grip.axle_mu()
        self.mu_f, self.mu_r = (fs, fk), (rs, rk)
        self.crr = setup.grip.rolling_resistance
        self.stiffness = stiffness if stiffness is not None else setup.grip.axle_stiffness()
        self.constant_ratio = ratio.constant

    def steady(self) -> "_Model":
        return self if self.accel == 0 else _Model(self.rig, self.setup, 0.0, self.ratio, self.stiffness)

    def with_stiffness(self, stiffness) -> "_Model":
        return _Model(self.rig, self.setup, self.accel, self.ratio, stiffness)

    def stiffness_for_solve(self) -> tuple[float, float]:
        cf, cr = self.stiffness
        if math.isinf(cf) and math.isinf(cr):
            return cf, cr
        return (RIGID_STAND_IN if math.isinf(cf) else cf, RIGID_STAND_IN if math.isinf(cr) else cr)

    def ratio_at_level(self) -> float:
        return self.ratio.level

    def fast_code(self) -> Optional[int]:
        """FRONT or REAR: the overdriven axle on a climb (from K at the level load), or None."""
        e = self.ratio.level - 1.0
        if abs(e) <= SAME_SPEED_TOL:
            return None
        return FRONT if e > 0 else REAR

    def loads(self, slope_deg):
        r = self.rig
        return st.axle_loads_g(r.mass_g, r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, slope_deg, self.accel)

    def required(self, slope_deg):
        return required_force_g(self.rig.mass_g, slope_deg, self.crr, self.accel)

    def _solve(self, nf, nr, f_req):
        cf, cr = self.stiffness
        return slip_traction_state(nf, nr, f_req, self.mu_f, self.mu_r, cf, cr, self.ratio(nf, nr))

    def state(self, slope_deg) -> TractionState:
        nf, nr = self.loads(slope_deg)
        return self._solve(nf, nr, self.required(slope_deg))

    def sweep(self, slope_deg) -> Sweep:
        slopes = np.asarray(slope_deg, dtype=float)
        if self.setup.terrain.heading_deg % 360.0 != 0.0:
            return self._sweep_along_heading(slopes)
        nf, nr = self.loads(slopes)
        f_req = self.required(slopes)
        return Sweep(slopes, nf, nr, f_req, self._solve(nf, nr, f_req), self.ratio(nf, nr))

    def _sweep_along_heading(self, slopes) -> Sweep:
        """Off-camber hook (MODEL section 8; `off_camber.along_heading`): the sweep rows run along
        the file's heading, with the friction the friction circle leaves, a sideways slide as
        ``both`` and a roll over the side as ``lifted``. The named angles stay straight up."""
        from .off_camber import along_heading

        r = self.rig
        a = along_heading(r.mass_g, r.wheelbase_mm, r.cg_from_rear_mm, r.cg_height_mm, r.track_mm, slopes,
                          self.setup.terrain.heading_deg, self.crr, self.accel, self.mu_f, self.mu_r)
        ratio = self.ratio(a.front_g, a.rear_g)
        cf, cr = self.stiffness
        ts = slip_traction_state(a.front_g, a.rear_g, a.required_g, a.mu_front, a.mu_rear, cf, cr, ratio)
        return Sweep(slopes, a.front_g, a.rear_g, a.required_g,
                     replace(ts, state=a.state_codes(ts.state, (FRONT, REAR, BOTH, LIFTED))), ratio)

    def boundary_weights(self):
        """(α, β, γ) of every function ``α N_f + β N_r + γ F_req`` whose zeros can separate two
        traction states: lift, an axle's patch saturating, the other axle holding what a sliding
        one leaves (kinetic), and the combined static grip."""
        (msf, mkf), (msr, mkr) = self.mu_f, self.mu_r
        out = [(1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (msf, -msr, -1.0), (-msf, msr, -1.0)]
        for s in (1.0, -1.0):
            out += [
                (s * mkf, msr, -s), (-s * mkf, msr, -s),  # rear holds what the sliding front leaves
                (msf, s * mkr, -s), (msf, -s * mkr, -s),  # front holds what the sliding rear leaves
                (msf, msr, -s),  # both together
            ]
        cf, cr = self.stiffness
        if not (math.isinf(cf) and math.isinf(cr)):
            out += saturation_weights(self)
        return out

    def trig_coefficients(self):
        """(p, q, c) of N_f, N_r and F_req, each ``p cos θ + q sin θ + c``, from 0°, 90°, 180°."""
        t = np.array([0.0, 90.0, 180.0])
        nf, nr = self.loads(t)
        rows = np.array([nf, nr, self.required(t)])
        c = (rows[:, 0] + rows[:, 2]) / 2.0
        return np.column_stack([rows[:, 0] - c, rows[:, 1] - c, c])


def _finite_or_none(x) -> Optional[float]:
    return float(x) if x is not None and np.isfinite(x) else None


def _named_angles(model: _Model) -> tuple[dict, str]:
    rig = model.rig
    a = model.accel
    b, h, L = rig.cg_from_rear_mm, rig.cg_height_mm, rig.wheelbase_mm
    climb = named_climb_angles(model)
    angles = {
        "balance": _finite_or_none(st.balance_angle_deg(L, b, h, a)),
        "front_lift": _finite_or_none(st.front_lift_angle_deg(b, h, a)),
        "rear_lift": _finite_or_none(st.rear_lift_angle_deg(L, b, h, a)),
        "sidehill_roll": st.sidehill_roll_angle_deg(rig.track_mm, h),
        # the first axle to slide sideways sets it (driveline unwound; MODEL section 2)
        "sidehill_slide": st.sidehill_slide_angle_deg(min(model.mu_f[0], model.mu_r[0])),
        "handover": climb["handover"],
        "handover_weight_only": weight_only_handover_deg(model),
        "max_grade": climb["max_grade"],
    }
    return angles, climb["max_grade_limit"]


def analyse(setup: Setup, slopes_deg=None, *, accel_g: Optional[float] = None,
            stiffness: Optional[tuple] = None) -> Analysis:
    """Loads, tyre slip, traction state and named angles of `setup` over `slopes_deg`.

    Parameters
    ----------
    setup : Setup
        The setup as loaded or edited; ballast is applied here.
    slopes_deg : array_like, optional
        Slopes to sweep, nose up positive. [deg] Default 0 to 90 by 1.
    accel_g : float, optional
        Throttle acceleration along the slope for the sweep and the throttle angles; default the
        setup's ``terrain.accel_g``. [g]
    stiffness : (float, float), optional
        Front and rear slip stiffness per unit load to use instead of the setup's. [-]

    Returns
    -------
    Analysis
        ``angles_deg`` (steady climb) holds ``balance``, ``front_lift``, ``rear_lift``,
        ``sidehill_roll``, ``sidehill_slide``, ``handover``, ``handover_weight_only`` (rule of
        thumb) and ``max_grade`` [deg]; None where an angle does not exist. With a throttle,
        ``angles_with_throttle_deg`` holds the same keys at that acceleration.
    """
    if slopes_deg is None:
        slopes_deg = np.arange(0.0, 91.0, 1.0)
    slopes = np.asarray(slopes_deg, dtype=float)
    accel = setup.terrain.accel_g if accel_g is None else accel_g
    rig = effective_rig(setup)
    ratio = speed_ratio_of(setup)
    model = _Model(rig, setup, accel, ratio, stiffness)
    angles, limit = _named_angles(model.steady())
    throttle, throttle_limit = (None, None) if accel == 0 else _named_angles(model)
    return Analysis(setup, rig, setup_overdrive(setup), accel, angles, limit, model.sweep(slopes),
                    throttle, throttle_limit, model)
