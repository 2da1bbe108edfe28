"""Fuzz the setup loader, the value checker, the analysis and `slopetune report` with hostile input.

Run: python bench/fuzz_inputs.py [--cases 10000] [--seed 313]
Goal: every case either loads or is refused with one `SetupError` line that names the key (or the
file and line for file-level problems); a setup that loads always analyses to finite forces; a
value the tuner's form accepts (`check_value` returns None) is always one the file accepts.
Prints the number of cases per family and the number of crashes (must be 0).

The strategies and checks live here so that tests/test_fuzz.py runs the same ones with fewer cases.
Input space: NaN, +-inf, +-0, negative, huge and subnormal numbers, 64-bit integers, wrong types
(text, booleans, lists, tables, dates), missing and extra keys and sections, the shipped files
truncated, cut or sprinkled with random characters, and random text and bytes; and, built from
structure (bench/fuzz_structures.py): deep nesting, long dotted keys, header-like lines in
multi-line strings, thousands of unknown keys, extreme legal gear stages, every TOML layout saved
back, control and bidi characters in printed text, extreme command-line numbers, special files,
extreme sizes and planner limits far wider than needed.
"""

from __future__ import annotations

import argparse
import contextlib
import copy
import dataclasses
import io
import math
import re
import sys
import tempfile
import time
import traceback
from pathlib import Path

import numpy as np
import tomlkit
from hypothesis import HealthCheck, given, settings
from hypothesis import seed as hyp_seed
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import STATES, SetupError, analyse, check_value, load_setup, parse_setup  # noqa: E402
from slopetune.engine.setup_file import one_line  # noqa: E402
from slopetune.engine.setup_model import FIELDS, rule_for  # noqa: E402

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

SHIPPED = [ROOT / "setups" / "marmot-stock.toml", ROOT / "setups" / "marmot-overdrive.toml"]
SHIPPED_TEXT = [p.read_text(encoding="utf-8") for p in SHIPPED]
# A third base document: overdrive as a percentage, every optional key, and a course.
_EXTRA = tomllib.loads(SHIPPED_TEXT[0])
_EXTRA["driveline"] = {"overdrive_pct": 8.5}
_EXTRA["grip"].update(rear_mu_static=0.9, rear_mu_kinetic=0.7)
_EXTRA["terrain"].update(accel_g=0.1, load="none")
_EXTRA["course"] = {"name": "Slate Ledge (invented)", "belly_clearance_mm": 45,
                    "points_mm": [[0, 0], [400, 0], [450, 120], [900, 120], [1300, 380]]}
BASE_DOCS = [tomllib.loads(t) for t in SHIPPED_TEXT] + [_EXTRA]

SPECIAL_NUMBERS = [
    math.nan, -math.nan, math.inf, -math.inf, 0.0, -0.0, 0, -1, -1.0, 5e-324, -5e-324, 2.2250738585072014e-308,
    1e-310, 1.7976931348623157e308, -1.7976931348623157e308, 1e300, 1e-300, 2**63 - 1, -(2**63), 1e6, 1e5, 100,
    -90, 90, 90.0000001, -50, 1000, 1001, 0.5, 1e-9,
]

# Dotted keys the tuner's form and the checker understand (ballast and stages are indexed).
KNOWN_KEYS = sorted(
    [k for k in FIELDS if not k.startswith(("ballast.", "driveline.teeth"))]
    + [f"rig.ballast.{i}.{leaf}" for i in range(3) for leaf in ("mass_g", "x_mm", "z_mm", "name")]
    + [f"driveline.{side}_stages.{j}.{k}" for side in ("front", "rear") for j in range(2) for k in range(3)]
    + ["name", "notes", "terrain.load", "driveline.front_stages", "driveline.rear_stages", "course",
       "rig", "grip", "terrain", "driveline", "rig.ballast", "rig.ballast.x.mass_g", "grip.nope",
       "nope", "a.b.c.d", "", ".", "rig..mass_g", "rig.ballast.-1.x_mm"]
)

# ---------------------------------------------------------------------------- strategies

numbers = st.one_of(
    st.sampled_from(SPECIAL_NUMBERS),
    st.floats(),  # includes NaN, +-inf, subnormals and huge values
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
)
_leaf = st.one_of(numbers, st.text(max_size=12), st.booleans())
stage_lists = st.lists(st.lists(st.integers(-1, 1001), min_size=2, max_size=2), max_size=130)
values = st.one_of(
    numbers,
    stage_lists,
    _leaf,
    st.lists(_leaf, max_size=4),
    st.lists(st.lists(numbers, min_size=0, max_size=3), max_size=4),
    st.dictionaries(st.text(min_size=1, max_size=8), _leaf, max_size=3),
    st.dates(),
    st.datetimes(),
    st.times(),
)
key_names = st.one_of(st.sampled_from(["mass_g", "schema", "rig", "ballast", "x_mm", "load", "points_mm"]),
                      st.text(min_size=1, max_size=10))


def leaf_paths(doc, prefix=()):
    """Every path (tuple of keys and list indexes) into the document, tables and leaves alike."""
    out = []
    if isinstance(doc, dict):
        for k, v in doc.items():
            out.append(prefix + (k,))
            out += leaf_paths(v, prefix + (k,))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            out.append(prefix + (i,))
            out += leaf_paths(v, prefix + (i,))
    return out


# Keys a base document may lack: setting them exercises optional keys and "give one, not both".
SCHEMA_PATHS = [
    ("schema",), ("name",), ("notes",), ("rig",), ("driveline",), ("grip",), ("terrain",), ("course",),
    *[("rig", k) for k in ("mass_g", "wheelbase_mm", "front_bias_pct", "cg_height_mm", "track_mm",
                           "tire_dia_front_mm", "tire_dia_rear_mm", "ballast")],
    ("driveline", "overdrive_pct"), ("driveline", "front_stages"), ("driveline", "rear_stages"),
    *[("grip", k) for k in ("mu_static", "mu_kinetic", "rolling_resistance", "front_mu_static",
                            "front_mu_kinetic", "rear_mu_static", "rear_mu_kinetic")],
    ("terrain", "slope_deg"), ("terrain", "accel_g"), ("terrain", "load"),
    ("course", "name"), ("course", "points_mm"), ("course", "belly_clearance_mm"),
]


def _set(doc, path, value):
    obj = doc
    for part in path[:-1]:
        if isinstance(obj, dict):
            if part not in obj or not isinstance(obj[part], (dict, list)):
                obj[part] = {}
            obj = obj[part]
        elif isinstance(obj, list) and isinstance(part, int) and part < len(obj):
            obj = obj[part]
        else:
            return
    last = path[-1]
    if isinstance(obj, dict):
        obj[last] = value
    elif isinstance(obj, list) and isinstance(last, int) and last < len(obj):
        obj[last] = value


def _delete(doc, path):
    obj = doc
    for part in path[:-1]:
        try:
            obj = obj[part]
        except (KeyError, IndexError, TypeError):
            return
    try:
        del obj[path[-1]]
    except (KeyError, IndexError, TypeError):
        pass


@st.composite
def mutated_documents(draw, max_ops=4):
    """(toml_text, ops): a base document with 1..max_ops set / delete / extra-key mutations."""
    doc = copy.deepcopy(draw(st.sampled_from(BASE_DOCS)))
    ops = []
    for _ in range(draw(st.integers(1, max_ops))):
        kind = draw(st.sampled_from(["set", "set", "set", "delete", "extra"]))
        paths = leaf_paths(doc) + SCHEMA_PATHS
        if kind == "set":
            path = draw(st.sampled_from(paths))
            value = draw(values)
            _set(doc, path, value)
        elif kind == "delete":
            path = draw(st.sampled_from(leaf_paths(doc) or [("schema",)]))
            value = None
            _delete(doc, path)
        else:
            tables = [()] + [p for p in leaf_paths(doc) if isinstance(_get(doc, p), dict)]
            path = draw(st.sampled_from(tables)) + (draw(key_names),)
            value = draw(values)
            _set(doc, path, value)
        ops.append((kind, path, value))
    try:
        text = tomlkit.dumps(doc)
    except Exception:  # a value tomlkit cannot write (rare): write the raw repr instead, still hostile
        text = repr(doc)
    return text, ops


def _get(doc, path):
    obj = doc
    for part in path:
        obj = obj[part]
    return obj


@st.composite
def cut_texts(draw):
    """A shipped file truncated, with lines dropped or doubled, or random characters spliced in."""
    text = draw(st.sampled_from(SHIPPED_TEXT))
    for _ in range(draw(st.integers(1, 3))):
        op = draw(st.sampled_from(["truncate", "drop_line", "dup_line", "splice", "replace_char"]))
        if op == "truncate":
            text = text[: draw(st.integers(0, len(text)))]
        elif op in ("drop_line", "dup_line"):
            lines = text.splitlines(keepends=True)
            if lines:
                i = draw(st.integers(0, len(lines) - 1))
                lines[i: i + 1] = [] if op == "drop_line" else [lines[i], lines[i]]
                text = "".join(lines)
        else:
            i = draw(st.integers(0, len(text)))
            piece = draw(st.text(min_size=1, max_size=8))
            text = text[:i] + piece + text[i + (1 if op == "replace_char" else 0):]
    return text


@st.composite
def raw_bytes(draw):
    """Bytes for a setup file: random, or a shipped file with bytes overwritten (NUL, bad UTF-8)."""
    if draw(st.booleans()):
        return draw(st.binary(max_size=300))
    data = bytearray(draw(st.sampled_from(SHIPPED_TEXT)).encode())
    for _ in range(draw(st.integers(1, 4))):
        i = draw(st.integers(0, len(data) - 1))
        data[i] = draw(st.integers(0, 255))
    return bytes(data)


def _in_range(rule):
    lo = -1e300 if rule.lo is None else rule.lo
    hi = 1e300 if rule.hi is None else rule.hi
    if rule.integer:
        return st.integers(int(lo), int(hi))
    return st.floats(lo, hi, exclude_min=rule.lo_open, exclude_max=rule.hi_open, allow_nan=False)


@st.composite
def edge_documents(draw):
    """Documents whose numbers are all legal one by one, drawn at the edges (subnormal, bounds)."""
    doc = copy.deepcopy(draw(st.sampled_from(BASE_DOCS)))
    for _ in range(draw(st.integers(1, 6))):
        path = draw(st.sampled_from([p for p in leaf_paths(doc) if isinstance(_get(doc, p), (int, float))
                                     and not isinstance(_get(doc, p), bool)]))
        if path[0] in ("course", "schema"):
            continue
        key = ".".join(str(p) for p in path)
        if path[1] in ("front_stages", "rear_stages"):
            key = "driveline.teeth"
        elif path[:2] == ("rig", "ballast"):
            key = "ballast." + str(path[-1])
        _set(doc, path, draw(_in_range(FIELDS[key])))
    return tomlkit.dumps(doc)


slope_arrays = st.one_of(
    st.lists(st.floats(-90.0, 90.0), min_size=1, max_size=12),
    st.sampled_from([[-90.0, 0.0, 90.0], [90.0], [-90.0], [0.0], [-0.0], [5e-324], [89.99999999, -89.99999999]]),
)
analyse_options = st.fixed_dictionaries({
    "accel_g": st.one_of(st.none(), st.floats(-2.0, 2.0)),
})

# ---------------------------------------------------------------------------- checks


def _normalised(message: str) -> str:
    """Error text with list indexes spelled like dotted keys: rig.ballast[1].x_mm -> rig.ballast.1.x_mm."""
    return re.sub(r"\[(\d+)\]", r".\1", message)


def check_error(exc: SetupError, path: str) -> None:
    """One line, starts with the file, names the key when the problem has one."""
    msg = str(exc)
    assert msg == one_line(msg), f"message is not one line or holds control characters: {msg!r}"
    assert msg.startswith(path), f"message does not name the file {path!r}: {msg!r}"
    assert exc.reason.strip(), f"empty reason: {msg!r}"
    if exc.key is not None:
        # the key itself, or (for "give both" problems) its partner in the same section
        key = one_line(exc.key)  # control characters in a key are spelled out in the message
        section = key.split(".")[0]
        leaf = key.split(".")[-1]
        assert (key in _normalised(msg) or re.search(rf"\b{re.escape(section)}\.\w", msg)
                or (not leaf.isdigit() and re.search(rf"\b{re.escape(leaf)}\b", msg))), \
            f"message does not name the key {key!r}: {msg!r}"


def check_loaded(setup, warnings) -> None:
    """A setup that loaded holds only legal values."""
    for w in warnings:
        assert isinstance(w, str) and w == one_line(w), f"warning not one line: {w!r}"
    r = setup.rig
    for key in ("mass_g", "wheelbase_mm", "front_bias_pct", "cg_height_mm", "track_mm",
                "tire_dia_front_mm", "tire_dia_rear_mm"):
        v = getattr(r, key)
        assert FIELDS[f"rig.{key}"].problem(v) is None, f"rig.{key} = {v!r} loaded"


def check_analysis(setup, slopes, accel_g=None) -> None:
    """`analyse` never raises on a loaded setup and returns finite forces and sane angles."""
    slopes = np.asarray(slopes, dtype=float)
    a = analyse(setup, slopes, accel_g=accel_g)
    s = a.sweep
    for name in ("front_normal_g", "rear_normal_g", "required_g"):
        arr = getattr(s, name)
        assert arr.shape == slopes.shape, f"{name} shape {arr.shape} != {slopes.shape}"
        assert np.all(np.isfinite(arr)), f"{name} not finite: {arr!r} at {slopes!r}"
    codes = np.asarray(s.traction.state)
    assert codes.shape == slopes.shape and np.all((codes >= 0) & (codes < len(STATES))), f"state codes {codes!r}"
    assert all(v in ("none", "front", "rear", "both", "lifted") for v in s.slipping)
    holding = codes != STATES.index("lifted")
    for name in ("front_force_g", "rear_force_g", "windup_g", "reserve_g"):
        arr = np.asarray(getattr(s.traction, name))
        assert np.all(np.isfinite(arr[holding])), f"{name} not finite where not lifted: {arr!r}"
    for name, v in a.angles_deg.items():
        assert v is None or (math.isfinite(v) and -90.0 <= v <= 90.0), f"angle {name} = {v!r}"
    assert a.angles_deg["max_grade"] is not None
    assert a.max_grade_limit in ("slip", "lift")
    rig = a.rig
    for v in (rig.mass_g, rig.wheelbase_mm, rig.cg_from_rear_mm, rig.cg_height_mm, rig.front_bias_pct):
        assert math.isfinite(v), f"effective rig not finite: {rig!r}"
    od = a.overdrive
    for v in (od.gear_pct, od.effective_pct, od.pct_of_front, od.pct_difference, od.ratio):
        assert math.isfinite(v), f"overdrive figure not finite: {od!r}"
    again = a.at(slopes)
    assert np.array_equal(again.front_normal_g, s.front_normal_g)


OUTCOMES = {"loaded and analysed": 0, "refused in one line": 0}


def check_text(text: str, path: str = "fuzz.toml", slopes=(0.0, 30.0, 90.0), opts=None):
    """Parse hostile text; return the setup when it loads (after checking it analyses)."""
    try:
        setup, data, warnings = parse_setup(text, path)
    except SetupError as exc:
        check_error(exc, path)
        OUTCOMES["refused in one line"] += 1
        return None
    check_loaded(setup, warnings)
    check_analysis(setup, slopes, **(opts or {}))
    OUTCOMES["loaded and analysed"] += 1
    return setup


def dotted_key(path) -> str | None:
    """The loader's key for a document path, or None when the path is not a checked number."""
    path = tuple(path)
    if len(path) == 2 and path[0] in ("rig", "grip", "terrain") and f"{path[0]}.{path[1]}" in FIELDS:
        return f"{path[0]}.{path[1]}"
    if path == ("driveline", "overdrive_pct"):
        return "driveline.overdrive_pct"
    if len(path) == 4 and path[:2] == ("rig", "ballast") and path[3] in ("mass_g", "x_mm", "z_mm"):
        return f"rig.ballast.{path[2]}.{path[3]}"
    if len(path) == 4 and path[0] == "driveline" and path[1] in ("front_stages", "rear_stages"):
        return f"driveline.{path[1]}"
    return None


def check_single_refusal(text: str, ops, path: str = "fuzz.toml") -> None:
    """One illegal number in an otherwise good file: the error names exactly that key."""
    if len(ops) != 1 or ops[0][0] != "set":
        return
    _, doc_path, value = ops[0]
    key = dotted_key(doc_path)
    if key is None or rule_for(key).problem(value) is None:
        return
    if key.startswith("driveline.") and key != "driveline.overdrive_pct" and len(doc_path) != 4:
        return
    try:
        parse_setup(text, path)
    except SetupError as exc:
        assert exc.key == key, f"refused {key} = {value!r} but named {exc.key!r}: {exc}"
        return
    raise AssertionError(f"{key} = {value!r} was accepted")


def _doc_path(key: str):
    return tuple(int(p) if p.isdigit() else p for p in key.split("."))


def _with(setup, key: str, value):
    """`setup` with one value replaced; gear stage teeth are "driveline.front_stages.0.1"."""
    parts = key.split(".")
    if parts[0] == "driveline" and len(parts) == 4:
        stages = [list(s) for s in getattr(setup.driveline, parts[1])]
        stages[int(parts[2])][int(parts[3])] = value
        return dataclasses.replace(setup, driveline=dataclasses.replace(
            setup.driveline, **{parts[1]: tuple(map(tuple, stages))}))
    return setup.with_value(key, value)


def check_value_case(base: int, key, value) -> None:
    """`check_value` never raises; what it accepts the file accepts (same setup back) and analyses."""
    setup = BASE_SETUPS[base]
    try:
        problem = check_value(setup, key, value)
    except Exception as exc:  # noqa: BLE001 - this is exactly what the fuzz looks for
        raise AssertionError(f"check_value(setup, {key!r}, {value!r}) raised {exc!r}") from exc
    assert problem is None or (isinstance(problem, str) and problem.strip() and "\n" not in problem), \
        f"check_value({key!r}, {value!r}) -> {problem!r}"
    if problem is not None:
        return
    candidate = _with(setup, key, value)
    if key == "driveline.overdrive_pct" and setup.driveline.uses_stages:
        return  # stages win over a percentage; the form shows no percentage row while stages are set
    doc = copy.deepcopy(BASE_DOCS[base])
    _set(doc, _doc_path(key), value)
    try:
        loaded, _, _ = parse_setup(tomlkit.dumps(doc), "form.toml")
    except SetupError as exc:
        raise AssertionError(f"check_value accepted {key} = {value!r} but the file refuses it: {exc}") from None
    assert loaded == candidate, f"{key} = {value!r}: the file reads back {loaded!r}"
    check_analysis(candidate, [-90.0, -30.0, 0.0, 30.0, 90.0])


def check_bytes(data: bytes, folder: Path) -> None:
    path = folder / "fuzz.toml"
    path.write_bytes(data)
    try:
        loaded = load_setup(path)
    except SetupError as exc:
        check_error(exc, str(path))
        OUTCOMES["refused in one line"] += 1
        return
    check_loaded(loaded.setup, loaded.warnings)
    check_analysis(loaded.setup, [0.0, 45.0, 90.0])
    OUTCOMES["loaded and analysed"] += 1


def check_cli_report(text: str, folder: Path) -> None:
    """`slopetune report FILE`: exit 0, 1 or 2; on 2 one line on stderr and no traceback."""
    from slopetune.tui.cli import main

    path = folder / "report.toml"
    path.write_text(text, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["report", str(path)])
    errors = [l for l in err.getvalue().splitlines() if "warning" not in l]
    assert code in (0, 1, 2), f"exit code {code}"
    assert "Traceback" not in err.getvalue() and "RuntimeWarning" not in err.getvalue(), err.getvalue()
    if code == 2:
        assert len(errors) == 1 and errors[0].startswith("slopetune: "), f"stderr: {err.getvalue()!r}"


# ---------------------------------------------------------------------------- families

KEYS = st.one_of(st.sampled_from(KNOWN_KEYS), st.text(max_size=16))
RANGED_KEYS = sorted([k for k in FIELDS if not k.startswith(("ballast.", "driveline.teeth"))]
                     + [f"rig.ballast.{i}.{leaf}" for i in range(2) for leaf in ("mass_g", "x_mm", "z_mm")]
                     + [f"driveline.front_stages.0.{k}" for k in range(2)])
BASE_SETUPS = [parse_setup(t)[0] for t in SHIPPED_TEXT] + [parse_setup(tomlkit.dumps(_EXTRA))[0]]


def families(folder: Path):
    """name -> (strategy, check(drawn)) for each part of the input space."""
    return {
        "mutated documents": (
            st.tuples(mutated_documents(), slope_arrays, analyse_options),
            lambda d: (check_text(d[0][0], slopes=d[1], opts=d[2]), check_single_refusal(d[0][0], d[0][1])),
        ),
        "edge-of-range documents": (
            st.tuples(edge_documents(), slope_arrays, analyse_options),
            lambda d: check_text(d[0], slopes=d[1], opts=d[2]),
        ),
        "cut shipped files": (cut_texts(), lambda t: check_text(t)),
        "random text": (st.text(max_size=400), lambda t: check_text(t)),
        "random bytes on disk": (raw_bytes(), lambda b: check_bytes(b, folder)),
        "check_value": (
            st.tuples(st.integers(0, len(BASE_SETUPS) - 1), KEYS, st.one_of(values, st.sampled_from(["climb", "none", "x"]))),
            lambda d: check_value_case(*d),
        ),
        "check_value in range": (
            st.tuples(st.integers(0, len(BASE_SETUPS) - 1), st.sampled_from(RANGED_KEYS), st.data()),
            lambda d: check_value_case(d[0], d[1], d[2].draw(_in_range(rule_for(d[1])))),
        ),
        "slopetune report": (mutated_documents(max_ops=2), lambda d: check_cli_report(d[0], folder)),
    }


SHARES = {  # fraction of the cases per family
    "mutated documents": 0.34, "edge-of-range documents": 0.18, "cut shipped files": 0.1,
    "random text": 0.06, "random bytes on disk": 0.08, "check_value": 0.12, "check_value in range": 0.08,
    "slopetune report": 0.04,
}


def run_family(strategy, check, n: int, seed: int):
    """Run `n` drawn cases through `check`; returns (cases run, [(input, traceback)])."""
    seen, crashes = [0], []

    @hyp_seed(seed)
    @settings(max_examples=n, deadline=None, database=None, derandomize=False,
              suppress_health_check=list(HealthCheck), phases=("generate",))
    @given(strategy)
    def run(drawn):
        seen[0] += 1
        try:
            check(drawn)
        except Exception:  # noqa: BLE001 - counted and shown, the run goes on
            crashes.append((repr(drawn)[:300], traceback.format_exc(limit=4)))

    run()
    return seen[0], crashes


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=10000, help="total cases over all families (10000)")
    ap.add_argument("--seed", type=int, default=313)
    ap.add_argument("--verbose", action="store_true", help="print the traceback of each kind of crash")
    args = ap.parse_args(argv)
    total, total_crashes = 0, 0
    t0 = time.perf_counter()
    print(f"fuzz seed {args.seed}")
    from bench import fuzz_structures  # the structure-aware families (nesting, layouts, special files, ...)

    shares = {**SHARES, **fuzz_structures.SHARES}
    scale = 1.0 / sum(shares.values())
    with tempfile.TemporaryDirectory() as tmp:
        every = {**families(Path(tmp)), **fuzz_structures.families(Path(tmp))}
        for i, (name, (strategy, check)) in enumerate(every.items()):
            n = max(1, round(args.cases * shares[name] * scale))
            t = time.perf_counter()
            seen, crashes = run_family(strategy, check, n, args.seed + i)
            total += seen
            total_crashes += len(crashes)
            print(f"{name:<26} {seen:>6} cases  {len(crashes):>3} crashes  {time.perf_counter() - t:6.1f} s")
            kinds = {}
            for drawn, tb in crashes:  # one example per kind of crash
                kinds.setdefault(re.sub(r"[-+.\de]{4,}|\d+", "#", tb.strip().splitlines()[-1])[:90], (drawn, tb))
            for kind, (drawn, tb) in kinds.items():
                print(f"  - {kind}\n    input: {drawn}" + ("\n    " + tb.strip().replace("\n", "\n    ")
                                                            if args.verbose else ""))
    print(f"files and texts: {OUTCOMES['loaded and analysed']} loaded and analysed, "
          f"{OUTCOMES['refused in one line']} refused with one line naming the key or file")
    print(f"total {total} cases, {total_crashes} crashes, {time.perf_counter() - t0:.0f} s")
    return 1 if total_crashes else 0


if __name__ == "__main__":
    sys.exit(main())
