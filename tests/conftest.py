"""Shared test set-up: the hypothesis profile and a strategy that draws valid rigs.

The profile keeps property tests fast on a 2-core machine and free of timing flakiness on a slow
Pi (no deadline). `HYPOTHESIS_PROFILE=thorough` runs many more examples.
"""

from __future__ import annotations

import dataclasses
import math
import os
import sys
from pathlib import Path

from hypothesis import HealthCheck, Phase, settings
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import BallastItem, Driveline, Grip, Rig, Setup, Terrain  # noqa: E402
from slopetune.engine.setup_model import cross_field_problems  # noqa: E402


def _load_every_project_module() -> None:
    """Import every module of the package before any test runs.

    hypothesis mixes the literal constants of the project's loaded modules into the examples it
    draws, so a derandomised run still drew other examples when a test ran after another one had
    loaded a module lazily (a CI run found a rounding edge that a run in another order missed).
    With every module loaded up front the examples are the same in every order.
    """
    import importlib
    import pkgutil

    import slopetune.engine
    import slopetune.tui

    for package in (slopetune.engine, slopetune.tui):
        for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
            if not info.name.endswith("__main__"):
                importlib.import_module(info.name)


_load_every_project_module()

settings.register_profile(
    "slopetune", max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile(
    "thorough", max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
# CI runs the same examples every time: a red CI is then a real, reproducible failure.
settings.register_profile(
    "ci", max_examples=100, deadline=None, derandomize=True, database=None,
    suppress_health_check=[HealthCheck.too_slow],
)
# bench/mutation.py: the same derandomised examples as CI, fewer of them, so ~50 mutants run in minutes.
# No shrinking: a mutant needs one failing example, not the smallest one.
settings.register_profile(
    "mutation", max_examples=25, deadline=None, derandomize=True, database=None,
    phases=(Phase.explicit, Phase.generate), report_multiple_bugs=False,
    suppress_health_check=[HealthCheck.too_slow],
)
PROFILE = os.environ.get("HYPOTHESIS_PROFILE", "ci" if os.environ.get("CI") else "slopetune")
settings.load_profile(PROFILE)


def examples(n: int) -> int:
    """Example count for a test that sets its own: n normally, 20 n with the thorough profile,
    a quarter with the mutation profile."""
    if PROFILE == "mutation":
        return max(5, n // 4)
    return n * 20 if PROFILE == "thorough" else n


def _floats(lo, hi):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False)


@st.composite
def rig_setups(draw, *, overdrive=True, ballast=True, per_axle=True, rolling=True, accel=True, stages=True,
               slip=False):
    """A valid `Setup` of a plausible (1/24 to 1/5 scale) crawler, or a strange but legal one.

    Tyres are rigid (the rigid-driveline rule) unless `slip`: then a slip stiffness per unit
    load is drawn above 3 x the largest static mu, sometimes per axle, and sometimes roll-out
    diameters that shrink with load."""
    wheelbase = draw(_floats(120.0, 600.0))
    front_dia = draw(_floats(50.0, 200.0))
    rear_dia = draw(st.one_of(st.just(front_dia), _floats(50.0, 200.0)))
    items = ()
    if ballast and draw(st.booleans()):
        n = draw(st.integers(1, 3))
        items = tuple(
            BallastItem(f"item {i}", draw(_floats(5.0, 400.0)), draw(_floats(0.0, wheelbase)), draw(_floats(5.0, 150.0)))
            for i in range(n)
        )
    rig = Rig(
        mass_g=draw(_floats(300.0, 8000.0)),
        wheelbase_mm=wheelbase,
        front_bias_pct=draw(_floats(15.0, 85.0)),
        cg_height_mm=wheelbase * draw(_floats(0.08, 0.8)),
        track_mm=draw(_floats(100.0, 400.0)),
        tire_dia_front_mm=front_dia,
        tire_dia_rear_mm=rear_dia,
        ballast=items,
    )
    if overdrive and stages and draw(st.integers(0, 4)) == 0:
        teeth = st.integers(8, 60)
        driveline = Driveline(
            None,
            tuple((draw(teeth), draw(teeth)) for _ in range(draw(st.integers(1, 3)))),
            tuple((draw(teeth), draw(teeth)) for _ in range(draw(st.integers(1, 3)))),
        )
    else:
        pct = draw(st.one_of(st.just(0.0), _floats(-30.0, 60.0))) if overdrive else 0.0
        driveline = Driveline(pct)
    mu_s = draw(_floats(0.3, 2.0))
    mu_k = mu_s * draw(_floats(0.4, 1.0))
    overrides = {}
    if per_axle and draw(st.booleans()):
        for axle in ("front", "rear"):
            if draw(st.booleans()):
                s = draw(_floats(0.3, 2.0))
                overrides[f"{axle}_mu_static"] = s
                overrides[f"{axle}_mu_kinetic"] = s * draw(_floats(0.4, 1.0))
    stiff = {"slip_stiffness": math.inf}
    if slip:
        top = 3.0 * max([mu_s] + [v for k, v in overrides.items() if k.endswith("static")])
        stiff["slip_stiffness"] = draw(_floats(top * 1.05, max(top * 1.05, 80.0)))
        if draw(st.booleans()):
            stiff["rear_slip_stiffness"] = draw(_floats(top * 1.05, max(top * 1.05, 80.0)))
        if draw(st.booleans()):
            rig = dataclasses.replace(
                rig, rolling_dia_front_mm=rig.tire_dia_front_mm * draw(_floats(0.9, 1.0)),
                rolling_dia_rear_mm=rig.tire_dia_rear_mm * draw(_floats(0.9, 1.0)),
                rolling_dia_loss_front_mm_per_100g=draw(_floats(0.0, 1.0)),
                rolling_dia_loss_rear_mm_per_100g=draw(_floats(0.0, 1.0)))
    grip = Grip(mu_s, mu_k, draw(st.one_of(st.just(0.0), _floats(0.0, 0.1))) if rolling else 0.0, **overrides,
                **stiff)
    terrain = Terrain(
        slope_deg=draw(_floats(-60.0, 60.0)),
        accel_g=draw(st.one_of(st.just(0.0), _floats(-0.3, 0.3))) if accel else 0.0,
    )
    setup = Setup(name="drawn rig", rig=rig, driveline=driveline, grip=grip, terrain=terrain)
    from hypothesis import assume

    assume(not cross_field_problems(setup))
    return setup


def rigid_text(text: str) -> str:
    """A demo setup file's text made rigid as `Setup.rigid_tyres` makes a setup: slip stiffness
    "rigid", no roll-out keys (the model the closed-form references in these tests are written for)."""
    lines = [line for line in text.splitlines() if not line.startswith("rolling_dia")]
    return "\n".join(line if not line.startswith("slip_stiffness") else 'slip_stiffness = "rigid"'
                     for line in lines) + "\n"
