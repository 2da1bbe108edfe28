"""Write setups back to TOML without losing anything the user wrote.

Values are merged key by key into the user's own document through tomlkit, so comments, key
order, formatting of untouched values and keys slopetune does not know all survive. A value is
only rewritten when it changed. Files are replaced atomically: a temporary file in the same
folder, fsync, rename, so a power cut leaves either the old or the new complete file.
"""

from __future__ import annotations

import os
import secrets

from pathlib import Path
from typing import Optional

import tomlkit
from tomlkit.items import AoT, Table

from slopetune.engine import LoadedSetup, Setup, SetupError, parse_setup
from slopetune.engine.setup_model import FIELDS

TMP_SUFFIX = ".slopetune-tmp"


class SaveError(OSError):
    """A save that did not happen; `str()` is one line. The file on disk is untouched."""


class FileChangedOnDisk(SaveError):
    """The file changed on disk since it was loaded; saving again with force=True overwrites."""


def _tidy(value):
    """Numbers as a person would write them: 2385 not 2385.0, 1.05 not 1.0500000000000003."""
    if isinstance(value, bool) or not isinstance(value, float):
        return value
    value = float(f"{value:.10g}")
    if value.is_integer() and abs(value) < 1e15:
        return int(value)
    return value


def _same(old, new) -> bool:
    if isinstance(old, (int, float)) and isinstance(new, (int, float)) and not isinstance(old, bool):
        return float(old) == float(new)
    return old == new


def _put(table, key: str, value) -> None:
    """Set `key` only when its value changed (so untouched values keep their spelling)."""
    if value is None:
        if key in table:
            del table[key]
        return
    value = _tidy(value)
    if key in table and _same(table[key].unwrap() if hasattr(table[key], "unwrap") else table[key], value):
        return
    table[key] = value


def _section(doc, name: str):
    if name not in doc or not isinstance(doc[name], (Table, dict)):
        doc[name] = tomlkit.table()
    return doc[name]


def _optional(table, key: str, value, default) -> None:
    """Write a key that has a default only when the file has it or the value differs from it."""
    if key in table or not _same(value, default):
        _put(table, key, value)


def _stages(stages):
    arr = tomlkit.array()
    for driver, driven in stages:
        arr.append([driver, driven])
    return arr


def _merge_ballast(rig_table, items) -> None:
    existing = rig_table.get("ballast")
    if not items:
        if existing is not None:
            del rig_table["ballast"]
        return
    if not isinstance(existing, AoT):
        if existing is not None:
            del rig_table["ballast"]
        existing = tomlkit.aot()
        rig_table.append("ballast", existing)
    while len(existing) > len(items):
        existing.body.pop()  # AoT has no public pop that keeps rendering consistent
    for i, item in enumerate(items):
        fresh = i >= len(existing)
        if fresh:
            existing.append(tomlkit.table())
        t = existing[i]
        for key in ("name", "mass_g", "x_mm", "z_mm"):
            _put(t, key, getattr(item, key))
        if fresh:
            t.add(tomlkit.nl())


def render_setup(loaded: Optional[LoadedSetup], setup: Setup) -> str:
    """The setup as TOML text, merged into the loaded document when there is one."""
    doc = tomlkit.parse(loaded.text) if loaded is not None and loaded.text.strip() else tomlkit.document()
    if "schema" not in doc:
        doc["schema"] = 1
    _put(doc, "name", setup.name)
    if setup.notes or "notes" in doc:
        _put(doc, "notes", setup.notes)

    rig = _section(doc, "rig")
    for key in ("mass_g", "wheelbase_mm", "front_bias_pct", "cg_height_mm", "track_mm",
                "tire_dia_front_mm", "tire_dia_rear_mm"):
        _put(rig, key, getattr(setup.rig, key))
    _merge_ballast(rig, setup.rig.ballast)

    dl = _section(doc, "driveline")
    d = setup.driveline
    if d.uses_stages:
        _put(dl, "overdrive_pct", None)
        for key in ("front_stages", "rear_stages"):
            new = [list(s) for s in getattr(d, key)]
            old = dl.get(key)
            if old is None or old.unwrap() != new:
                dl[key] = _stages(getattr(d, key))
    else:
        _put(dl, "front_stages", None)
        _put(dl, "rear_stages", None)
        _put(dl, "overdrive_pct", d.overdrive_pct or 0)

    grip = _section(doc, "grip")
    g = setup.grip
    _put(grip, "mu_static", g.mu_static)
    _put(grip, "mu_kinetic", g.mu_kinetic)
    _optional(grip, "rolling_resistance", g.rolling_resistance, FIELDS["grip.rolling_resistance"].default)
    for key in ("front_mu_static", "front_mu_kinetic", "rear_mu_static", "rear_mu_kinetic"):
        _put(grip, key, getattr(g, key))

    terrain = _section(doc, "terrain")
    t = setup.terrain
    _put(terrain, "slope_deg", t.slope_deg)
    _optional(terrain, "accel_g", t.accel_g, 0.0)
    _optional(terrain, "load", t.load, "climb")

    if setup.course is not None and "course" not in doc:
        c = tomlkit.table()
        c["name"] = setup.course.name
        c["points_mm"] = [[_tidy(x), _tidy(z)] for x, z in setup.course.points_mm]
        c["belly_clearance_mm"] = _tidy(setup.course.belly_clearance_mm)
        doc["course"] = c
    return tomlkit.dumps(doc)


def _remove_stale_temps(folder: Path, name: str) -> None:
    """Temporary files a killed save left behind for this file."""
    try:
        for p in folder.glob(f".{name}.*{TMP_SUFFIX}"):
            try:
                p.unlink()
            except OSError:
                pass
    except OSError:
        pass


def write_atomic(path: Path, text: str) -> int:
    """Replace `path` with `text` atomically; returns the new mtime_ns. Raises SaveError."""
    path = Path(path)
    if path.is_symlink():  # write through the link: renaming over it would replace the link itself
        path = Path(os.path.realpath(path))
    folder = path.parent if str(path.parent) else Path(".")
    if path.is_dir():
        raise SaveError(f"{path}: is a folder, not a setup file")
    if not folder.is_dir():
        raise SaveError(f"{path}: folder {folder} does not exist")
    _remove_stale_temps(folder, path.name)
    tmp = folder / f".{path.name}.{secrets.token_hex(4)}{TMP_SUFFIX}"
    data = text.encode("utf-8")
    try:
        mode = os.stat(path).st_mode & 0o777 if path.exists() else 0o644
    except OSError:
        mode = 0o644
    try:
        fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, mode)
        try:
            view = memoryview(data)
            while view:
                view = view[os.write(fd, view):]
            os.fsync(fd)
        finally:
            os.close(fd)
        os.replace(tmp, path)
    except OSError as exc:
        try:
            tmp.unlink()
        except OSError:
            pass
        raise SaveError(f"{path}: not saved: {exc.strerror or exc} (the setup is still open, nothing lost)") from None
    try:  # make the rename itself durable
        dfd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(dfd)
        finally:
            os.close(dfd)
    except OSError:
        pass
    return os.stat(path).st_mtime_ns


def save_setup(loaded: Optional[LoadedSetup], setup: Setup, path=None, *, force: bool = False) -> LoadedSetup:
    """Save `setup` to `path` (default: where it was loaded from), merging into the loaded text.

    Raises
    ------
    FileChangedOnDisk
        The target is the loaded file and it changed on disk since it was read (unless `force`).
    SaveError
        Anything else that stops the save; the file on disk is left as it was.
    """
    target = Path(path) if path is not None else (loaded.path if loaded is not None else None)
    if target is None:
        raise SaveError("no file name yet: use save-as")
    if (not force and loaded is not None and loaded.path is not None and loaded.mtime_ns is not None
            and Path(loaded.path).resolve() == target.resolve()):
        try:
            now = os.stat(target).st_mtime_ns
        except OSError:
            now = None
        if now is not None and now != loaded.mtime_ns:
            raise FileChangedOnDisk(f"{target}: changed on disk since it was loaded")
    text = render_setup(loaded, setup)
    try:
        check, data, _ = parse_setup(text, str(target))
    except SetupError as exc:  # never write a file slopetune itself could not read back
        raise SaveError(f"{target}: not saved: {exc.reason}") from None
    mtime = write_atomic(target, text)
    return LoadedSetup(target, check, text, data, mtime, [])


def set_keys(path, values: dict) -> LoadedSetup:
    """Load `path`, set dotted keys (checked like the form does), save it back atomically.

    Raises SetupError for a value the setup cannot take, SaveError when writing fails.
    """
    from slopetune.engine import check_value, load_setup

    loaded = load_setup(path)
    setup = loaded.setup
    for key, value in values.items():
        problem = check_value(setup, key, value)
        if problem:
            raise SetupError(f"{key} = {value!r}: {problem}", str(path), None, key)
        setup = setup.with_value(key, value)
    return save_setup(loaded, setup)



__all__ = ["SaveError", "FileChangedOnDisk", "render_setup", "save_setup", "set_keys", "write_atomic"]
