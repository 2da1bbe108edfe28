"""How long a scrub lasts once it has started: the persistence band of MODEL section 5.

Kinetic friction is below static (``μ_k < μ_s``), so an axle that has let go keeps scrubbing over
a wider range of slopes than the one where it lets go from an unwound driveline. A scrub of axle
X continues while it is self-consistent:

- X carries ``d μ_k,X N_X``, ``d = +1`` for the fast (overdriven) axle, which spins forward, and
  ``−1`` for the slow one, which is dragged back;
- the other axle carries the rest, ``F_req − d μ_k,X N_X``, within ``μ_s N`` on its brush curve,
  so its slip is ``σ = 3μ_s ψ⁻¹(F/(μ_s N))/c`` (0 for a rigid tyre);
- the driveline then fixes X's slip, and that slip still saturates X's patch in direction ``d``
  (``d λ_X >= 1``).

Everything is closed form, so the band is found on a fine vectorised grid.

References
----------
.. [1] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2 (brush model).
.. [2] Serway & Beichner, *Physics for Scientists and Engineers*, 5th ed., ch. 5 (static and
   kinetic friction).
"""

from __future__ import annotations


import numpy as np

from .traction import FRONT, REAR
from .tyre_brush import brush_lambda, slip_for_force

GRID_STEP_DEG = 0.05
ONSET_EVERY = 5  # onset states every 0.25°


def scrub_persists(model, slope_deg):
    """(front, rear) boolean arrays: where a scrub of that axle, once started, continues."""
    slopes = np.asarray(slope_deg, float)
    nf, nr = model.loads(slopes)
    f_req = model.required(slopes)
    k = model.ratio(nf, nr)
    (msf, mkf), (msr, mkr) = model.mu_f, model.mu_r
    cf, cr = model.stiffness
    loaded = (nf > 0) & (nr > 0)
    nf_s, nr_s = np.where(loaded, nf, 1.0), np.where(loaded, nr, 1.0)
    d_f = np.sign(k - 1.0)  # the front spins forward when it is the fast axle
    d_r = -d_f
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        # front scrubbing: the rear carries the rest and sets the front's slip
        rest_r = f_req - d_f * mkf * nf_s
        sig_r = slip_for_force(rest_r, nr_s, msr, cr)
        lam_f = brush_lambda(1.0 - (1.0 - sig_r) / k, cf, msf)
        front = loaded & (d_f != 0) & (np.abs(rest_r) <= msr * nr_s) & (d_f * lam_f >= 1.0)
        # rear scrubbing: the front carries the rest and sets the rear's slip
        rest_f = f_req - d_r * mkr * nr_s
        sig_f = slip_for_force(rest_f, nf_s, msf, cf)
        lam_r = brush_lambda(1.0 - k * (1.0 - sig_f), cr, msr)
        rear = loaded & (d_r != 0) & (np.abs(rest_f) <= msf * nf_s) & (d_r * lam_r >= 1.0)
    return front, rear


def _runs(mask):
    """(start, stop) index pairs of the True runs of a 1-D mask (stop inclusive)."""
    edges = np.diff(np.concatenate(([0], mask.astype(np.int8), [0])))
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1))


def scrub_bands(model) -> dict:
    """Per axle, the slope range [lo, hi] over which its scrub persists once started. [deg]

    Returns
    -------
    dict
        ``{"front": [lo, hi] or None, "rear": ...}`` for a steady climb between −90° and 90°: the
        run of slopes that contains where that axle lets go from an unwound driveline (its onset),
        or, if it never does, the run nearest level ground. None where a scrub of that axle can
        never sustain itself. Found on a 0.05° grid.
    """
    grid = np.arange(-90.0, 90.0 + GRID_STEP_DEG / 2, GRID_STEP_DEG)
    masks = scrub_persists(model, grid)
    coarse = grid[::ONSET_EVERY]  # the onset solve is iterative: a coarser grid finds where it lies
    onset_codes = model.state(coarse).state
    out = {}
    for name, mask, code in (("front", masks[0], FRONT), ("rear", masks[1], REAR)):
        runs = _runs(mask)
        if not runs:
            out[name] = None
            continue
        at = coarse[onset_codes == code]
        with_onset = [r for r in runs if np.any((at >= grid[r[0]]) & (at <= grid[r[1]]))]
        pick = with_onset[0] if with_onset else min(
            runs, key=lambda r: 0.0 if grid[r[0]] <= 0 <= grid[r[1]] else min(abs(grid[r[0]]), abs(grid[r[1]])))
        out[name] = [round(float(grid[pick[0]]), 2), round(float(grid[pick[1]]), 2)]
    return out


__all__ = ["scrub_persists", "scrub_bands", "GRID_STEP_DEG"]
