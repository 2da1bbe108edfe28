"""Rigs on a tilt board for the slide-angle tests: weight, wheelbase, front share and CG height.

Invented ranges covering small-scale crawlers and beyond (no source needed: test inputs, not
expected values).
"""

from hypothesis import strategies as st

board_rigs = st.tuples(
    st.floats(300.0, 8000.0),  # W [g]
    st.floats(120.0, 600.0),  # L [mm]
    st.floats(0.1, 0.9),  # front bias share
    st.floats(0.08, 0.8),  # h / L
)
