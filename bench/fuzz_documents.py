"""The hostile input of bench/fuzz_inputs.py: base documents and the strategies that spoil them.

NaN, +-inf, +-0, negative, huge and subnormal numbers, 64-bit integers, wrong types (text,
booleans, lists, tables, dates), missing and extra keys and sections, the shipped files truncated,
cut or sprinkled with random characters, random text and bytes, and legal values drawn at the
edges of their ranges. The checks they are run through are in bench/fuzz_checks.py.
"""

from __future__ import annotations

import copy
import math
import sys
from pathlib import Path

import tomlkit
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import parse_setup  # noqa: E402
from slopetune.engine.setup_model import FIELDS  # noqa: E402

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
BASE_SETUPS = [parse_setup(t)[0] for t in SHIPPED_TEXT] + [parse_setup(tomlkit.dumps(_EXTRA))[0]]

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


def set_path(doc, path, value):
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
            set_path(doc, path, value)
        elif kind == "delete":
            path = draw(st.sampled_from(leaf_paths(doc) or [("schema",)]))
            value = None
            _delete(doc, path)
        else:
            tables = [()] + [p for p in leaf_paths(doc) if isinstance(_get(doc, p), dict)]
            path = draw(st.sampled_from(tables)) + (draw(key_names),)
            value = draw(values)
            set_path(doc, path, value)
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


def in_range(rule):
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
        set_path(doc, path, draw(in_range(FIELDS[key])))
    return tomlkit.dumps(doc)


slope_arrays = st.one_of(
    st.lists(st.floats(-90.0, 90.0), min_size=1, max_size=12),
    st.sampled_from([[-90.0, 0.0, 90.0], [90.0], [-90.0], [0.0], [-0.0], [5e-324], [89.99999999, -89.99999999]]),
)
analyse_options = st.fixed_dictionaries({
    "accel_g": st.one_of(st.none(), st.floats(-2.0, 2.0)),
})
# The keys the form's checker is asked about: any known or random key, and every key with a range.
KEYS = st.one_of(st.sampled_from(KNOWN_KEYS), st.text(max_size=16))
RANGED_KEYS = sorted([k for k in FIELDS if not k.startswith(("ballast.", "driveline.teeth"))]
                     + [f"rig.ballast.{i}.{leaf}" for i in range(2) for leaf in ("mass_g", "x_mm", "z_mm")]
                     + [f"driveline.front_stages.0.{k}" for k in range(2)])
