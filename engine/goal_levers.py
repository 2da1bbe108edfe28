"""Goal-seek levers: one scalar of a setup the builder can change, with its limits.

- `AddBallast`: a new ballast item of mass ``m`` at a chosen place ``(x, z)``; the lever is ``m``. [g]
- `MoveBallast`: an existing ballast item moved along the rig; the lever is its ``x``. [mm]
- `CgHeight`: the measured CG raised or lowered; the lever is the change. [mm]
- `Overdrive`: the gear overdrive; the lever is the new ``p``. [%]
- `Compound`: a tyre compound change that scales every static and kinetic mu by one factor; the
  lever is the new common ``mu_static``. [-]

Each lever also gives its `domain` (the values the setup file's own rules allow, so limits wider
than that are cut to it before any search) and its `scale` (the span a builder usually works in,
which sets the scan step, so a wide limit never makes the scan coarse near the current value).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import ClassVar, Optional, Union

from .analysis import setup_overdrive
from .setup_model import FIELDS, BallastItem, Driveline, Setup, cross_field_problems, rule_for

def _climb_accel_g(setup: Setup) -> float:
    """The throttle acceleration of the named angles `analyse` reports: they are for a steady
    climb, so 0. [g]"""
    return 0.0


def _rule_span(key: str, offset: float = 0.0) -> tuple[float, float]:
    """The values `FIELDS[key]` allows, less `offset`; an open end is moved inward by a hair, so
    the limit itself is a value the loader accepts and a monotone case can bracket up to it."""
    r = FIELDS[key]
    lo = -math.inf if r.lo is None else r.lo - offset
    hi = math.inf if r.hi is None else r.hi - offset
    hair = 1e-9 * (hi - lo if math.isfinite(hi - lo) else 1.0)
    return (lo + hair if r.lo is not None and r.lo_open else lo, hi - hair if r.hi is not None and r.hi_open else hi)


def _limits_problem(what: str, lo: float, hi: float) -> Optional[str]:
    if not (math.isfinite(lo) and math.isfinite(hi)):
        return f"{what} limits must be finite numbers"
    if lo > hi:
        return f"{what} limits: min {lo:g} is above max {hi:g}"
    return None


@dataclass(frozen=True)
class AddBallast:
    """A new ballast item at a fixed place; the lever is its mass.

    Parameters
    ----------
    x_mm : float
        Ahead of the rear axle. [mm]
    z_mm : float
        Above the ground. [mm]
    min_g, max_g : float
        Mass limits; a negative mass removes weight at that place. [g]
    name : str
        Name of the item written to the setup.
    """

    x_mm: float
    z_mm: float
    min_g: float = 0.0
    max_g: float = 500.0
    name: str = "planned ballast"

    kind: ClassVar[str] = "ballast"
    unit: ClassVar[str] = "g"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        for key, v in (("x_mm", self.x_mm), ("z_mm", self.z_mm)):
            p = rule_for("rig.ballast.0." + key).problem(v)
            if p:
                return f"ballast {key[0]}={v:g}: {p} [mm]"
        return _limits_problem("ballast mass", self.min_g, self.max_g)

    def start(self, setup: Setup) -> float:
        return 0.0

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (self.min_g, self.max_g)

    def domain(self, setup: Setup) -> tuple[float, float]:
        return _rule_span("ballast.mass_g")

    def scale(self, setup: Setup) -> float:
        return 500.0  # the default limits' span: a 1/10 crawler's usual brass and lead

    def apply(self, setup: Setup, value: float) -> Setup:
        item = BallastItem(self.name, float(value), float(self.x_mm), float(self.z_mm))
        return replace(setup, rig=replace(setup.rig, ballast=setup.rig.ballast + (item,)))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return float(value)

    def monotone(self, angle: str, setup: Setup) -> bool:
        if angle == "handover_weight_only":
            return True
        return angle in ("balance", "front_lift") and abs(_climb_accel_g(setup)) < 1.0


@dataclass(frozen=True)
class MoveBallast:
    """An existing ballast item moved along the rig; the lever is its x.

    Parameters
    ----------
    index : int
        Position of the item in ``setup.rig.ballast`` (from 0).
    min_mm, max_mm : float, optional
        Limits of x ahead of the rear axle; default 0 and the wheelbase. [mm]
    """

    index: int
    min_mm: Optional[float] = None
    max_mm: Optional[float] = None

    kind: ClassVar[str] = "move"
    unit: ClassVar[str] = "mm"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        n = len(setup.rig.ballast)
        if not 0 <= self.index < n:
            return (f"ballast item {self.index + 1}: the setup has "
                    + (f"{n} ballast item{'s' if n != 1 else ''} (1 to {n})" if n else "no ballast items"))
        lo, hi = self.limits(setup)
        return _limits_problem("move x", lo, hi)

    def start(self, setup: Setup) -> float:
        return float(setup.rig.ballast[self.index].x_mm)

    def limits(self, setup: Setup) -> tuple[float, float]:
        lo = 0.0 if self.min_mm is None else float(self.min_mm)
        hi = float(setup.rig.wheelbase_mm) if self.max_mm is None else float(self.max_mm)
        return (lo, hi)

    def domain(self, setup: Setup) -> tuple[float, float]:
        return _rule_span("ballast.x_mm")

    def scale(self, setup: Setup) -> float:
        return float(setup.rig.wheelbase_mm)

    def apply(self, setup: Setup, value: float) -> Setup:
        return setup.with_value(f"rig.ballast.{self.index}.x_mm", float(value))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return angle != "max_grade"


@dataclass(frozen=True)
class CgHeight:
    """The measured CG height raised (> 0) or lowered (< 0); the lever is the change. [mm]

    Default limits ±30 mm: about what a battery, body or link-mount change moves the CG of a 1/10
    crawler (common practice, no source).
    """

    min_mm: float = -30.0
    max_mm: float = 30.0

    kind: ClassVar[str] = "cg-height"
    unit: ClassVar[str] = "mm"
    step: ClassVar[float] = 0.1

    def problem(self, setup: Setup) -> Optional[str]:
        return _limits_problem("CG height change", self.min_mm, self.max_mm)

    def start(self, setup: Setup) -> float:
        return 0.0

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_mm), float(self.max_mm))

    def domain(self, setup: Setup) -> tuple[float, float]:
        return _rule_span("rig.cg_height_mm", setup.rig.cg_height_mm)

    def scale(self, setup: Setup) -> float:
        return 60.0

    def apply(self, setup: Setup, value: float) -> Setup:
        return setup.with_value("rig.cg_height_mm", setup.rig.cg_height_mm + float(value))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        accel = _climb_accel_g(setup)
        if angle == "handover_weight_only":
            return True
        if angle in ("balance", "front_lift"):
            return abs(accel) < 1.0
        # proven for the rigid rule's closed form only; tyre slip is searched by scan and bracket
        return angle == "handover" and accel >= 0 and setup.grip.rigid


@dataclass(frozen=True)
class Overdrive:
    """The gear overdrive set to a new value; the lever is ``p``. [%]

    A setup with gear stages gets a plain ``overdrive_pct`` instead (the builder picks gears that
    give it). Default limits −10 % to +20 %: the span of front overdrives crawler builders run
    (common practice, no source).
    """

    min_pct: float = -10.0
    max_pct: float = 20.0

    kind: ClassVar[str] = "overdrive"
    unit: ClassVar[str] = "%"
    step: ClassVar[float] = 0.01

    def problem(self, setup: Setup) -> Optional[str]:
        return _limits_problem("overdrive", self.min_pct, self.max_pct)

    def start(self, setup: Setup) -> float:
        return float(setup_overdrive(setup).gear_pct)

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_pct), float(self.max_pct))

    def domain(self, setup: Setup) -> tuple[float, float]:
        return _rule_span("driveline.overdrive_pct")

    def scale(self, setup: Setup) -> float:
        return 30.0

    def apply(self, setup: Setup, value: float) -> Setup:
        return replace(setup, driveline=Driveline(overdrive_pct=float(value)))

    def extra_samples(self, setup: Setup) -> tuple[float, ...]:
        """The gear overdrive whose front/rear ground speeds match (no wind-up): a single point
        ``p = 100 (D_r/D_f − 1)`` [%] that an even scan would step over."""
        r = setup.rig
        return (100.0 * (r.tire_dia_rear_mm / r.tire_dia_front_mm - 1.0),)

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return False


@dataclass(frozen=True)
class Compound:
    """A tyre compound change: every static and kinetic mu scaled by one factor.

    The lever is the new common ``mu_static``; ``mu_kinetic`` and any per-axle overrides scale by
    the same ratio. Default limits 0.3 to 1.5: slick plastic to soft rubber on grippy rock
    (value recalled from memory; Serway & Beichner table 5.2 gives 1.0 for rubber on dry concrete).
    """

    min_mu: float = 0.3
    max_mu: float = 1.5

    kind: ClassVar[str] = "mu"
    unit: ClassVar[str] = ""
    step: ClassVar[float] = 0.001

    def problem(self, setup: Setup) -> Optional[str]:
        if not self.min_mu > 0:
            return f"mu limits: min {self.min_mu:g} must be > 0"
        return _limits_problem("mu", self.min_mu, self.max_mu)

    def start(self, setup: Setup) -> float:
        return float(setup.grip.mu_static)

    def limits(self, setup: Setup) -> tuple[float, float]:
        return (float(self.min_mu), float(self.max_mu))

    def domain(self, setup: Setup) -> tuple[float, float]:
        # every mu scales with mu_static and each must stay <= 5 (FIELDS)
        g = setup.grip
        top = max(v for v in (g.mu_static, g.mu_kinetic, g.front_mu_static, g.front_mu_kinetic,
                               g.rear_mu_static, g.rear_mu_kinetic) if v is not None)
        return (0.0, FIELDS["grip.mu_static"].hi * g.mu_static / top)

    def scale(self, setup: Setup) -> float:
        return 1.2

    def apply(self, setup: Setup, value: float) -> Setup:
        g = setup.grip
        k = float(value) / g.mu_static
        scaled = {
            name: (None if getattr(g, name) is None else getattr(g, name) * k)
            for name in ("mu_kinetic", "front_mu_static", "front_mu_kinetic", "rear_mu_static", "rear_mu_kinetic")
        }
        return replace(setup, grip=replace(g, mu_static=float(value), **scaled))

    def added_mass_g(self, setup: Setup, value: float) -> float:
        return 0.0

    def monotone(self, angle: str, setup: Setup) -> bool:
        return False


Lever = Union[AddBallast, MoveBallast, CgHeight, Overdrive, Compound]


# Every numeric key a lever can touch, checked with the loader's own rules (`FIELDS`).
_CHECKED_KEYS = (
    "rig.mass_g", "rig.cg_height_mm", "driveline.overdrive_pct", "grip.mu_static", "grip.mu_kinetic",
    "grip.front_mu_static", "grip.front_mu_kinetic", "grip.rear_mu_static", "grip.rear_mu_kinetic",
)


def setup_is_valid(setup: Setup) -> bool:
    """True when the loader would accept `setup` (ranges of the keys levers change, cross-field rules)."""
    for key in _CHECKED_KEYS:
        v = setup.value(key)
        if v is not None and rule_for(key).problem(v):
            return False
    for item in setup.rig.ballast:
        for key in ("mass_g", "x_mm", "z_mm"):
            if rule_for("rig.ballast.0." + key).problem(getattr(item, key)):
                return False
    return not cross_field_problems(setup)


__all__ = ["AddBallast", "MoveBallast", "CgHeight", "Overdrive", "Compound", "Lever", "setup_is_valid"]
