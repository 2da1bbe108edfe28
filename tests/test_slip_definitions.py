"""The course statics' own slip conversions, worked by hand from the brush model.

Source: H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2 (brush model with a
parabolic pressure distribution: ``F/(μ_s N) = ψ(λ) = 3λ − 3λ|λ| + λ³``, ``λ = c σ/(3 μ_s)``,
theoretical slip ``σ = 1 − 1/s`` for the tread-over-centre speed ratio ``s``); SAE J670 for the
slip ratio ``κ = s − 1``. `engine.contact_statics` converts between these itself (not through
`engine.tyre_brush`), so its conversions get their own hand-worked checks.

Worked by hand: ψ(0.5) = 1.5 − 0.75 + 0.125 = 0.875. With μ_s 1.0 and c 30, a force ratio 0.875
is λ = 0.5, σ = 3·1.0·0.5/30 = 0.05, s = 1/(1 − 0.05) = 1.0526316, κ = 5.2632 %. With μ_s 0.8 and
c 24 the force ratio 0.7 (= 0.8·0.875) gives the same λ, σ and s. Braking, −0.875: λ = −0.5,
σ = −0.05, s = 1/1.05 = 0.9523810, κ = −4.7619 %.
"""

from __future__ import annotations

import numpy as np
import pytest

from slopetune.engine import contact_statics as cs

CASES = [  # (force ratio m, μ_s, c, λ, s, κ %)
    (0.875, 1.0, 30.0, 0.5, 1.0 / 0.95, 100.0 / 0.95 - 100.0),
    (0.7, 0.8, 24.0, 0.5, 1.0 / 0.95, 100.0 / 0.95 - 100.0),
    (-0.875, 1.0, 30.0, -0.5, 1.0 / 1.05, 100.0 / 1.05 - 100.0),
]


@pytest.mark.parametrize("m, mu, c, lam, s, kappa_pct", CASES)
def test_speed_ratio_for_a_force_worked_by_hand(m, mu, c, lam, s, kappa_pct):
    assert float(cs._speed_ratio_for(np.float64(m), c, mu)) == pytest.approx(s, rel=1e-12)


@pytest.mark.parametrize("m, mu, c, lam, s, kappa_pct", CASES)
def test_force_at_a_speed_ratio_worked_by_hand(m, mu, c, lam, s, kappa_pct):
    got_m, got_lam = cs._ratio(np.float64(s), c, mu)
    assert float(got_lam) == pytest.approx(lam, rel=1e-12)
    assert float(got_m) == pytest.approx(m, rel=1e-12)


@pytest.mark.parametrize("m, mu, c, lam, s, kappa_pct", CASES)
def test_slip_ratio_of_a_gripping_tyre_worked_by_hand(m, mu, c, lam, s, kappa_pct):
    assert float(cs._slip_pct_from_ratio(np.float64(m), c, mu)) == pytest.approx(kappa_pct, rel=1e-12)


def test_beyond_static_grip_has_no_gripping_speed_ratio():
    # |F| >= μ_s N: the whole patch slides (λ >= 1), no speed ratio carries it while gripping.
    assert np.isnan(cs._speed_ratio_for(np.float64(1.0), 30.0, 1.0))
    assert np.isnan(cs._speed_ratio_for(np.float64(-0.9), 30.0, 0.8))
