"""The slopes every analysis covers: numpy-free to import (numpy loads on the first call)."""

from __future__ import annotations

from functools import lru_cache

# Slopes analysed and charted, 1 deg apart: the chart is 40-100 columns wide (80-200 braille dots),
# and the named angles are found exactly by the engine, not read off this grid.
SLOPE_SPANS = {False: (0.0, 90.0), True: (-90.0, 90.0)}


@lru_cache(maxsize=None)
def slope_grid(full_range: bool):
    """The slopes every analysis covers, as a read-only numpy array [deg]."""
    import numpy as np

    lo, hi = SLOPE_SPANS[full_range]
    grid = np.arange(lo, hi + 1.0, 1.0)
    grid.flags.writeable = False  # shared by every analysis
    return grid
