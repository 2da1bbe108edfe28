"""Read and check a setup file (format 1, TOML) into a `Setup`, keeping the text beside it.

Reading uses the standard library's `tomllib` (`tomli` on Python 3.10). The text and its parsed
table are kept in the `LoadedSetup` so that a writer can merge changes into the user's own
document (comments, key order and unknown keys survive); writing lives outside `engine/`.

Every problem is one `SetupError` whose message names the file, the line when it is known, the
key, the value and what is allowed.
"""

from __future__ import annotations

import math
import os
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Optional

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

from .setup_model import (
    FIELDS, LOAD_MODES, SCHEMA_VERSION, BallastItem, Course, Driveline, Grip, Rig, Setup, Terrain,
    cross_field_problems, rule_for,
)

MAX_FILE_BYTES = 1 << 20
MAX_STAGES = 10  # more would overflow the reduction (1000**103 > 1e308); real drivelines have 1 to 4
SECTIONS = ("rig", "driveline", "grip", "terrain", "course")
TOP_KEYS = ("schema", "name", "notes") + SECTIONS
SECTION_KEYS = {
    "rig": ("mass_g", "wheelbase_mm", "front_bias_pct", "cg_height_mm", "track_mm",
            "tire_dia_front_mm", "tire_dia_rear_mm", "ballast"),
    "driveline": ("overdrive_pct", "front_stages", "rear_stages"),
    "grip": ("mu_static", "mu_kinetic", "rolling_resistance", "front_mu_static", "front_mu_kinetic",
             "rear_mu_static", "rear_mu_kinetic"),
    "terrain": ("slope_deg", "accel_g", "load"),
    "course": ("name", "points_mm", "belly_clearance_mm"),
}
BALLAST_KEYS = ("name", "mass_g", "x_mm", "z_mm")


_CONTROL = re.compile("[\x00-\x08\x0a-\x1f\x7f\x85\u2028\u2029]")


def one_line(text: str) -> str:
    """`text` with line breaks and terminal control characters spelled out (a key or file name
    in a hostile file can hold them; printed raw they would break the line or the terminal)."""
    return _CONTROL.sub(lambda m: repr(m.group())[1:-1], text)


class SetupError(ValueError):
    """A setup file or value that cannot be used. `str()` is one line for the user."""

    def __init__(self, message: str, path: Optional[str] = None, line: Optional[int] = None,
                 key: Optional[str] = None):
        self.path, self.line, self.key, self.reason = path, line, key, message
        where = path or "<setup>"
        if line is not None:
            where += f":{line}"
        super().__init__(one_line(f"{where}: {message}"))


@dataclass
class LoadedSetup:
    """A setup as read from disk, with what a writer needs to merge changes back."""

    path: Optional[Path]
    setup: Setup
    text: str = ""
    data: dict = field(default_factory=dict)
    mtime_ns: Optional[int] = None
    warnings: list = field(default_factory=list)


_HEADER = re.compile(r"^\s*(\[\[?)\s*([A-Za-z0-9_.\-\" ]+?)\s*\]\]?\s*(#.*)?$")


def find_line(text: str, key: str) -> Optional[int]:
    """1-based line of a dotted key ("rig.mass_g", "rig.ballast.1.x_mm", "schema") in TOML text.

    A plain scan of table headers and ``key =`` lines; good enough for files a person writes.
    Returns the table header's line when the key itself is absent, None when neither is found.
    A key that is itself a table ("motor", "rig.ballast") gives its (first) header's line.
    """
    for no, line in enumerate(text.splitlines(), 1):
        m = _HEADER.match(line)
        if m and m.group(2).replace('"', "").replace(" ", "") == key:
            return no
    parts = key.split(".")
    if len(parts) >= 3 and parts[2].isdigit():
        table, want_index, leaf = ".".join(parts[:2]), int(parts[2]), (parts[3] if len(parts) > 3 else None)
    elif len(parts) >= 2:
        table, want_index, leaf = parts[0], None, parts[1]
    else:
        table, want_index, leaf = "", None, parts[0]
    current, index, header_line = "", -1, (1 if table == "" else None)
    seen: dict[str, int] = {}
    for no, line in enumerate(text.splitlines(), 1):
        m = _HEADER.match(line)
        if m:
            name = m.group(2).replace('"', "").replace(" ", "")
            if m.group(1) == "[[":
                seen[name] = seen.get(name, -1) + 1
                index = seen[name]
            else:
                index = -1
            current = name
            if current == table and (want_index is None or index == want_index):
                header_line = no
            continue
        if current != table or (want_index is not None and index != want_index):
            continue
        if leaf is not None and re.match(rf"^\s*\"?{re.escape(leaf)}\"?\s*=", line):
            return no
    return header_line


def _show(value: Any) -> str:
    if isinstance(value, str):
        return repr(value if len(value) <= 40 else value[:37] + "...")
    if isinstance(value, (dict, list)):
        text = repr(value)
        return text if len(text) <= 40 else text[:37] + "..."
    return repr(value)


class _Reader:
    """Walks the parsed table; every error goes through `fail` so it carries file and line."""

    def __init__(self, path: str, text: str, data: dict):
        self.path, self.text, self.data, self.warnings = path, text, data, []

    def fail(self, key: str, message: str):
        raise SetupError(message, self.path, find_line(self.text, key), key)

    def number(self, table: dict, key: str, dotted: str):
        rule = rule_for(dotted)
        if key not in table:
            if rule.optional:
                return rule.default
            self.fail(dotted, f"{dotted}: missing; required, {rule.allowed()}" + (f" [{rule.unit}]" if rule.unit else ""))
        value = table[key]
        problem = rule.problem(value)
        if problem:
            unit = f" [{rule.unit}]" if rule.unit else ""
            self.fail(dotted, f"{dotted} = {_show(value)}: {problem}{unit}")
        return float(value) if not rule.integer else int(value)

    def text_value(self, table: dict, key: str, dotted: str, default: str) -> str:
        value = table.get(key, default)
        if not isinstance(value, str):
            self.fail(dotted, f"{dotted} = {_show(value)}: must be text in quotes")
        return value

    def table(self, key: str, required: bool) -> dict:
        value = self.data.get(key)
        if value is None:
            if required:
                raise SetupError(f"[{key}]: missing section; required", self.path, None, key)
            return {}
        if not isinstance(value, dict):
            self.fail(key, f"{key} = {_show(value)}: must be a section [{key}]")
        for k in value:
            if k not in SECTION_KEYS[key]:
                self.warnings.append(f"{self.path}:{find_line(self.text, f'{key}.{k}') or '?'}: "
                                     f"unknown key {key}.{k} kept but not used")
        return value

    def stages(self, table: dict, key: str):
        dotted = f"driveline.{key}"
        value = table[key]
        if not isinstance(value, list) or not 1 <= len(value) <= MAX_STAGES:
            self.fail(dotted, f"{dotted} = {_show(value)}: must be a list of 1 to {MAX_STAGES} "
                              "[driver, driven] tooth counts")
        out = []
        for i, stage in enumerate(value):
            if not isinstance(stage, list) or len(stage) != 2:
                self.fail(dotted, f"{dotted}[{i}] = {_show(stage)}: must be [driver, driven] tooth counts")
            for tooth in stage:
                problem = FIELDS["driveline.teeth"].problem(tooth)
                if problem:
                    self.fail(dotted, f"{dotted}[{i}] = {_show(stage)}: tooth count {_show(tooth)} {problem}")
            out.append((int(stage[0]), int(stage[1])))
        return tuple(out)

    def read(self) -> Setup:
        d = self.data
        for k, v in d.items():
            if k in TOP_KEYS:
                continue
            if isinstance(v, dict):
                self.fail(k, f"[{k}]: unknown section; allowed sections: {', '.join(SECTIONS)}")
            self.warnings.append(f"{self.path}:{find_line(self.text, k) or '?'}: unknown key {k} kept but not used")
        if "schema" not in d:
            raise SetupError(f"schema: missing; required, schema = {SCHEMA_VERSION}", self.path, 1, "schema")
        schema = d["schema"]
        if isinstance(schema, bool) or not isinstance(schema, int) or schema < 1:
            self.fail("schema", f"schema = {_show(schema)}: must be the whole number {SCHEMA_VERSION}")
        if schema > SCHEMA_VERSION:
            self.fail("schema", f"schema = {schema}: newer than this slopetune reads ({SCHEMA_VERSION}); update slopetune")
        name = self.text_value(d, "name", "name", Path(self.path).stem)
        notes = self.text_value(d, "notes", "notes", "")

        r = self.table("rig", True)
        nums = {k: self.number(r, k, f"rig.{k}") for k in SECTION_KEYS["rig"][:-1]}
        ballast = r.get("ballast", [])
        if not isinstance(ballast, list):
            self.fail("rig.ballast", f"rig.ballast = {_show(ballast)}: must be [[rig.ballast]] items")
        items = []
        for i, item in enumerate(ballast):
            base = f"rig.ballast.{i}"
            if not isinstance(item, dict):
                self.fail(base, f"rig.ballast[{i}] = {_show(item)}: must be a [[rig.ballast]] item")
            for k in item:
                if k not in BALLAST_KEYS:
                    self.warnings.append(f"{self.path}:{find_line(self.text, f'{base}.{k}') or '?'}: "
                                         f"unknown key rig.ballast[{i}].{k} kept but not used")
            items.append(BallastItem(
                name=self.text_value(item, "name", f"{base}.name", f"item {i + 1}"),
                mass_g=self._ballast_number(item, "mass_g", base, i),
                x_mm=self._ballast_number(item, "x_mm", base, i),
                z_mm=self._ballast_number(item, "z_mm", base, i),
            ))
        rig = Rig(**nums, ballast=tuple(items))

        dl = self.table("driveline", False)
        has_pct = "overdrive_pct" in dl
        has_f, has_r = "front_stages" in dl, "rear_stages" in dl
        if has_pct and (has_f or has_r):
            self.fail("driveline.overdrive_pct",
                      "driveline: give overdrive_pct or front_stages + rear_stages, not both")
        if has_f != has_r:
            missing = "rear_stages" if has_f else "front_stages"
            self.fail(f"driveline.{'front_stages' if has_f else 'rear_stages'}",
                      f"driveline.{missing}: missing; gear stages need both front_stages and rear_stages")
        if has_f:
            driveline = Driveline(None, self.stages(dl, "front_stages"), self.stages(dl, "rear_stages"))
        else:
            driveline = Driveline(self.number(dl, "overdrive_pct", "driveline.overdrive_pct"))

        g = self.table("grip", True)
        grip = Grip(**{k: (self.number(g, k, f"grip.{k}") if k in g or not FIELDS[f"grip.{k}"].optional
                           else FIELDS[f"grip.{k}"].default)
                       for k in SECTION_KEYS["grip"]})

        t = self.table("terrain", True)
        load = self.text_value(t, "load", "terrain.load", "climb")
        if load not in LOAD_MODES:
            self.fail("terrain.load", f"terrain.load = {_show(load)}: must be one of {', '.join(map(repr, LOAD_MODES))}")
        terrain = Terrain(self.number(t, "slope_deg", "terrain.slope_deg"),
                          self.number(t, "accel_g", "terrain.accel_g"), load)

        course = self.course() if "course" in d else None
        setup = Setup(name=name, notes=notes, rig=rig, driveline=driveline, grip=grip, terrain=terrain, course=course)
        for key, message in cross_field_problems(setup):
            value = setup.value(key)
            shown = f"{key} = {_show(value)}" if isinstance(value, (int, float)) else key
            self.fail(key, f"{shown}: {message}")
        return setup

    def _ballast_number(self, item, key, base, i):
        if key not in item:
            self.fail(base, f"rig.ballast[{i}].{key}: missing; required, {rule_for('rig.ballast.0.' + key).allowed()}")
        value = item[key]
        problem = rule_for("rig.ballast.0." + key).problem(value)
        if problem:
            self.fail(f"{base}.{key}", f"rig.ballast[{i}].{key} = {_show(value)}: {problem}")
        return float(value)

    def course(self) -> Course:
        c = self.table("course", False)
        name = self.text_value(c, "name", "course.name", "course")
        pts = c.get("points_mm")
        bad = f"course.points_mm = {_show(pts)}: must be a list of at least 2 [x, z] points in mm, x increasing"
        if not isinstance(pts, list) or len(pts) < 2:
            self.fail("course.points_mm", bad)
        out = []
        for p in pts:
            if (not isinstance(p, list) or len(p) != 2
                    or any(isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) for v in p)):
                self.fail("course.points_mm", f"course.points_mm: point {_show(p)} must be [x, z], finite numbers")
            out.append((float(p[0]), float(p[1])))
        if any(b[0] <= a[0] for a, b in zip(out, out[1:])):
            self.fail("course.points_mm", "course.points_mm: x must increase from point to point")
        clearance = c.get("belly_clearance_mm")
        if isinstance(clearance, bool) or not isinstance(clearance, (int, float)) or not math.isfinite(clearance) or clearance <= 0:
            self.fail("course.belly_clearance_mm",
                      f"course.belly_clearance_mm = {_show(clearance)}: must be a number > 0 [mm]")
        return Course(name, tuple(out), float(clearance))


def parse_setup(text: str, path: str = "<setup>") -> tuple[Setup, dict, list]:
    """Check TOML text; return (setup, parsed table, warnings) or raise `SetupError`."""
    if not text.strip():
        raise SetupError("file is empty; a setup needs at least schema, [rig], [grip] and [terrain]", path)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        reason = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg) or "not valid TOML"
        if m:
            reason += f" (column {m.group(2)})"
        raise SetupError(f"TOML syntax: {reason}", path, line) from None
    reader = _Reader(path, text, data)
    setup = reader.read()
    return setup, data, [one_line(w) for w in reader.warnings]


def read_setup_text(path) -> tuple[str, int]:
    """The file's text and modification time, refusing what cannot be a setup file."""
    p = Path(path)
    name = str(path)
    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise SetupError("no such file" + (" (a link to nowhere)" if p.is_symlink() else ""), name) from None
    except OSError as exc:
        raise SetupError(f"cannot read: {exc.strerror}", name) from None
    if p.is_dir():
        raise SetupError("is a folder, not a setup file", name)
    if st.st_size > MAX_FILE_BYTES:
        raise SetupError(f"file is {st.st_size / 1048576:.1f} MiB; a setup file must be under 1 MiB", name)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise SetupError(f"cannot read: {exc.strerror}", name) from None
    if len(raw) > MAX_FILE_BYTES:
        raise SetupError("file is over 1 MiB; a setup file must be under 1 MiB", name)
    if b"\x00" in raw:
        raise SetupError("binary file (contains NUL bytes), not a TOML setup", name)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise SetupError(f"not UTF-8 text (byte {exc.start}); a setup file is UTF-8 TOML", name, line) from None
    return text, st.st_mtime_ns


def load_setup(path) -> LoadedSetup:
    """Read, parse and check one setup file.

    Raises
    ------
    SetupError
        For any file or value that cannot be used; its message is one line.
    """
    text, mtime = read_setup_text(path)
    setup, data, warnings = parse_setup(text, str(path))
    return LoadedSetup(Path(path), setup, text, data, mtime, warnings)


def _is_text_key(key: str) -> bool:
    parts = key.split(".")
    return key in ("name", "notes", "terrain.load") or (
        len(parts) == 4 and parts[:2] == ["rig", "ballast"] and parts[3] == "name")


def check_value(setup: Setup, key: str, value) -> Optional[str]:
    """Why `value` cannot go at dotted `key` of `setup` (range or cross-field), or None if it can."""
    if not isinstance(key, str):
        return "not a setup key"
    parts = key.split(".")
    if _is_text_key(key):
        if not isinstance(value, str):
            return "must be text"
        if key == "terrain.load" and value not in LOAD_MODES:
            return f"must be one of {', '.join(map(repr, LOAD_MODES))}"
    elif len(parts) >= 2 and parts[0] == "driveline" and parts[1] in ("front_stages", "rear_stages"):
        # one tooth count at a time: driveline.front_stages.<stage>.<0 driver | 1 driven>
        stages = getattr(setup.driveline, parts[1])
        if (len(parts) != 4 or not parts[2].isdigit() or parts[3] not in ("0", "1") or stages is None
                or int(parts[2]) >= len(stages)):
            return "not a tooth count of this setup's gear stages"
        problem = FIELDS["driveline.teeth"].problem(value)
        return problem and f"{problem} [teeth]"
    else:
        try:
            rule = rule_for(key)
        except (KeyError, IndexError):
            return "not a setup key"
        if key not in FIELDS and not (len(parts) == 4 and parts[2].isdigit()):
            return "not a setup key"  # e.g. rig.ballast.x.mass_g
        problem = rule.problem(value)
        if problem:
            return f"{problem}" + (f" [{rule.unit}]" if rule.unit else "")
    try:
        candidate = setup.with_value(key, value)
    except (TypeError, ValueError, IndexError, AttributeError, KeyError) as exc:
        return str(exc)
    problems = cross_field_problems(candidate)
    if not problems:
        return None
    other, message = problems[0]
    return message if other == key else f"then {other} {message}"
