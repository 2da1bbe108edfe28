"""The uniform-slope sweep (`analyse`) along the file's heading (MODEL section 8 hook)."""

from __future__ import annotations

import math

import numpy as np

from slopetune.engine import analyse, load_setup
from slopetune.engine.heading_sweep import PlaneModel
from pathlib import Path

DEMO = Path(__file__).resolve().parent.parent / "setups" / "marmot-overdrive.toml"
SLOPES = np.arange(-89.0, 90.0, 1.0)


def test_heading_0_and_180_are_the_planar_sweep():
    """Heading 0 is today's sweep; 180 is the same plane faced downhill: the planar sweep mirrored
    (slope −θ at 0 is θ at 180; Gillespie ch. 2 grade loads)."""
    s = load_setup(DEMO).setup
    planar = analyse(s, SLOPES).sweep
    down = analyse(s.with_value("terrain.heading_deg", 180.0), SLOPES).sweep
    assert np.allclose(down.front_normal_g, planar.front_normal_g[::-1])
    assert np.allclose(down.required_g, planar.required_g[::-1])
    assert np.array_equal(down.traction.state, planar.traction.state[::-1])


def test_heading_sweep_rows_agree_with_the_hold_angle():
    """Across the face (+90) and on diagonals the sweep holds exactly up to the headings' hold angle
    (both from MODEL section 8: friction circle, crab rule, slide at atan(min μ_s), NHTSA roll)."""
    s0 = load_setup(DEMO).setup
    for heading in (90.0, 45.0, -120.0):
        s = s0.with_value("terrain.heading_deg", heading)
        sweep = analyse(s, np.arange(0.0, 90.0, 0.25)).sweep
        holds = np.isin(sweep.traction.state, (0, 1, 2))
        first_bad = sweep.slope_deg[np.argmin(holds)]
        hold, _ = PlaneModel(s).hold([heading])
        assert abs(first_bad - float(hold[0])) <= 0.26, heading
    side = analyse(s0.with_value("terrain.heading_deg", 90.0), np.array([50.0, 56.0])).sweep
    assert side.slipping == ["both", "lifted"]  # past atan(1.0) it slides; past atan(126/86.8) it rolls
    assert math.degrees(math.atan(126.0 / 86.78)) < 56.0


def test_an_axle_off_the_ground_outranks_a_sideways_slide():
    """MODEL section 5, rule 1: any N <= 0 is `lifted`, whatever else holds. Found by the fuzz: the
    stock demo rig with rear μ_s 0.9, across the face (heading 89°) under a 2 g throttle, has its
    front off the ground from about 30° while from atan(0.9/sin 89°) = 42.0° on the side demand
    tan β sin ψ reaches the rear's μ_s (MODEL section 8: a sideways slide)."""
    s = load_setup(DEMO.with_name("marmot-stock.toml")).setup
    s = s.with_value("grip.rear_mu_static", 0.9).with_value("grip.rear_mu_kinetic", 0.7)
    s = s.with_value("terrain.heading_deg", 89.0)
    slopes = np.arange(0.0, 60.0, 0.5)
    sweep = analyse(s, slopes, accel_g=2.0).sweep
    off = (sweep.front_normal_g <= 0) | (sweep.rear_normal_g <= 0)
    slides = np.tan(np.radians(slopes)) * math.sin(math.radians(89.0)) >= 0.9
    assert (off & slides).sum() > 10  # the case reached: lifted and sliding together
    assert all(state == "lifted" for state, o in zip(sweep.slipping, off) if o)
