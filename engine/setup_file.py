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
import stat as stat_mod
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Optional

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

from .setup_model import (
    FIELDS, RIGID, SCHEMA_VERSION, BallastItem, Course, Driveline, Grip, Rig, Setup, Terrain,
    cross_field_problems, rule_for,
)
from .safe_text import one_line  # the one escaping rule for every message
from .toml_scan import ScanProblem, line_index, scan

MAX_FILE_BYTES = 1 << 20
MAX_COURSE_POINTS = 100_000  # a 1 MiB file holds about that many short points
MAX_STAGES = 10  # more would overflow the reduction (1000**103 > 1e308); real drivelines have 1 to 4
# Unknown keys warned about one by one; past this one summary line (a file of thousands of unknown
# keys would otherwise bury the screen).
MAX_WARNINGS = 20
# A real rig carries a handful of ballast items; thousands would only make every analysis slow.
MAX_BALLAST_ITEMS = 100
BOM = "\ufeff"
SECTIONS = ("rig", "driveline", "grip", "terrain", "course")
TOP_KEYS = ("schema", "name", "notes") + SECTIONS
SECTION_KEYS = {
    "rig": ("mass_g", "wheelbase_mm", "front_bias_pct", "cg_height_mm", "track_mm",
            "tire_dia_front_mm", "tire_dia_rear_mm", "roll_stiffness_front_pct", "rolling_dia_front_mm",
            "rolling_dia_rear_mm", "rolling_dia_loss_front_mm_per_100g", "rolling_dia_loss_rear_mm_per_100g",
            "ballast"),
    "driveline": ("overdrive_pct", "front_stages", "rear_stages"),
    "grip": ("mu_static", "mu_kinetic", "rolling_resistance", "front_mu_static", "front_mu_kinetic",
             "rear_mu_static", "rear_mu_kinetic", "slip_stiffness", "front_slip_stiffness",
             "rear_slip_stiffness"),
    "terrain": ("slope_deg", "accel_g", "load", "heading_deg"),  # load: retired, read only to warn
    "course": ("name", "points_mm", "belly_clearance_mm"),
}
BALLAST_KEYS = ("name", "mass_g", "x_mm", "z_mm")


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
    # The bytes read: a save compares them with the file on disk, so an outside edit that keeps the
    # modification time (cp -p, rsync -t) is still noticed. Kept whole (a setup file is small)
    # rather than hashed at load: hashlib's OpenSSL import would cost every start 3-4 ms.
    raw: Optional[bytes] = None
    bom: bool = False  # the file began with a UTF-8 byte-order mark (kept on save)

    @property
    def sha256(self) -> Optional[str]:
        """SHA-256 of the bytes read (None for a setup not read from a file). [hex]"""
        if self.raw is None:
            return None
        import hashlib

        return hashlib.sha256(self.raw).hexdigest()


def find_line(text: str, key: str) -> Optional[int]:
    """1-based line of a dotted key ("rig.mass_g", "rig.ballast.1.x_mm", "schema") in TOML text.

    Returns the line of the nearest enclosing key or table header when the key itself is absent,
    None when neither is found; a key that is itself a table gives its (first) header's line.
    One linear pass over the text (`toml_scan`); callers with many keys keep a `line_index`.
    """
    return line_index(text).find(key)


def _show(value: Any) -> str:
    if isinstance(value, str):
        return repr(value if len(value) <= 40 else value[:37] + "...")
    if isinstance(value, (dict, list)):
        text = repr(value)
        return text if len(text) <= 40 else text[:37] + "..."
    return repr(value)


class _Reader:
    """Walks the parsed table; every error goes through `fail` so it carries file and line."""

    def __init__(self, path: str, text: str, data: dict, index=None):
        self.path, self.text, self.data, self.warnings = path, text, data, []
        self.index = index if index is not None else line_index(text)
        self.unwarned = 0

    def fail(self, key: str, message: str):
        raise SetupError(message, self.path, self.index.find(key), key)

    def unknown(self, key: str, shown: str) -> None:
        """Warn about an unknown key, with the known key of its table it most looks like."""
        if len(self.warnings) >= MAX_WARNINGS:
            self.unwarned += 1
            return
        import difflib

        parts = key.split(".")
        known = (TOP_KEYS if len(parts) == 1 else BALLAST_KEYS if parts[:2] == ["rig", "ballast"]
                 else SECTION_KEYS.get(parts[0], ()))
        name = parts[-1]
        # a unit suffix left off ("overdrive" for "overdrive_pct") first, then the nearest spelling
        near = [k for k in known if k.startswith(name + "_")] or difflib.get_close_matches(name, list(known), 1, 0.75)
        if near and len(parts) > 1 and parts[:2] != ["rig", "ballast"]:
            near[0] = f"{parts[0]}.{near[0]}"
        hint = f"; did you mean {near[0]}?" if near else ""
        self.warnings.append(f"{self.path}:{self.index.find(key) or '?'}: unknown key {shown} kept but not used{hint}")

    def finish_warnings(self) -> list:
        extra = [f"{self.path}: {self.unwarned} more unknown keys kept but not used"] if self.unwarned else []
        return self.warnings + extra

    def number(self, table: dict, key: str, dotted: str):
        rule = rule_for(dotted)
        if key not in table:
            if rule.optional:
                return rule.default
            self.fail(dotted, f"{dotted}: missing; required, {rule.allowed()}" + (f" [{rule.unit}]" if rule.unit else ""))
        value = table[key]
        if rule.rigid_ok and value == RIGID:
            return math.inf
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
                self.unknown(f"{key}.{k}", f"{key}.{k}")
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

    def schema(self) -> None:
        """The top-level ``schema``: present, a whole number >= 1 and no newer than this reads."""
        if "schema" not in self.data:
            raise SetupError(f"schema: missing; required, schema = {SCHEMA_VERSION}", self.path, 1, "schema")
        schema = self.data["schema"]
        if isinstance(schema, bool) or not isinstance(schema, int) or schema < 1:
            self.fail("schema", f"schema = {_show(schema)}: must be the whole number {SCHEMA_VERSION}")
        if schema > SCHEMA_VERSION:
            self.fail("schema", f"schema = {schema}: newer than this slopetune reads ({SCHEMA_VERSION}); update slopetune")

    def read(self) -> Setup:
        d = self.data
        for k, v in d.items():
            if k in TOP_KEYS:
                continue
            if isinstance(v, dict):
                self.fail(k, f"[{k}]: unknown section; allowed sections: {', '.join(SECTIONS)}")
            self.unknown(k, k)
        self.schema()
        if "course" in d and "rig" not in d and set(d) <= {"schema", "course"}:
            raise SetupError("a course file (schema and [course] only), not a setup: walk a rig over it with "
                             "slopetune walk SETUP --course FILE", self.path, None)
        name = self.text_value(d, "name", "name", Path(self.path).stem)
        notes = self.text_value(d, "notes", "notes", "")

        r = self.table("rig", True)
        nums = {k: self.number(r, k, f"rig.{k}") for k in SECTION_KEYS["rig"][:-1]}
        ballast = r.get("ballast", [])
        if not isinstance(ballast, list):
            self.fail("rig.ballast", f"rig.ballast = {_show(ballast)}: must be [[rig.ballast]] items")
        if len(ballast) > MAX_BALLAST_ITEMS:
            self.fail("rig.ballast", f"rig.ballast: {len(ballast)} items; at most {MAX_BALLAST_ITEMS}")
        items = []
        for i, item in enumerate(ballast):
            base = f"rig.ballast.{i}"
            if not isinstance(item, dict):
                self.fail(base, f"rig.ballast[{i}] = {_show(item)}: must be a [[rig.ballast]] item")
            for k in item:
                if k not in BALLAST_KEYS:
                    self.unknown(f"{base}.{k}", f"rig.ballast[{i}].{k}")
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
            problem = stage_ratio_problem(driveline.front_stages, driveline.rear_stages)
            if problem:
                self.fail("driveline.front_stages", f"driveline.front_stages, rear_stages: {problem}")
        else:
            driveline = Driveline(self.number(dl, "overdrive_pct", "driveline.overdrive_pct"))

        g = self.table("grip", True)
        grip = Grip(**{k: (self.number(g, k, f"grip.{k}") if k in g or not FIELDS[f"grip.{k}"].optional
                           else FIELDS[f"grip.{k}"].default)
                       for k in SECTION_KEYS["grip"]})

        t = self.table("terrain", True)
        if "load" in t:
            self.warnings.append(
                f"{self.path}:{find_line(self.text, 'terrain.load') or '?'}: terrain.load is retired and ignored:"
                " every result is now for a climb under load (the weight-only figure is shown as a rule of thumb)")
        terrain = Terrain(self.number(t, "slope_deg", "terrain.slope_deg"),
                          self.number(t, "accel_g", "terrain.accel_g"),
                          self.number(t, "heading_deg", "terrain.heading_deg"))

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
            for v in p:
                problem = FIELDS["course.point_mm"].problem(v)
                if problem:
                    self.fail("course.points_mm", f"course.points_mm: point {_show(p)}: coordinate {v!r} {problem} [mm]")
            out.append((float(p[0]), float(p[1])))
        if any(b[0] <= a[0] for a, b in zip(out, out[1:])):
            self.fail("course.points_mm", "course.points_mm: x must increase from point to point")
        if len(pts) > MAX_COURSE_POINTS:
            self.fail("course.points_mm", f"course.points_mm: {len(pts)} points; a course holds at most "
                                          f"{MAX_COURSE_POINTS}")
        if "belly_clearance_mm" not in c:
            self.fail("course", "course.belly_clearance_mm: missing; required, "
                                f"{FIELDS['course.belly_clearance_mm'].allowed()} [mm]")
        clearance = self.number(c, "belly_clearance_mm", "course.belly_clearance_mm")
        return Course(name, tuple(out), float(clearance))


def stage_ratio_problem(front_stages, rear_stages) -> Optional[str]:
    """Why two legal stage lists cannot go together, or None.

    Each tooth count is legal on its own, but ten stages of 1:1000 against ten of 1000:1 make a
    front/rear speed ratio of 1e-60: the overdrive is then -100 % and the model divides by zero.
    The stages must give an overdrive inside the range `overdrive_pct` itself allows.
    """
    from .overdrive import gear_overdrive_pct

    rule = FIELDS["driveline.overdrive_pct"]
    with _quiet_floats():
        pct = gear_overdrive_pct(front_stages, rear_stages)
    if rule.problem(pct) is None:
        return None
    shown = f"{pct:+.4g} %" if math.isfinite(pct) else "beyond any number"
    return f"the stages give an overdrive of {shown}; allowed {rule.allowed()} [%] (check the tooth counts)"


class _quiet_floats:
    """Float overflow in a check is an answer (out of range), not a warning for stderr."""

    def __enter__(self):
        import warnings

        self._ctx = warnings.catch_warnings()
        self._ctx.__enter__()
        warnings.simplefilter("ignore", RuntimeWarning)

    def __exit__(self, *exc):
        return self._ctx.__exit__(*exc)


def parse_setup(text: str, path: str = "<setup>") -> tuple[Setup, dict, list]:
    """Check TOML text; return (setup, parsed table, warnings) or raise `SetupError`.

    A leading byte-order mark is allowed (some editors write one) and ignored.
    """
    if text.startswith(BOM):
        text = text[1:]
    if len(text) > MAX_FILE_BYTES:
        raise SetupError("text is over 1 MiB; a setup file must be under 1 MiB", path)
    if not text.strip():
        raise SetupError("file is empty; a setup needs at least schema, [rig], [grip] and [terrain]", path)
    data, index = parse_toml(text, path)
    reader = _Reader(path, text, data, index)
    setup = reader.read()
    return setup, data, [one_line(w) for w in reader.finish_warnings()]


def parse_toml(text: str, path: str = "<setup>"):
    """(table, line index) of TOML `text`, the parser's cost bounded first; `SetupError` naming
    the line otherwise. Shared by setup and course files."""
    try:  # bound the parser's cost before it runs (deep nesting, huge dotted keys)
        index = scan(text)
    except ScanProblem as exc:
        raise SetupError(f"TOML too complex to be a setup: {exc.reason}", path, exc.line) from None
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
    except RecursionError:  # the scan bounds nesting; this is a last guard, not a path
        raise SetupError("TOML too complex to be a setup: nested too deep", path) from None
    return data, index


def _read_raw(path) -> tuple[bytes, os.stat_result]:
    """The bytes of a regular file, at most `MAX_FILE_BYTES` + 1 of them, and its status.

    Opened without blocking and checked on the open descriptor, so a FIFO, a terminal or a device
    (/dev/zero, /dev/urandom) is refused before anything is read, and a file that grows while it
    is read still costs at most the cap.
    """
    p = Path(path)
    name = str(path)
    try:
        fd = os.open(p, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except FileNotFoundError:
        raise SetupError("no such file" + (" (a link to nowhere)" if p.is_symlink() else ""), name) from None
    except IsADirectoryError:
        raise SetupError("is a folder, not a setup file", name) from None
    except OSError as exc:
        raise SetupError(f"cannot read: {exc.strerror}", name) from None
    try:
        st = os.fstat(fd)
        if stat_mod.S_ISDIR(st.st_mode):
            raise SetupError("is a folder, not a setup file", name)
        if not stat_mod.S_ISREG(st.st_mode):
            kind = ("a named pipe (FIFO)" if stat_mod.S_ISFIFO(st.st_mode)
                    else "a device" if stat_mod.S_ISCHR(st.st_mode) or stat_mod.S_ISBLK(st.st_mode)
                    else "a socket" if stat_mod.S_ISSOCK(st.st_mode) else "not a regular file")
            raise SetupError(f"is {kind}, not a setup file; give a regular file", name)
        if st.st_size > MAX_FILE_BYTES:
            raise SetupError(f"file is {st.st_size / 1048576:.1f} MiB; a setup file must be under 1 MiB", name)
        chunks, left = [], MAX_FILE_BYTES + 1
        while left > 0:
            chunk = os.read(fd, min(left, 1 << 16))
            if not chunk:
                break
            chunks.append(chunk)
            left -= len(chunk)
    except BlockingIOError:
        raise SetupError("cannot read: the file is not ready (locked or special)", name) from None
    except OSError as exc:
        raise SetupError(f"cannot read: {exc.strerror}", name) from None
    finally:
        os.close(fd)
    raw = b"".join(chunks)
    if len(raw) > MAX_FILE_BYTES:
        raise SetupError("file is over 1 MiB; a setup file must be under 1 MiB", name)
    return raw, st


def _decode(raw: bytes, name: str) -> str:
    if raw.startswith(b"\xfe\xff") or raw.startswith(b"\xff\xfe"):
        raise SetupError("UTF-16 text (byte-order mark FE FF); save the setup as UTF-8", name)
    if b"\x00" in raw:
        raise SetupError("binary file (contains NUL bytes), not a TOML setup", name)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise SetupError(f"not UTF-8 text (byte {exc.start}); a setup file is UTF-8 TOML", name, line) from None


def read_setup_text(path) -> tuple[str, int]:
    """The file's text and modification time, refusing what cannot be a setup file."""
    raw, st = _read_raw(path)
    return _decode(raw, str(path)), st.st_mtime_ns


def file_bytes(path) -> Optional[bytes]:
    """A setup file's bytes as `load_setup` reads them; None when it cannot be read."""
    try:
        raw, _ = _read_raw(path)
    except SetupError:
        return None
    return raw


def load_setup(path) -> LoadedSetup:
    """Read, parse and check one setup file.

    Raises
    ------
    SetupError
        For any file or value that cannot be used; its message is one line.
    """
    raw, st = _read_raw(path)
    text = _decode(raw, str(path))
    bom = text.startswith(BOM)
    if bom:
        text = text[1:]
    setup, data, warnings = parse_setup(text, str(path))
    return LoadedSetup(Path(path), setup, text, data, st.st_mtime_ns, warnings, raw, bom)
