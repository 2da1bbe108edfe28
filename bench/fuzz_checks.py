"""The checks of bench/fuzz_inputs.py: what every hostile input must come to.

A setup text either loads or is refused with one `SetupError` line that names the key (or the file
and line for file-level problems); a setup that loads always analyses to finite forces; a value the
tuner's form accepts (`check_value` returns None) is always one the file accepts. The inputs are
drawn by bench/fuzz_documents.py.
"""

from __future__ import annotations

import contextlib
import copy
import dataclasses
import io
import math
import re
import sys
from pathlib import Path

import numpy as np
import tomlkit

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench.fuzz_documents import BASE_DOCS, BASE_SETUPS, set_path  # noqa: E402
from slopetune.engine import STATES, SetupError, analyse, check_value, load_setup, parse_setup  # noqa: E402
from slopetune.engine.setup_file import one_line  # noqa: E402
from slopetune.engine.setup_model import FIELDS, rule_for  # noqa: E402


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
    set_path(doc, _doc_path(key), value)
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
