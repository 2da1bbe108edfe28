"""Write setups back to TOML without losing anything the user wrote.

Values are merged key by key into the user's own document through tomlkit, so comments, key
order, formatting of untouched values and keys slopetune does not know all survive. A value is
only rewritten when it changed, in the layout the file already uses (`[rig]` tables, dotted keys
at the top, an inline `rig = {...}`, ballast as `[[rig.ballast]]` blocks or as an inline array).
Before anything is written the new text is read back and must give exactly the setup being saved;
when it does not, the save is refused and the file is left alone.

Files are replaced atomically: a temporary file in the same folder, fsync, rename, so a power cut
leaves either the old or the new complete file. The new file keeps the old one's mode and owner. A
read-only file, a file owned by someone else (when slopetune cannot give it back) and a file with
several hard links are refused with how to save elsewhere, since replacing them would silently
change what the user set up. A change on disk since loading is found by a SHA-256 of the bytes.
"""

from __future__ import annotations

import dataclasses
import math
import os
import secrets
import stat as stat_mod

from pathlib import Path
from typing import Optional

import tomlkit
from tomlkit.items import AoT, Array, Table

from slopetune.engine import LoadedSetup, Setup, SetupError, parse_setup
from slopetune.engine.setup_file import BOM, file_bytes
from slopetune.engine.setup_model import FIELDS, RIGID

TMP_SUFFIX = ".slopetune-tmp"


class SaveError(OSError):
    """A save that did not happen; `str()` is one line. The file on disk is untouched."""


class SaveNeedsConfirmation(SaveError):
    """A save that needs a yes first; `question` asks it, saving again with force=True goes ahead."""

    confirm = "Overwrite"

    def __init__(self, message: str, question: str):
        super().__init__(message)
        self.question = question


class FileChangedOnDisk(SaveNeedsConfirmation):
    """The file changed on disk since it was loaded; saving again with force=True overwrites."""


class LinkToNowhere(SaveNeedsConfirmation):
    """The target is a symbolic link whose file does not exist: saving creates the file it names."""

    confirm = "Create it"


ELSEWHERE = "save under another name (tuner: a; command line: write to a copy)"


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
    before = table[key] if key in table else None
    table[key] = value
    _keep_comment_column(before, table[key] if key in table else None)


def _keep_comment_column(before, after) -> None:
    """A comment after a rewritten value stays in its column (87.8 for 88 does not push it right)."""
    trivia_before, trivia_after = getattr(before, "trivia", None), getattr(after, "trivia", None)
    if trivia_before is None or trivia_after is None or not trivia_after.comment:
        return
    try:
        width = len(before.as_string()) + len(trivia_before.comment_ws)
        trivia_after.comment_ws = " " * max(1, width - len(after.as_string()))
    except (AttributeError, TypeError):  # an item kind without a plain rendering: leave its spacing
        return


def _is_table(value) -> bool:
    """A table in any layout: `[x]`, inline `x = {...}`, dotted `x.k = v` (tomlkit's proxy)."""
    return hasattr(value, "keys") and hasattr(value, "__setitem__") and not isinstance(value, (AoT, Array, list))


def _section(doc, name: str):
    if name not in doc or not _is_table(doc[name]):
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


BALLAST_KEYS = ("name", "mass_g", "x_mm", "z_mm")


def _merge_ballast(rig_table, items) -> None:
    """Ballast items merged in the layout the file uses: `[[rig.ballast]]` blocks or an inline array
    (each kept with its comments); a file without ballast gets blocks under a `[rig]` table and an
    inline array where `rig` is itself inline or dotted (a block there would not be valid TOML)."""
    existing = rig_table.get("ballast")
    if not items:
        if existing is not None:
            del rig_table["ballast"]
        return
    if isinstance(existing, Array):
        while len(existing) > len(items):
            del existing[len(existing) - 1]
        for i, item in enumerate(items):
            if i >= len(existing):
                fresh = tomlkit.inline_table()
                fresh.update({key: _tidy(getattr(item, key)) for key in BALLAST_KEYS})
                existing.append(fresh)
            else:
                for key in BALLAST_KEYS:
                    _put(existing[i], key, getattr(item, key))
        return
    if existing is not None and not isinstance(existing, AoT):
        del rig_table["ballast"]
        existing = None
    if existing is None:
        if not isinstance(rig_table, Table) or rig_table.is_super_table():
            arr = tomlkit.array()
            for item in items:
                fresh = tomlkit.inline_table()
                fresh.update({key: _tidy(getattr(item, key)) for key in BALLAST_KEYS})
                arr.append(fresh)
            rig_table["ballast"] = arr
            return
        existing = tomlkit.aot()
        rig_table.append("ballast", existing)
    while len(existing) > len(items):
        existing.body.pop()  # AoT has no public pop that keeps rendering consistent
    for i, item in enumerate(items):
        fresh = i >= len(existing)
        if fresh:
            existing.append(tomlkit.table())
        t = existing[i]
        for key in BALLAST_KEYS:
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
    _put(rig, "roll_stiffness_front_pct", setup.rig.roll_stiffness_front_pct)  # None: by axle load
    for key in ("rolling_dia_front_mm", "rolling_dia_rear_mm"):
        _put(rig, key, getattr(setup.rig, key))
    for key in ("rolling_dia_loss_front_mm_per_100g", "rolling_dia_loss_rear_mm_per_100g"):
        _optional(rig, key, getattr(setup.rig, key), 0.0)
    _merge_ballast(rig, setup.rig.ballast)

    dl = _section(doc, "driveline")
    d = setup.driveline
    # new keys first, old ones removed after: tomlkit loses track of a dotted-key table whose
    # every key is deleted before one is added
    if d.uses_stages:
        for key in ("front_stages", "rear_stages"):
            new = [list(s) for s in getattr(d, key)]
            old = dl.get(key)
            if old is None or old.unwrap() != new:
                dl[key] = _stages(getattr(d, key))
        _put(dl, "overdrive_pct", None)
    else:
        _put(dl, "overdrive_pct", d.overdrive_pct or 0)
        _put(dl, "front_stages", None)
        _put(dl, "rear_stages", None)

    grip = _section(doc, "grip")
    g = setup.grip
    _put(grip, "mu_static", g.mu_static)
    _put(grip, "mu_kinetic", g.mu_kinetic)
    _optional(grip, "rolling_resistance", g.rolling_resistance, FIELDS["grip.rolling_resistance"].default)
    for key in ("front_mu_static", "front_mu_kinetic", "rear_mu_static", "rear_mu_kinetic"):
        _put(grip, key, getattr(g, key))
    _optional(grip, "slip_stiffness", _stiffness(g.slip_stiffness), FIELDS["grip.slip_stiffness"].default)
    for key in ("front_slip_stiffness", "rear_slip_stiffness"):
        _put(grip, key, _stiffness(getattr(g, key)))

    terrain = _section(doc, "terrain")
    t = setup.terrain
    _put(terrain, "slope_deg", t.slope_deg)
    _optional(terrain, "accel_g", t.accel_g, 0.0)
    _optional(terrain, "heading_deg", t.heading_deg, 0.0)

    if setup.course is not None and "course" not in doc:
        c = tomlkit.table()
        c["name"] = setup.course.name
        c["points_mm"] = [[_tidy(x), _tidy(z)] for x, z in setup.course.points_mm]
        c["belly_clearance_mm"] = _tidy(setup.course.belly_clearance_mm)
        doc["course"] = c
    return (BOM if loaded is not None and loaded.bom else "") + tomlkit.dumps(doc)


def setup_difference(a, b, where: str = "") -> Optional[str]:
    """The first dotted key where two setups differ (numbers to 1e-9 relative), or None.

    The writer spells numbers with 10 significant digits, so a read-back equal to that is equal.
    """
    if dataclasses.is_dataclass(a) and type(a) is type(b):
        for f in dataclasses.fields(a):
            found = setup_difference(getattr(a, f.name), getattr(b, f.name), f"{where}.{f.name}".lstrip("."))
            if found:
                return found
        return None
    if isinstance(a, (tuple, list)) and isinstance(b, (tuple, list)):
        if len(a) != len(b):
            return where
        for i, (x, y) in enumerate(zip(a, b)):
            found = setup_difference(x, y, f"{where}.{i}")
            if found:
                return found
        return None
    if (isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool)
            and not isinstance(b, bool)):
        return None if math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-300) else where
    return None if a == b else where


def _stiffness(value):
    """A slip stiffness as the file spells it: the word "rigid" for an infinitely stiff tyre."""
    return RIGID if value is not None and math.isinf(value) else value


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


def _refuse_replacing(path: Path, st: os.stat_result) -> None:
    """Refuse to replace an existing file whose replacement would quietly change what the user set
    up: its write protection, its owner, or its other names (hard links)."""
    try:
        read_only_mount = bool(os.statvfs(path).f_flag & os.ST_RDONLY)
    except (OSError, AttributeError):
        read_only_mount = False
    # on a read-only mount the write itself fails and says so (EROFS); here: the file's own protection
    if not read_only_mount and not st.st_mode & 0o222:
        raise SaveError(f"{path}: read-only file, not saved (nothing lost); {ELSEWHERE}, or make it "
                        "writable (chmod u+w)")
    if not read_only_mount and not os.access(path, os.W_OK):
        raise SaveError(f"{path}: you may not write this file (owner uid {st.st_uid}), not saved (nothing lost); "
                        f"{ELSEWHERE}")
    euid = os.geteuid() if hasattr(os, "geteuid") else st.st_uid
    if euid not in (0, st.st_uid):
        raise SaveError(f"{path}: belongs to another user (uid {st.st_uid}); saving would make it yours, so "
                        f"not saved (nothing lost): {ELSEWHERE}")
    if st.st_nlink > 1:
        raise SaveError(f"{path}: has {st.st_nlink} hard links (other names for the same file); replacing it "
                        f"would leave them with the old setup, so not saved (nothing lost): {ELSEWHERE}")


def _keep_owner_and_mode(fd: int, st: Optional[os.stat_result]) -> None:
    """Give the new file the old one's owner, group and mode (the umask would narrow the mode)."""
    if st is None:
        return
    own = os.fstat(fd)
    if (own.st_uid, own.st_gid) != (st.st_uid, st.st_gid) and hasattr(os, "fchown"):
        try:
            os.fchown(fd, st.st_uid, st.st_gid)
        except PermissionError:
            try:  # not a member of the old group: keep the owner at least (checked before writing)
                os.fchown(fd, st.st_uid, -1)
            except PermissionError:
                pass
    os.fchmod(fd, stat_mod.S_IMODE(st.st_mode))  # after chown, which clears set-id bits


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
    try:
        old = os.stat(path)
    except FileNotFoundError:
        old = None
    except OSError as exc:
        raise SaveError(f"{path}: not saved: {exc.strerror or exc} (the setup is still open, nothing lost)") from None
    if old is not None:
        if not stat_mod.S_ISREG(old.st_mode):
            raise SaveError(f"{path}: not a regular file; not saved (nothing lost): {ELSEWHERE}")
        _refuse_replacing(path, old)
    _remove_stale_temps(folder, path.name)
    tmp = folder / f".{path.name}.{secrets.token_hex(4)}{TMP_SUFFIX}"
    data = text.encode("utf-8")
    try:
        fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o644 if old is None else 0o600)
        try:
            _keep_owner_and_mode(fd, old)
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


def _changed_on_disk(loaded: LoadedSetup, target: Path) -> bool:
    """True when the loaded file's bytes on disk are no longer the ones read (a deleted file is
    not a change: saving recreates it)."""
    if loaded.raw is not None:
        now = file_bytes(target)
        return now is not None and now != loaded.raw
    try:
        return os.stat(target).st_mtime_ns != loaded.mtime_ns
    except OSError:
        return False


def save_setup(loaded: Optional[LoadedSetup], setup: Setup, path=None, *, force: bool = False) -> LoadedSetup:
    """Save `setup` to `path` (default: where it was loaded from), merging into the loaded text.

    Raises
    ------
    FileChangedOnDisk
        The target is the loaded file and its bytes changed on disk since it was read (unless `force`).
    LinkToNowhere
        The target is a symbolic link to a file that does not exist (unless `force`).
    SaveError
        Anything else that stops the save; the file on disk is left as it was.
    """
    target = Path(path) if path is not None else (loaded.path if loaded is not None else None)
    if target is None:
        raise SaveError("no file name yet: use save-as")
    if not force and target.is_symlink() and not target.exists():
        real = os.path.realpath(target)
        raise LinkToNowhere(f"{target}: a link to {real}, which does not exist",
                            f"{target.name} is a link to {real}, which does not exist. Create that file?")
    if (not force and loaded is not None and loaded.path is not None
            and (loaded.raw is not None or loaded.mtime_ns is not None)
            and Path(loaded.path).resolve() == target.resolve() and _changed_on_disk(loaded, target)):
        raise FileChangedOnDisk(f"{target}: changed on disk since it was loaded",
                                f"{target.name} changed on disk since it was opened. Overwrite it?")
    try:
        text = render_setup(loaded, setup)
    except Exception as exc:  # noqa: BLE001 - a layout tomlkit cannot merge into: refuse, lose nothing
        raise SaveError(f"{target}: not saved: this file's layout cannot take the change "
                        f"({type(exc).__name__}); nothing lost: {ELSEWHERE}") from None
    try:
        check, data, _ = parse_setup(text, str(target))
    except SetupError as exc:  # never write a file slopetune itself could not read back
        raise SaveError(f"{target}: not saved: {exc.reason}") from None
    differs = setup_difference(setup, check)
    if differs:
        raise SaveError(f"{target}: not saved: in this file's layout {differs} would read back different; "
                        f"nothing lost: {ELSEWHERE}")
    mtime = write_atomic(target, text)
    return LoadedSetup(target, check, text[1:] if text.startswith(BOM) else text, data, mtime, [],
                       text.encode("utf-8"), text.startswith(BOM))


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



__all__ = ["SaveError", "SaveNeedsConfirmation", "FileChangedOnDisk", "LinkToNowhere", "setup_difference", "render_setup", "save_setup", "set_keys", "write_atomic"]
