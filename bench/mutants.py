"""The fixed list of single-point mutants that `bench/mutation.py` runs against the physics tests.

Each mutant is one exact source-text replacement in one `engine/` file: the anchor must occur
exactly once in that file, otherwise the mutant is reported as stale (the code moved on; rewrite
the mutant), never as killed. Kinds: sign flip, sin/cos swap, dropped term, wrong branch,
static/kinetic swap, per-axle swap, wrong constant.

`EQUIVALENT` holds the reason a surviving mutant cannot change any result (one line each); a
survivor without a reason there is a hole in the tests.
"""

from __future__ import annotations

from typing import NamedTuple


class Mutant(NamedTuple):
    ident: str
    path: str  # under engine/
    old: str  # exact anchor text
    new: str
    kind: str


M = Mutant

MUTANTS = (
    # --- slope_statics: grade loads and named angles (Gillespie ch. 2) ---------------------------
    M("S01", "slope_statics.py", "(cg_from_rear_mm * cos_t - cg_height_mm * (sin_t + accel_g))",
      "(cg_from_rear_mm * sin_t - cg_height_mm * (cos_t + accel_g))", "sin/cos swap in N_f"),
    M("S02", "slope_statics.py", "cg_height_mm * (sin_t + accel_g)", "cg_height_mm * (sin_t - accel_g)",
      "sign flip: throttle loads the front"),
    M("S03", "slope_statics.py", "cg_height_mm * (sin_t + accel_g)", "cg_height_mm * sin_t",
      "dropped term: throttle"),
    M("S04", "slope_statics.py", "return front, weight_g * cos_t - front", "return front, weight_g - front",
      "dropped cos in N_r"),
    M("S05", "slope_statics.py", "return front, weight_g * cos_t - front",
      "return front, weight_g * cos_t + front", "sign flip in N_r"),
    M("S06", "slope_statics.py", "psi = np.arctan2(q, p)", "psi = np.arctan2(p, q)",
      "sin/cos swap in the closed-form root"),
    M("S07", "slope_statics.py", "np.clip(-c / r, -1.0, 1.0)", "np.clip(c / r, -1.0, 1.0)",
      "sign flip in the closed-form root"),
    M("S08", "slope_statics.py", "np.arctan2(b - half, h)", "np.arctan2(half - b, h)",
      "sign flip: balance angle"),
    M("S09", "slope_statics.py", "-2 * h, -2 * h * accel_g, falling=True", "-2 * h, 2 * h * accel_g, falling=True",
      "sign flip: balance angle under throttle"),
    M("S10", "slope_statics.py", "return float(np.degrees(np.arctan2(b, h)))",
      "return float(np.degrees(np.arctan2(h, b)))", "sin/cos swap: front lift angle"),
    M("S11", "slope_statics.py", "a, h = wheelbase_mm - cg_from_rear_mm, cg_height_mm",
      "a, h = cg_from_rear_mm, cg_height_mm", "per-axle swap: rear lift uses b for a"),
    M("S12", "slope_statics.py", "return crossing_deg(a, h, h * accel_g, falling=False)",
      "return crossing_deg(a, h, -h * accel_g, falling=False)", "sign flip: rear lift under throttle"),
    M("S13", "slope_statics.py", "theta = math.degrees(phi + turn if falling else phi - turn)",
      "theta = math.degrees(phi - turn if falling else phi + turn)", "wrong branch: rising zero for falling"),
    M("S14", "slope_statics.py", "np.arctan2(track_mm / 2.0, cg_height_mm)",
      "np.arctan2(track_mm, cg_height_mm)", "dropped term: half track in sidehill roll"),
    M("S15", "slope_statics.py", "np.arctan(min(mu_static_front, rear))", "np.arctan(max(mu_static_front, rear))",
      "wrong branch: sidehill slide on the grippier axle"),
    M("S16", "slope_statics.py", "return track_mm / (2.0 * cg_height_mm)", "return track_mm / cg_height_mm",
      "dropped term: SSF factor 2"),
    M("S17", "slope_statics.py", "if -90.0 < deg < 90.0 and", "if -90.0 < deg < 180.0 and",
      "wrong branch: root outside the slope range kept"),

    # --- overdrive: gear trains and tyre sizes (Shigley ch. 13; Gillespie ch. 6) ----------------
    M("O01", "overdrive.py", "r *= driven / driver", "r *= driver / driven", "inverted stage ratio"),
    M("O02", "overdrive.py", "stage_reduction(rear_stages) / stage_reduction(front_stages)",
      "stage_reduction(front_stages) / stage_reduction(rear_stages)", "per-axle swap: gear trains"),
    M("O03", "overdrive.py", "* tire_dia_front_mm / tire_dia_rear_mm", "* tire_dia_rear_mm / tire_dia_front_mm",
      "per-axle swap: tyre diameters"),
    M("O04", "overdrive.py", "pct_of_front=e / k * 100.0", "pct_of_front=e * 100.0", "dropped term: / k"),
    M("O05", "overdrive.py", "abs(e) / ((k + 1.0) / 2.0) * 100.0", "abs(e) / (k + 1.0) * 100.0",
      "dropped term: mean of the two speeds"),
    M("O06", "overdrive.py", "math.degrees(math.acos(1.0 / k))", "math.degrees(math.asin(1.0 / k))",
      "sin/cos swap: turn-match steer"),
    M("O07", "overdrive.py", "elif e > 0:", "elif e < 0:", "wrong branch: which axle is fast"),

    # --- ballast (Jazar ch. 2) ----------------------------------------------------------------
    M("B01", "ballast.py", "mi * float(xi) for mi, xi in zip(m, x_mm)", "mi * float(xi) for mi, xi in zip(m, z_mm)",
      "x/z swap in the mass centre"),
    M("B02", "ballast.py", "base_x = rig.front_bias_pct / 100.0 * rig.wheelbase_mm",
      "base_x = (100.0 - rig.front_bias_pct) / 100.0 * rig.wheelbase_mm", "per-axle swap: rear share as b"),
    M("B03", "ballast.py", "total = math.fsum(m)", "total = math.fsum(abs(v) for v in m)",
      "sign flip: a removed part adds mass"),

    # --- measure (ISO 10392; Serway & Beichner ch. 5) -----------------------------------------
    M("M01", "measure.py", "return 100.0 * np.asarray(front_reading_g, dtype=float)",
      "return 100.0 - 100.0 * np.asarray(front_reading_g, dtype=float)", "per-axle swap: rear share"),
    M("M02", "measure.py", "x = weight_g * np.tan(np.arcsin(lift / wheelbase_mm))",
      "x = weight_g * np.sin(np.arcsin(lift / wheelbase_mm))", "sin for tan: lift angle"),
    M("M03", "measure.py", "return float(axle_height_mm + np.dot(x, delta) / np.dot(x, x))",
      "return float(np.dot(x, delta) / np.dot(x, x))", "dropped term: axle height"),
    M("M04", "measure.py", "return np.tan(np.radians(", "return np.sin(np.radians(", "sin for tan: mu"),
    M("M05", "measure.py", "np.dot(x, delta) / np.dot(x, x)", "np.sum(delta) / np.sum(x)",
      "wrong fit: ratio of sums for least squares"),
    # one axle on the board, the other on a low-friction sheet (Gillespie ch. 2 grade loads)
    M("M06", "measure.py", "front, rear = axle_loads_g(1.0, wheelbase, b, h, slope)",
      "front, rear = axle_loads_g(1.0, wheelbase, b, 0.0 * h, slope)", "dropped term: h sin α (load transfer)"),
    M("M07", "measure.py", 'slope = alpha if facing == "up" else -alpha', "slope = alpha",
      "wrong branch: facing ignored"),
    M("M08", "measure.py", 'n_axle, n_other = (front, rear) if axle == "front" else (rear, front)',
      'n_axle, n_other = (rear, front) if axle == "front" else (front, rear)', "per-axle swap: one-axle load"),
    M("M09", "measure.py", "mu = np.sin(np.radians(alpha)) / n_axle", "mu = np.tan(np.radians(alpha)) / n_axle",
      "tan for sin: pull along the board"),
    M("M10", "measure.py", "& (n_axle > LOAD_FLOOR) & (n_other > LOAD_FLOOR))", "& (n_axle > LOAD_FLOOR))",
      "dropped term: the rig tips over the measured axle"),
    M("M11", "measure.py", "return math.degrees(math.atan(mu_max * d / (wheelbase + mu_max * h))), \"mu\"",
      "return math.degrees(math.atan(mu_max)), \"mu\"", "wrong constant: atan(mu_max) bound for one axle"),
    # both axles blocked: the tip-over bound (Gillespie ch. 2 lift angles)
    M("M12", "measure.py", 'lever = b if facing == "up" else wheelbase - b',
      'lever = wheelbase - b if facing == "up" else b', "per-axle swap: which axle lifts"),
    M("M13", "measure.py", "tip = max(blocked_tip_angle_deg(", "tip = min(blocked_tip_angle_deg(",
      "wrong branch: facing not known bounds by the gentler tip"),
    M("M14", "measure.py", 'if axle == "both" and None in rig:', 'if axle == "both":',
      "dropped term: the rig's tip-over check"),

    # --- analysis: the model built from a setup, named angles -----------------------------------
    M("A01", "analysis.py", "st.sidehill_slide_angle_deg(min(model.mu_f[0], model.mu_r[0]))",
      "st.sidehill_slide_angle_deg(min(model.mu_f[1], model.mu_r[1]))", "static/kinetic swap: sidehill slide"),
    M("A02", "analysis.py", "self.mu_f, self.mu_r = (fs, fk), (rs, rk)",
      "self.mu_f, self.mu_r = (rs, rk), (fs, fk)", "per-axle swap: mu"),
    M("A03", "analysis.py", "self.mu_f, self.mu_r = (fs, fk), (rs, rk)",
      "self.mu_f, self.mu_r = (fk, fs), (rk, rs)", "static/kinetic swap: mu"),
    M("A04", "analysis.py", "return 100.0 * self.cg_from_rear_mm / self.wheelbase_mm",
      "return 100.0 - 100.0 * self.cg_from_rear_mm / self.wheelbase_mm", "per-axle swap: effective bias"),
    M("A05", "analysis.py", "return overdrive_figures(gear_pct(setup), dia_f, dia_r)",
      "return overdrive_figures(gear_pct(setup), dia_r, dia_f)", "per-axle swap: tyres into the overdrive"),
    M("A06", "analysis.py", "return FRONT if e > 0 else REAR", "return REAR if e > 0 else FRONT",
      "wrong branch: which axle is fast on a climb"),
    M("A07", "analysis.py", "(msf, -msr, -1.0), (-msf, msr, -1.0)]", "(msf, -msr, -1.0)]",
      "dropped term: breakpoint of a rear overdrive"),
    M("A08", "analysis.py", "return self if self.accel == 0 else _Model(self.rig, self.setup, 0.0, self.ratio, self.stiffness)",
      "return self", "wrong branch: steady-climb angles take the throttle"),
    M("A09", "analysis.py", "self.free_f, self.free_r = r.tire_dia_front_mm, r.tire_dia_rear_mm",
      "self.free_f, self.free_r = r.tire_dia_rear_mm, r.tire_dia_front_mm", "per-axle swap: free tyre diameters"),
    M("A10", "analysis.py", "(msf, msr, -s),  # both together", "",
      "dropped term: breakpoint where both together run out"),
    M("A11", "analysis.py", "c = (rows[:, 0] + rows[:, 2]) / 2.0", "c = (rows[:, 0] + rows[:, 2])",
      "dropped term: constant of p cos + q sin + c"),
    M("A12", "analysis.py", "rig.mass_g, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm, 0.0)",
      "rig.mass_g, rig.wheelbase_mm, rig.wheelbase_mm - rig.cg_from_rear_mm, rig.cg_height_mm, 0.0)",
      "per-axle swap: level loads of the loaded speed ratio"),
    M("A13", "analysis.py", "required_force_g(self.rig.mass_g, slope_deg, self.crr, self.accel)",
      "required_force_g(self.rig.mass_g, slope_deg, 0.0, self.accel)", "dropped term: rolling resistance"),

    # --- traction (Coulomb rule under wind-up, MODEL §5 limit) ----------------------------------
    M("T01", "traction.py", "np.sin(th) + rolling_resistance * np.cos(th) + accel_g",
      "np.sin(th) + rolling_resistance + accel_g", "dropped cos: rolling resistance"),
    M("T02", "traction.py", "return mu_fast_static * n_fast_g - mu_slow_static * n_slow_g < required_g",
      "return mu_fast_static * n_fast_g + mu_slow_static * n_slow_g < required_g", "sign flip: fast-first rule"),
    M("T03", "traction.py", "slow_if_fast = f_req - mk_fa * n_fa", "slow_if_fast = f_req - ms_fa * n_fa",
      "static/kinetic swap: spinning fast axle"),
    M("T04", "traction.py", "fast_if_slow = f_req + mk_sl * n_sl", "fast_if_slow = f_req - mk_sl * n_sl",
      "sign flip: dragged slow axle"),
    M("T05", "traction.py", "= nr, nf, msr, mkr, msf, mkf, REAR, FRONT", "= nr, nf, msr, mkf, msf, mkr, REAR, FRONT",
      "per-axle swap: kinetic mu with the rear overdriven"),
    M("T06", "traction.py", "np.where(holds, fast_if_slow, np.sign(fast_if_slow) * mk_fa * n_fa)",
      "np.where(holds, fast_if_slow, np.sign(fast_if_slow) * ms_fa * n_fa)", "static/kinetic swap: both slip"),
    M("T07", "traction.py", "np.where(holds, slow_if_fast, np.sign(slow_if_fast) * mk_sl * n_sl)",
      "np.where(holds, slow_if_fast, -np.sign(slow_if_fast) * mk_sl * n_sl)", "sign flip: both slip"),
    M("T08", "traction.py", "holds = np.abs(f_req) <= cap", "holds = f_req <= cap",
      "dropped term: braking needs grip too"),
    M("T09", "traction.py", '(f_fast - ref_f) if overdriven == "front" else (f_fast - (f_req - ref_f))',
      "(f_fast - ref_f)", "per-axle swap: wind-up reference"),
    M("T10", "traction.py", "lifted = (nf <= 0) | (nr <= 0)\n    nan = np.full_like", "lifted = nf <= 0\n    nan = np.full_like",
      "dropped term: rear lift"),

    # --- tyre slip: brush model (Pacejka sec. 3.2), slip definitions (SAE J670) ----------------
    M("TB01", "tyre_brush.py", "return x * (3.0 - 3.0 * np.abs(x) + x * x)", "return x * (3.0 - 3.0 * x + x * x)",
      "dropped |λ|: ψ no longer odd"),
    M("TB02", "tyre_brush.py", "return x * (3.0 - 3.0 * np.abs(x) + x * x)",
      "return x * (3.0 - 3.0 * np.abs(x) - x * x)", "sign flip: cubic term of ψ"),
    M("TB03", "tyre_brush.py", "return 3.0 * (1.0 - np.abs(x)) ** 2", "return 3.0 * (1.0 - np.abs(x))",
      "dropped square: slope of ψ"),
    M("TB04", "tyre_brush.py", "np.sign(u) * (1.0 - np.cbrt(1.0 - np.abs(u)))",
      "np.sign(u) * (1.0 - np.sqrt(1.0 - np.abs(u)))", "wrong inverse of ψ"),
    M("TB05", "tyre_brush.py", "return 1.0 - 1.0 / np.asarray(speed_ratio, dtype=float)",
      "return np.asarray(speed_ratio, dtype=float) - 1.0", "σ = s − 1 instead of 1 − 1/s"),
    M("TB06", "tyre_brush.py", "return sigma / (1.0 - sigma)", "return sigma / (1.0 + sigma)",
      "sign flip: κ from σ"),
    M("TB07", "tyre_brush.py", "lam = stiffness * sigma / (3.0 * np.asarray(mu_static, dtype=float))",
      "lam = stiffness * sigma / np.asarray(mu_static, dtype=float)", "dropped factor 3 in λ"),
    M("TB08", "tyre_brush.py", "return 3.0 * mu * lam / np.asarray(stiffness, float)",
      "return mu * lam / np.asarray(stiffness, float)", "dropped factor 3: slip for a force"),
    M("TS01", "traction.py", "a_f, a_r = 3.0 * msf / cf, 3.0 * msr / cr", "a_f, a_r = 3.0 * mkf / cf, 3.0 * mkr / cr",
      "static/kinetic swap: saturation slip"),
    M("TS02", "traction.py", "lam_f = (1.0 - (1.0 - sig_r) / ratio) / a_f", "lam_f = (1.0 - (1.0 - sig_r) * ratio) / a_f",
      "speed ratio the wrong way round"),
    M("TS03", "traction.py", "kin_f, kin_r = np.sign(lam_f) * mkf * nf_s, np.sign(lam_r) * mkr * nr_s",
      "kin_f, kin_r = np.sign(lam_f) * msf * nf_s, np.sign(lam_r) * mkr * nr_s",
      "static/kinetic swap: sliding front"),
    M("TS04", "traction.py", "kin_f, kin_r = np.sign(lam_f) * mkf * nf_s, np.sign(lam_r) * mkr * nr_s",
      "kin_f, kin_r = np.sign(lam_f) * mkr * nf_s, np.sign(lam_r) * mkf * nr_s", "per-axle swap: kinetic mu"),
    M("TS05", "traction.py", "fast_front = ratio >= 1.0", "fast_front = ratio <= 1.0",
      "speed ratio direction: which axle winds up"),
    M("TS06", "traction.py", "holds_r = np.abs(rest_r) <= grip_r", "holds_r = np.abs(rest_r) <= grip_f",
      "per-axle swap: grip of the axle left holding"),
    M("TS07", "traction.py", "sig_f_none = 1.0 - (1.0 - sig) / ratio", "sig_f_none = 1.0 - (1.0 - sig) * ratio",
      "speed ratio the wrong way round: reported front slip"),
    M("TS08", "traction.py", "state = np.where(only_r, np.where(holds_f, REAR, BOTH), state)",
      "state = np.where(only_r, np.where(holds_f, FRONT, BOTH), state)", "wrong branch: which axle let go"),
    M("TS09", "traction.py", "lin = (target - cf * nf_s * (1.0 - 1.0 / ratio))", "lin = (target + cf * nf_s * (1.0 - 1.0 / ratio))",
      "sign flip in the solver's starting guess"),
    M("TS10", "traction.py", "lam_r = sig_r / a_r", "lam_r = sig_r / a_f", "per-axle swap: rear saturation slip"),
    M("CS01", "contact_statics.py", "stiffness * (1.0 - 1.0 / np.where(s > 0, s, 1.0)) / (3.0 * mu_s)",
      "stiffness * (np.where(s > 0, s, 1.0) - 1.0) / (3.0 * mu_s)", "σ = s − 1 in the course statics"),
    M("CS02", "contact_statics.py", "return np.where(inside, 1.0 / (1.0 - sigma), np.nan)",
      "return np.where(inside, 1.0 + sigma, np.nan)", "s = 1 + σ in the course statics"),
    M("CS03", "contact_statics.py", "return 100.0 * sigma / (1.0 - sigma)", "return 100.0 * sigma",
      "reported slip σ instead of κ"),
    # --- course_loads: K under load along a walk, decided at the onset (MODEL §4, §5) ------------
    M("CL01", "course_loads.py", "keep = ~flagged  # the onset's solve stands",
      "keep = flagged | ~flagged  # the onset's solve stands",
      "wrong branch: the last pass's state where no loads reproduce their K, not the onset's"),
    M("CL02", "course_loads.py", "k_o, q_o = speed(o[gr], i)", "k_o, q_o = speed(x[gr], i)",
      "wrong branch: K from the loads after letting go, not the gripping solution's"),
    M("CL03", "course_loads.py", "return gear * d_f / d_r, (gear - 1.0) * (d_f / 2.0) * rate[at]",
      "return gear * d_f / d_r, (gear - 1.0) * (d_r / 2.0) * rate[at]", "per-axle swap: pitch term radius"),
    M("CL04", "course_loads.py", "_K_REL = 1e-11", "_K_REL = 1e-6",
      "wrong constant: K settled long before it reproduces its loads"),
    M("CL05", "course_loads.py", "(rear_to * np.sign(lam_r) >= 1.0)", "(rear_to * np.sign(lam_r) >= 0.0)",
      "wrong constant: a saturated rear taken to stay saturated at any K on its side"),
)

EQUIVALENT = {
    # ident: one line on why no result can change
    "TS09": "only the Newton start, kept inside the bracket: the force sum is monotone in the slip, so the "
            "same unique root is reached (to the solve tolerance, 1e-10 of the grip)",
}
