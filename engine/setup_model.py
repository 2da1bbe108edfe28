"""The setup a builder tunes: plain frozen dataclasses, metric, no I/O.

A `Setup` is what one setup file (format 1) describes. `FIELDS` is the single table of every
numeric key the file may hold, with its range; the file loader and the tuner's form both check
values against it, so a value the form accepts is always a value the file accepts.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Optional

SCHEMA_VERSION = 1
# Slip stiffness per unit load used when a file gives none. From memory, not a measurement:
# car tyres on dry roads run at roughly 15–25 (force per unit slip over load); soft, foam-filled,
# low-pressure crawler tyres are much softer, so 10 is a starting guess to replace by the slip test.
DEFAULT_SLIP_STIFFNESS = 10.0
RIGID = "rigid"  # the file's word for an infinitely stiff tyre (the rigid-driveline rule)


@dataclass(frozen=True)
class BallastItem:
    """Weight added (negative mass: removed) after the rig was measured."""

    name: str
    mass_g: float  # [g]
    x_mm: float  # ahead of the rear axle [mm]
    z_mm: float  # above flat ground [mm]


@dataclass(frozen=True)
class Rig:
    """The rig as measured on level ground, ready to run."""

    mass_g: float
    wheelbase_mm: float
    front_bias_pct: float
    cg_height_mm: float
    track_mm: float
    tire_dia_front_mm: float
    tire_dia_rear_mm: float
    ballast: tuple[BallastItem, ...] = ()
    roll_stiffness_front_pct: Optional[float] = None  # front share of the roll moment; None: by axle load
    # roll-out diameters at the level static load (None: the tyre diameter) and their loss per
    # 100 g more load on that axle (MODEL section 4)
    rolling_dia_front_mm: Optional[float] = None
    rolling_dia_rear_mm: Optional[float] = None
    rolling_dia_loss_front_mm_per_100g: float = 0.0
    rolling_dia_loss_rear_mm_per_100g: float = 0.0

    def rolling_dia_mm(self) -> tuple[float, float]:
        """(front, rear) roll-out diameters at the level static load. [mm]"""
        f, r = self.rolling_dia_front_mm, self.rolling_dia_rear_mm
        return (self.tire_dia_front_mm if f is None else f, self.tire_dia_rear_mm if r is None else r)


@dataclass(frozen=True)
class Driveline:
    """Front overdrive, either as a percentage or as gear stages from a common input.

    When both stage lists are given they set the gear overdrive and `overdrive_pct` is None.
    """

    overdrive_pct: Optional[float] = 0.0
    front_stages: Optional[tuple[tuple[int, int], ...]] = None  # (driver, driven) teeth
    rear_stages: Optional[tuple[tuple[int, int], ...]] = None

    @property
    def uses_stages(self) -> bool:
        return self.front_stages is not None and self.rear_stages is not None


@dataclass(frozen=True)
class Grip:
    """Tyre friction; per-axle overrides replace the common value for that axle."""

    mu_static: float
    mu_kinetic: float
    rolling_resistance: float = 0.0
    front_mu_static: Optional[float] = None
    front_mu_kinetic: Optional[float] = None
    rear_mu_static: Optional[float] = None
    rear_mu_kinetic: Optional[float] = None
    # slip stiffness per unit load c (MODEL section 5); math.inf is the rigid-driveline rule
    slip_stiffness: float = DEFAULT_SLIP_STIFFNESS
    front_slip_stiffness: Optional[float] = None
    rear_slip_stiffness: Optional[float] = None

    def axle_stiffness(self) -> tuple[float, float]:
        """(front, rear) slip stiffness per unit load with overrides applied; inf: rigid. [-]"""
        f, r = self.front_slip_stiffness, self.rear_slip_stiffness
        return (self.slip_stiffness if f is None else f, self.slip_stiffness if r is None else r)

    @property
    def rigid(self) -> bool:
        return all(math.isinf(c) for c in self.axle_stiffness())

    def axle_mu(self) -> tuple[float, float, float, float]:
        """(front static, front kinetic, rear static, rear kinetic) with overrides applied."""
        pick = lambda own, common: common if own is None else own  # noqa: E731
        return (
            pick(self.front_mu_static, self.mu_static),
            pick(self.front_mu_kinetic, self.mu_kinetic),
            pick(self.rear_mu_static, self.mu_static),
            pick(self.rear_mu_kinetic, self.mu_kinetic),
        )


@dataclass(frozen=True)
class Terrain:
    """The slope being tuned for and how the rig is driven on it (always a climb under load)."""

    slope_deg: float
    accel_g: float = 0.0  # throttle acceleration along the slope [g]
    heading_deg: float = 0.0  # nose from straight up the fall line, clockwise from above [deg]


@dataclass(frozen=True)
class Course:
    """A terrain profile to walk the rig along (front and rear on different ground)."""

    name: str
    points_mm: tuple[tuple[float, float], ...]
    belly_clearance_mm: float


@dataclass(frozen=True)
class Setup:
    name: str
    rig: Rig
    driveline: Driveline
    grip: Grip
    terrain: Terrain
    notes: str = ""
    course: Optional[Course] = None

    def with_value(self, key: str, value) -> "Setup":
        """A copy with one dotted key ("rig.mass_g", "rig.ballast.2.x_mm") replaced."""
        parts = key.split(".")
        if parts[0] == "rig" and len(parts) == 4 and parts[1] == "ballast":
            idx = int(parts[2])
            items = list(self.rig.ballast)
            items[idx] = replace(items[idx], **{parts[3]: value})
            return replace(self, rig=replace(self.rig, ballast=tuple(items)))
        if len(parts) == 1:
            return replace(self, **{parts[0]: value})
        section = getattr(self, parts[0])
        return replace(self, **{parts[0]: replace(section, **{parts[1]: value})})

    def value(self, key: str):
        """The value at one dotted key (same spelling as `with_value`)."""
        obj = self
        for part in key.split("."):
            obj = obj[int(part)] if part.isdigit() else getattr(obj, part)
        return obj

    def on_tyre_diameters(self) -> "Setup":
        """A copy whose speed ratio comes from the tyre diameters alone: no roll-out diameters and
        no loss under load (MODEL section 4 without the roll-out measurements)."""
        return replace(self, rig=replace(self.rig, rolling_dia_front_mm=None, rolling_dia_rear_mm=None,
                                         rolling_dia_loss_front_mm_per_100g=0.0,
                                         rolling_dia_loss_rear_mm_per_100g=0.0))

    def with_slip_stiffness(self, per_load: float) -> "Setup":
        """A copy with one slip stiffness per unit load on both axles, per-axle overrides cleared
        (``math.inf``: the rigid-driveline rule). [-]"""
        return replace(self, grip=replace(self.grip, slip_stiffness=per_load, front_slip_stiffness=None,
                                          rear_slip_stiffness=None))

    def rigid_tyres(self) -> "Setup":
        """A copy on the rigid-driveline rule with the tyre diameters (no slip, no roll-out under
        load): the closed-form model of MODEL sections 3 and 5, which hand-worked checks quote."""
        return self.on_tyre_diameters().with_slip_stiffness(math.inf)


@dataclass(frozen=True)
class FieldRule:
    """Range of one numeric key. `lo`/`hi` None means unbounded on that side."""

    lo: Optional[float] = None
    hi: Optional[float] = None
    lo_open: bool = True
    hi_open: bool = True
    integer: bool = False
    optional: bool = False
    default: Optional[float] = None
    unit: str = ""
    help: str = ""
    rigid_ok: bool = False  # math.inf allowed (written "rigid" in the file)

    def allowed(self) -> str:
        """What is allowed, in words, for error messages (numbers as people write them: 1,000,000)."""
        kind = "a whole number" if self.integer else "a number"
        if self.rigid_ok:
            kind = f'"{RIGID}" or {kind}'
        if self.lo is not None and self.hi is not None:
            return (
                f"{kind} {'>' if self.lo_open else '>='} {self.lo:,.10g} and "
                f"{'<' if self.hi_open else '<='} {self.hi:,.10g}"
            )
        if self.lo is not None:
            return f"{kind} {'>' if self.lo_open else '>='} {self.lo:,.10g}"
        if self.hi is not None:
            return f"{kind} {'<' if self.hi_open else '<='} {self.hi:,.10g}"
        return kind

    def problem(self, value) -> Optional[str]:
        """None if `value` is allowed, else what is allowed."""
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            return f"must be {self.allowed()}"
        if self.integer and not isinstance(value, int):
            return f"must be {self.allowed()}"
        if self.rigid_ok and value == math.inf:
            return None
        if not math.isfinite(value):
            return f"must be finite: {self.allowed()}"
        if self.lo is not None and (value <= self.lo if self.lo_open else value < self.lo):
            return f"must be {self.allowed()}"
        if self.hi is not None and (value >= self.hi if self.hi_open else value > self.hi):
            return f"must be {self.allowed()}"
        return None


_POS = dict(lo=0.0)
# Lengths the model divides by: at least 1 mm, so a subnormal typo (5e-324) cannot overflow a force.
_DIVISOR_MM = dict(lo=1.0, lo_open=False)
# Bounds that are physical limits of the model come from MODEL conventions; the wide upper
# bounds (mass, lengths) only reject typos of several orders of magnitude.
FIELDS: dict[str, FieldRule] = {
    "rig.mass_g": FieldRule(**_POS, hi=1e6, unit="g", help="all-up weight"),
    "rig.wheelbase_mm": FieldRule(**_DIVISOR_MM, hi=1e5, unit="mm", help="front to rear axle"),
    "rig.front_bias_pct": FieldRule(lo=0.0, hi=100.0, unit="%", help="weight on the front axle, rig level"),
    "rig.cg_height_mm": FieldRule(**_POS, hi=1e5, unit="mm", help="CG above flat ground, tyres included"),
    "rig.track_mm": FieldRule(**_POS, hi=1e5, unit="mm", help="tyre centre to tyre centre"),
    "rig.tire_dia_front_mm": FieldRule(**_DIVISOR_MM, hi=1e4, unit="mm", help="front tyre outer diameter"),
    "rig.tire_dia_rear_mm": FieldRule(**_DIVISOR_MM, hi=1e4, unit="mm", help="rear tyre outer diameter"),
    "rig.roll_stiffness_front_pct": FieldRule(lo=0.0, hi=100.0, optional=True, unit="%",
                                              help="front share of the roll moment; unset: by axle load"),
    "ballast.mass_g": FieldRule(lo=-1e6, hi=1e6, lo_open=False, hi_open=False, unit="g",
                                help="added mass; negative: removed"),
    "ballast.x_mm": FieldRule(lo=-1e5, hi=1e5, lo_open=False, hi_open=False, unit="mm",
                              help="ahead of the rear axle"),
    "ballast.z_mm": FieldRule(lo=-1e5, hi=1e5, lo_open=False, hi_open=False, unit="mm",
                              help="above the ground"),
    "driveline.overdrive_pct": FieldRule(lo=-50.0, hi=100.0, optional=True, default=0.0, unit="%",
                                         help="front turns (1 + p/100) per rear turn"),
    "driveline.teeth": FieldRule(lo=1, hi=1000, lo_open=False, hi_open=False, integer=True,
                                 unit="teeth", help="gear tooth count"),
    "grip.mu_static": FieldRule(**_POS, hi=5.0, lo_open=True, hi_open=False, help="static friction"),
    "grip.mu_kinetic": FieldRule(**_POS, hi=5.0, lo_open=True, hi_open=False, help="kinetic friction"),
    "grip.rolling_resistance": FieldRule(lo=0.0, hi=1.0, lo_open=False, hi_open=False, optional=True,
                                         default=0.0, help="rolling-resistance coefficient"),
    "grip.front_mu_static": FieldRule(**_POS, hi=5.0, hi_open=False, optional=True, help="front static friction"),
    "grip.front_mu_kinetic": FieldRule(**_POS, hi=5.0, hi_open=False, optional=True, help="front kinetic friction"),
    "grip.rear_mu_static": FieldRule(**_POS, hi=5.0, hi_open=False, optional=True, help="rear static friction"),
    "grip.rear_mu_kinetic": FieldRule(**_POS, hi=5.0, hi_open=False, optional=True, help="rear kinetic friction"),
    "grip.slip_stiffness": FieldRule(**_POS, hi=1e6, hi_open=False, optional=True, default=DEFAULT_SLIP_STIFFNESS,
                                     rigid_ok=True, help="slip stiffness per unit load (\"rigid\": no slip)"),
    "grip.front_slip_stiffness": FieldRule(**_POS, hi=1e6, hi_open=False, optional=True, rigid_ok=True,
                                           help="front slip stiffness per unit load"),
    "grip.rear_slip_stiffness": FieldRule(**_POS, hi=1e6, hi_open=False, optional=True, rigid_ok=True,
                                          help="rear slip stiffness per unit load"),
    "rig.rolling_dia_front_mm": FieldRule(**_DIVISOR_MM, hi=1e4, optional=True, unit="mm",
                                          help="front roll-out diameter at the level load"),
    "rig.rolling_dia_rear_mm": FieldRule(**_DIVISOR_MM, hi=1e4, optional=True, unit="mm",
                                         help="rear roll-out diameter at the level load"),
    "rig.rolling_dia_loss_front_mm_per_100g": FieldRule(lo=0.0, lo_open=False, hi=100.0, optional=True, default=0.0,
                                                        unit="mm", help="front roll-out loss per 100 g more load"),
    "rig.rolling_dia_loss_rear_mm_per_100g": FieldRule(lo=0.0, lo_open=False, hi=100.0, optional=True, default=0.0,
                                                       unit="mm", help="rear roll-out loss per 100 g more load"),
    "terrain.slope_deg": FieldRule(lo=-90.0, hi=90.0, unit="deg", help="nose up > 0"),
    "terrain.heading_deg": FieldRule(lo=-180.0, hi=180.0, lo_open=False, hi_open=False, optional=True,
                                     default=0.0, unit="deg",
                                     help="nose from straight up the fall line, clockwise; 90: left side uphill"),
    # Coordinates within a kilometre keep every product of lengths far from overflow.
    "course.point_mm": FieldRule(lo=-1e6, hi=1e6, lo_open=False, hi_open=False, unit="mm",
                                 help="course point coordinate"),
    # The belly check looks at terrain this far either side of the rig: a typo of 1e9 would make it
    # look at the whole course from every position.
    "course.belly_clearance_mm": FieldRule(lo=0.0, hi=1000.0, hi_open=False, unit="mm",
                                           help="lowest chassis line above the ground, rig level"),
    "terrain.accel_g": FieldRule(lo=-2.0, hi=2.0, lo_open=False, hi_open=False, optional=True, default=0.0,
                                 unit="g", help="throttle acceleration along the slope"),
}


def rule_for(key: str) -> FieldRule:
    """The rule of a dotted key; ballast items and gear stages share one rule each."""
    parts = key.split(".")
    if parts[:2] == ["rig", "ballast"]:
        return FIELDS["ballast." + parts[-1]]
    if parts[0] == "driveline" and parts[1] in ("front_stages", "rear_stages"):
        return FIELDS["driveline.teeth"]
    return FIELDS[key]


def cross_field_problems(setup: Setup) -> list[tuple[str, str]]:
    """Checks that involve several keys: [(key, message)], empty when the setup is consistent."""
    out: list[tuple[str, str]] = []
    g = setup.grip
    fs, fk, rs, rk = g.axle_mu()
    if g.mu_kinetic > g.mu_static:
        out.append(("grip.mu_kinetic", f"must be <= mu_static ({g.mu_static:g})"))
    if fk > fs and (g.front_mu_kinetic is not None or g.front_mu_static is not None):
        out.append(("grip.front_mu_kinetic", f"front kinetic mu {fk:g} must be <= front static mu {fs:g}"))
    if rk > rs and (g.rear_mu_kinetic is not None or g.rear_mu_static is not None):
        out.append(("grip.rear_mu_kinetic", f"rear kinetic mu {rk:g} must be <= rear static mu {rs:g}"))
    cf, cr = g.axle_stiffness()
    for side, c, mu in (("front", cf, fs), ("rear", cr, rs)):
        if c <= 3.0 * mu:
            key = f"grip.{side}_slip_stiffness" if getattr(g, f"{side}_slip_stiffness") is not None else "grip.slip_stiffness"
            out.append((key, f"{side} slip stiffness {c:g} must be above 3 x its static mu ({3.0 * mu:g}):"
                             " a softer brush tyre could never slide fully"))
    r = setup.rig
    for side in ("front", "rear"):
        roll = getattr(r, f"rolling_dia_{side}_mm")
        tyre = getattr(r, f"tire_dia_{side}_mm")
        if roll is not None and roll > tyre:
            out.append((f"rig.rolling_dia_{side}_mm",
                        f"roll-out diameter {roll:g} is above the tyre's outer diameter {tyre:g} mm"))
    if setup.rig.ballast:
        # Imported here to keep this module free of numpy for the tuner's fast start.
        from .ballast import combine_ballast

        mass, x, z = combine_ballast(setup.rig)
        if not mass > 0:
            out.append(("rig.ballast", f"ballast leaves no mass (total {mass:g} g)"))
        elif not 0 < x < setup.rig.wheelbase_mm:
            out.append(
                (
                    "rig.ballast",
                    f"ballast moves the CG off the wheelbase ({x:.1f} mm ahead of the rear axle;"
                    f" allowed 0 to {setup.rig.wheelbase_mm:g})",
                )
            )
        elif not z > 0:
            out.append(("rig.ballast", f"ballast puts the CG at or below the ground ({z:.1f} mm)"))
    return out


__all__ = [
    "SCHEMA_VERSION", "BallastItem", "Rig", "Driveline", "Grip", "Terrain", "Course", "Setup",
    "FieldRule", "FIELDS", "DEFAULT_SLIP_STIFFNESS", "RIGID", "rule_for", "cross_field_problems",
]
