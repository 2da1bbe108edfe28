"""Named climbing angles of a slope model: handover, max grade and the weight-only rule of thumb.

Two searches, both vectorised:

- With a speed ratio that does not depend on the loads (rigid or constant roll-out diameters),
  every boundary between traction states is a zero of ``p cos θ + q sin θ + c``: normal forces,
  the climbing load and every friction limit are linear in ``cos θ``, ``sin θ`` and 1, and where
  an axle's patch saturates its theoretical slip is fixed (``σ = ±3μ_s/c``), so the other axle's
  slip and brush force share are constants too. The candidate zeros are found in closed form
  (`slope_statics.solve_cos_sin`) and the state is checked between them: the angles are exact.
- With roll-out diameters that change with load the speed ratio moves with the slope, so the
  states are scanned every 0.25° and each change is bisected to better than 0.01°.

References
----------
.. [1] T. D. Gillespie, *Fundamentals of Vehicle Dynamics*, SAE, 1992, ch. 2 (axle loads on a
   grade, traction-limited performance).
.. [2] H. B. Pacejka, *Tire and Vehicle Dynamics*, 3rd ed., 2012, sec. 3.2 (brush model: the patch
   saturates at ``|λ| = 1``).
"""

from __future__ import annotations

from typing import Optional

import numpy as np

from . import slope_statics as st
from .traction import FRONT, HOLDING, LIFTED
from .tyre_brush import brush_psi

SCAN_STEP_DEG = 0.25
BISECT_TO_DEG = 0.01


def _breakpoints(model, weights, lo_deg, hi_deg):
    """`lo_deg`, `hi_deg` and every zero in between of the weighted functions, sorted."""
    coef = np.asarray(weights, dtype=float) @ model.trig_coefficients()
    pts = {lo_deg, hi_deg}
    for p, q, c in coef:
        pts.update(r for r in st.solve_cos_sin(p, q, c) if lo_deg < r < hi_deg)
    return np.array(sorted(pts))


def _probes(model, weights):
    """The breakpoints in [0°, 90°] and one probe slope per stretch they bound: 0° itself, then the
    middle of each stretch (nothing changes inside one, so its middle speaks for all of it)."""
    pts = _breakpoints(model, weights, 0.0, 90.0)
    return pts, np.concatenate(([pts[0]], (pts[:-1] + pts[1:]) / 2.0))


def _first_bad(pts, good) -> Optional[tuple[float, int]]:
    """(angle, probe index) of the first probe of `_probes` where `good` fails: the stretch starts
    at the breakpoint below that probe (0° for the first). None when every probe holds."""
    bad = np.flatnonzero(~good)
    if bad.size == 0:
        return None
    j = int(bad[0])
    return float(pts[max(j - 1, 0)]), j


def exact_failures(model, tests):
    """For each ``ok`` of `tests` (state codes -> bool array), the first climbing slope in [0°, 90°]
    where it stops holding, and the state code just past it: [(angle or None, code or None)]."""
    pts, probe = _probes(model, model.boundary_weights())
    codes = model.state(probe).state
    out = []
    for ok in tests:
        first = _first_bad(pts, ok(codes))
        out.append((None, None) if first is None else (first[0], int(codes[first[1]])))
    return out


def scanned_failures(model, tests):
    """As `exact_failures`, by a scan every 0.25° and bisection of each change to 0.01°."""
    grid = np.arange(0.0, 90.0 + SCAN_STEP_DEG / 2, SCAN_STEP_DEG)
    codes = model.state(grid).state
    lo, hi, found = [], [], []
    for ok in tests:
        good = ok(codes)
        bad = np.flatnonzero(~good)
        if bad.size == 0:
            found.append(None)
        elif bad[0] == 0:
            found.append((0.0, int(codes[0])))
        else:
            found.append(False)
            lo.append(grid[bad[0] - 1])
            hi.append(grid[bad[0]])
    lo, hi = np.array(lo), np.array(hi)
    pending = [j for j, f in enumerate(found) if f is False]
    while pending and np.max(hi - lo) > BISECT_TO_DEG:
        mid = (lo + hi) / 2.0
        mid_codes = model.state(mid).state
        for k, j in enumerate(pending):
            if tests[j](mid_codes[k:k + 1])[0]:
                lo[k] = mid[k]
            else:
                hi[k] = mid[k]
    if pending:
        last = model.state(hi).state
        for k, j in enumerate(pending):
            found[j] = (float(hi[k]), int(last[k]))
    return [(None, None) if f is None else f for f in found]


def named_climb_angles(model) -> dict:
    """``handover``, ``max_grade`` and ``max_grade_limit`` of a slope model (climbing, from 0°).

    The handover is the smallest slope >= 0 at which the overdriven axle is the one that lets go,
    None if it never does below the max grade; the max grade is the top of the contiguous range
    from 0° with no ``both`` and no lift, limited by "slip" or "lift" (90° and "lift" if none).
    """
    fast = model.fast_code()
    tests = [lambda c: np.isin(c, HOLDING)]
    if fast is not None:
        tests.append(lambda c: c != fast)
    search = exact_failures if model.constant_ratio else scanned_failures
    found = search(model, tests)
    (grade, code) = found[0]
    if grade is None:
        grade, limit = 90.0, "lift"
    else:
        limit = "lift" if code == LIFTED else "slip"
    handover = None
    if fast is not None:
        angle, _ = found[1]
        if angle is not None and angle < grade:
            handover = angle
    return {"handover": handover, "max_grade": grade, "max_grade_limit": limit}


def weight_only_handover_deg(model) -> Optional[float]:
    """Rule of thumb ("the lighter axle lets go"): the first slope >= 0 where the overdriven axle
    has the smaller static grip with no climbing load, ``μ_s,fast N_fast < μ_s,slow N_slow``.

    With equal friction this is the balance angle [1]_. Not a physical state (MODEL section 3):
    a comparison figure only. None with no overdrive or past a lift.
    """
    fast = model.fast_code()
    if fast is None:
        return None
    (msf, _), (msr, _) = model.mu_f, model.mu_r
    w = (msf, -msr, 0.0) if fast == FRONT else (-msf, msr, 0.0)
    pts, probe = _probes(model, [w, (1.0, 0.0, 0.0), (0.0, 1.0, 0.0)])
    nf, nr = model.loads(probe)
    margin = w[0] * nf + w[1] * nr
    lifted = (nf <= 0) | (nr <= 0)
    # past a lift nothing is handed over; the rule only ranks two loaded axles
    first = _first_bad(pts, (margin >= 0) | lifted)
    return None if first is None else first[0]


def saturation_weights(model):
    """``(α, β, γ)`` of ``α N_f + β N_r + γ F_req`` that vanish where an axle's patch saturates at
    the onset solution: with that axle at ``±μ_s N`` its slip is ``±3μ_s/c``, the driveline fixes
    the other's slip, hence the other's brush share ``ψ*`` [2]_."""
    (msf, _), (msr, _) = model.mu_f, model.mu_r
    cf, cr = model.stiffness_for_solve()
    k = model.ratio_at_level()
    a_f, a_r = 3.0 * msf / cf, 3.0 * msr / cr
    out = []
    for s in (1.0, -1.0):
        sig_f = s * a_f  # front saturated: σ_r = 1 − K (1 − σ_f)
        psi_r = float(brush_psi((1.0 - k * (1.0 - sig_f)) / a_r))
        out.append((s * msf, msr * psi_r, -1.0))
        sig_r = s * a_r  # rear saturated: σ_f = 1 − (1 − σ_r)/K
        psi_f = float(brush_psi((1.0 - (1.0 - sig_r) / k) / a_f))
        out.append((msf * psi_f, s * msr, -1.0))
    return out
