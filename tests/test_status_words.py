"""The status pane's words cost one engine evaluation per key.

`status_words.look_at` solves the setup's slope and the look-ahead window around it (the slip
flag's "lets go first from ..." within ±3°) in one vectorised call. Each slope's onset slip solve
(MODEL section 5) is its own, so the answer must be exactly, bit for bit, what solving the slope
alone (`here_at`) and the window alone gives (common practice, no source: the one-call form must
not change a word the two calls gave).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from slopetune.engine import analyse
from slopetune.tui.status_words import LOOKAHEAD_DEG, here_at, look_at

from conftest import examples, rig_setups


@settings(max_examples=examples(60))
@given(st.one_of(rig_setups(), rig_setups(slip=True)), st.floats(-90.0, 90.0),
       st.sampled_from([0.0, 30.0, 135.0]))
def test_one_evaluation_equals_the_slope_and_the_window_solved_apart(setup, slope_deg, heading_deg):
    setup = replace(setup, terrain=replace(setup.terrain, slope_deg=slope_deg, heading_deg=heading_deg))
    a = analyse(setup)
    look = look_at(a, slope_deg)
    assert look.here == here_at(a, slope_deg)
    window = np.linspace(max(-90.0, slope_deg - LOOKAHEAD_DEG), min(90.0, slope_deg + LOOKAHEAD_DEG), 25)
    assert np.array_equal(look.window_deg, window)  # every 0.25° over ±3°, clipped at ±90°
    assert np.array_equal(look.states, a.at(window).traction.state)
