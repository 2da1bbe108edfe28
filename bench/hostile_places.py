"""Save and open setups in hostile places: each a clear one-line message, nothing lost.

Run: python bench/hostile_places.py        (as root for the read-only and full-disk mounts)
Goal: every row OK: the message is one line naming the file, the original file is byte for byte
the same, no temporary file is left, and in the tuner the edited setup is still there, unsaved.

Places: a read-only folder (a tmpfs remounted read-only; as a plain user, a folder without write
permission), a full disk (a 32 KiB tmpfs filled up), a file replaced on disk while it is open, a
setup path that is a folder, a symlink to nowhere, a file deleted while open and a file the user
may not read (run as `nobody` through setpriv). Each is tried through the library
(`load_setup`, `save_setup`, `write_atomic`), the command line and, for saving, the tuner (Pilot).
A place this machine cannot make (no mount, no setpriv) is listed as skipped with the reason.
"""

from __future__ import annotations

import asyncio
import contextlib
import os
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import SetupError, load_setup  # noqa: E402
from slopetune.tui.setup_writer import TMP_SUFFIX, FileChangedOnDisk, SaveError, save_setup, write_atomic  # noqa: E402

SOURCE = ROOT / "setups" / "marmot-overdrive.toml"
PYTHON = sys.executable


class Unavailable(Exception):
    """This machine cannot make the place (reason in the message)."""


@dataclass
class Result:
    place: str
    action: str
    outcome: str  # "refused", "saved", "asked", ...
    message: str
    ok: bool
    why: str = ""  # what failed, when not ok


# ------------------------------------------------------------------------- making the places

def _run(*cmd) -> subprocess.CompletedProcess:
    return subprocess.run(list(cmd), capture_output=True, text=True)


@contextlib.contextmanager
def _tmpfs(size: str):
    if os.geteuid() != 0:
        raise Unavailable("needs root to mount a tmpfs")
    folder = Path(tempfile.mkdtemp(prefix="slopetune-place-"))
    r = _run("mount", "-t", "tmpfs", "-o", f"size={size},mode=0755", "tmpfs", str(folder))
    if r.returncode != 0:
        folder.rmdir()
        raise Unavailable(f"mount -t tmpfs failed: {r.stderr.strip() or r.returncode}")
    try:
        yield folder
    finally:
        if _run("umount", str(folder)).returncode != 0:
            _run("umount", "-l", str(folder))
        with contextlib.suppress(OSError):
            folder.rmdir()


@contextlib.contextmanager
def read_only_folder():
    """A folder holding a copy of the demo setup that this process cannot write into."""
    if os.geteuid() != 0:
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp) / "ro"
            folder.mkdir()
            shutil.copyfile(SOURCE, folder / "rig.toml")
            folder.chmod(0o555)
            try:
                yield folder / "rig.toml"
            finally:
                folder.chmod(0o755)
        return
    # root ignores permission bits: a read-only mount is the one thing that stops it
    with _tmpfs("64k") as folder:
        shutil.copyfile(SOURCE, folder / "rig.toml")
        r = _run("mount", "-o", "remount,ro", str(folder))
        if r.returncode != 0:
            raise Unavailable(f"remount read-only failed: {r.stderr.strip()}")
        yield folder / "rig.toml"


@contextlib.contextmanager
def full_disk():
    """A copy of the demo setup on a tiny tmpfs with no byte left."""
    with _tmpfs("32k") as folder:
        shutil.copyfile(SOURCE, folder / "rig.toml")
        fd = os.open(folder / "filler", os.O_WRONLY | os.O_CREAT)
        try:
            while os.write(fd, b"\0" * 1024):
                pass
        except OSError:  # ENOSPC: full
            pass
        finally:
            os.close(fd)
        st = os.statvfs(folder)
        if st.f_bavail != 0:
            raise Unavailable(f"could not fill the tmpfs ({st.f_bavail} blocks left)")
        yield folder / "rig.toml"


@contextlib.contextmanager
def demo_copy():
    """A copy of the demo setup, rig.toml, alone in a fresh temporary folder; yields its path."""
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "rig.toml"
        shutil.copyfile(SOURCE, path)
        yield path


# ------------------------------------------------------------------------- checks

def one_line(message: str, path: Path | None = None) -> str:
    """'' when `message` is one non-empty line naming `path` (or its name), else what is wrong."""
    if not message.strip():
        return "no message"
    if "\n" in message.strip() or "\r" in message:
        return f"more than one line: {message!r}"
    if "Traceback" in message:
        return "a traceback"
    if path is not None and path.name not in message:
        return f"does not name {path.name}: {message!r}"
    return ""


def temp_files(folder: Path) -> list[Path]:
    try:
        return sorted(folder.glob(f"*{TMP_SUFFIX}"))
    except OSError:
        return []


def _edited(setup):
    return setup.with_value("rig.mass_g", setup.rig.mass_g + 55).with_value("terrain.slope_deg", 33)


def _same_bytes(path: Path, before: bytes) -> str:
    try:
        now = path.read_bytes()
    except OSError as exc:
        return f"original unreadable afterwards: {exc}"
    return "" if now == before else "the original file changed"


def library_save(place: str, path: Path, expect=SaveError, path_arg: Path | None = None) -> Result:
    """save_setup of an edited setup: refused with one line; file and setup untouched."""
    loaded = load_setup(path) if path.is_file() else None
    setup = _edited(loaded.setup if loaded else load_setup(SOURCE).setup)
    before_setup = setup
    before = path.read_bytes() if path.is_file() else None
    target = path_arg or path
    try:
        save_setup(loaded, setup, target)
    except expect as exc:
        msg = str(exc)
        why = one_line(msg, target) or (_same_bytes(path, before) if before is not None else "")
        why = why or ("temporary file left" if temp_files(target.parent) else "")
        why = why or ("" if setup == before_setup else "the setup in memory changed")
        return Result(place, "save_setup", "refused", msg, not why, why)
    except Exception as exc:  # noqa: BLE001
        return Result(place, "save_setup", "crashed", repr(exc), False, "not the documented error")
    return Result(place, "save_setup", "saved", "", False, "saved where it should have been refused")


def library_write(place: str, path: Path) -> Result:
    before = path.read_bytes()
    try:
        write_atomic(path, "schema = 1\n")
    except SaveError as exc:
        msg = str(exc)
        why = one_line(msg, path) or _same_bytes(path, before) or (
            "temporary file left" if temp_files(path.parent) else "")
        return Result(place, "write_atomic", "refused", msg, not why, why)
    except Exception as exc:  # noqa: BLE001
        return Result(place, "write_atomic", "crashed", repr(exc), False, "not the documented error")
    return Result(place, "write_atomic", "saved", "", False, "wrote where it should have been refused")


def library_load(place: str, path: Path) -> Result:
    try:
        load_setup(path)
    except SetupError as exc:
        msg = str(exc)
        why = one_line(msg, path)
        return Result(place, "load_setup", "refused", msg, not why, why)
    except Exception as exc:  # noqa: BLE001
        return Result(place, "load_setup", "crashed", repr(exc), False, "not SetupError")
    return Result(place, "load_setup", "loaded", "", True)


def cli(place: str, argv: list[str], path: Path, expect_code: int = 2, user: str | None = None) -> Result:
    """One `slopetune` command in a subprocess: exit code and one line on stderr naming the file."""
    before = path.read_bytes() if path.is_file() else None
    cmd = [PYTHON, "-m", "slopetune.tui.cli", *argv]
    if user:
        if shutil.which("setpriv") is None:
            raise Unavailable("no setpriv to run as an unprivileged user")
        cmd = ["setpriv", f"--reuid={user}", f"--regid={user}", "--clear-groups", *cmd]
    r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, timeout=60,
                       env={**os.environ, "PYTHONPATH": str(ROOT), "TERM": "dumb"})
    lines = [l for l in r.stderr.splitlines() if "warning:" not in l]
    action = "slopetune " + " ".join(a if a != str(path) else path.name for a in argv[:3])
    why = "" if r.returncode == expect_code else f"exit {r.returncode}, wanted {expect_code}"
    why = why or ("" if len(lines) == 1 else f"{len(lines)} lines on stderr")
    why = why or one_line(lines[0], path)
    if not why and before is not None:
        why = _same_bytes(path, before)
    if not why and "Traceback" in r.stderr + r.stdout:
        why = "a traceback"
    return Result(place, action, f"exit {r.returncode}", lines[0] if lines else r.stderr.strip(), not why, why)


async def _tuner_save(path: Path, *, change_on_disk=None, save_as: Path | None = None) -> tuple[str, str, str]:
    """Open `path` in the tuner, step the slope up, save (Ctrl+S or save-as to `save_as`).

    Returns (outcome, message, why-not-ok)."""
    from textual.widgets import Input

    from slopetune.tui.app import SlopeTuneApp

    loaded = load_setup(path)
    before = path.read_bytes()
    app = SlopeTuneApp(loaded)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        await pilot.press("right")  # slope is the first row: one step up
        await pilot.pause()
        edited = app.setup
        if edited == loaded.setup:
            return "no edit", "", "the key did not change the setup"
        if change_on_disk:
            before = change_on_disk(path)
        if save_as is not None:
            await pilot.press("a")
            await pilot.pause()
            app.screen.query_one(Input).value = str(save_as)
            await pilot.press("enter")
            await pilot.pause()
            if type(app.screen).__name__ == "ConfirmScreen":
                await pilot.press("y")  # "replace it?" yes: the save itself must refuse
                await pilot.pause()
        else:
            await pilot.press("ctrl+s")
            await pilot.pause()
        outcome, message = "refused", app.status.note[0]
        if type(app.screen).__name__ == "ConfirmScreen":
            outcome = "asked"
            message = str(app.screen.question)
            await pilot.press("escape")  # keep the file as the other program left it
            await pilot.pause()
        why = "" if app.is_running else "the tuner stopped"
        why = why or ("" if app.setup == edited else "the edited setup is gone")
        why = why or ("" if app.unsaved else "marked saved")
        why = why or ("" if outcome == "asked" or app.status.note[1] == "error" else f"no error shown: {message!r}")
        why = why or one_line(message, save_as or path) or _same_bytes(path, before)
        why = why or ("temporary file left" if temp_files(path.parent) else "")
        return outcome, message, why


def tuner_save(place: str, path: Path, **kw) -> Result:
    outcome, message, why = asyncio.run(_tuner_save(path, **kw))
    action = "tuner save-as" if kw.get("save_as") else "tuner Ctrl+S"
    return Result(place, action, outcome, message, not why, why)


# ------------------------------------------------------------------------- the places

def rows_read_only() -> list[Result]:
    place = "read-only folder"
    with read_only_folder() as path:
        return [library_load(place, path), library_save(place, path), library_write(place, path),
                cli(place, ["measure", "mu", "--angle", "40", "--write", str(path)], path),
                tuner_save(place, path)]


def rows_full_disk() -> list[Result]:
    place = "full disk"
    with full_disk() as path:
        return [library_save(place, path), library_write(place, path),
                cli(place, ["measure", "mu", "--angle", "40", "--write", str(path)], path),
                tuner_save(place, path)]


def _replace_on_disk(path: Path) -> bytes:
    """Another program saves the file: new text, new mtime (also on coarse-clock file systems)."""
    text = path.read_text(encoding="utf-8").replace("mass_g = 2380", "mass_g = 2390", 1)
    other = path.with_name(path.name + ".other")
    other.write_text(text, encoding="utf-8")
    os.replace(other, path)
    st = os.stat(path)
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns + 2_000_000_000))
    return path.read_bytes()


def rows_edited_elsewhere(place: str, change, overwrote: str) -> list[Result]:
    """The file changed by `change(path) -> bytes now on disk` after it was loaded: save_setup and
    the tuner's Ctrl+S must both refuse (or ask) rather than overwrite it (`overwrote`: the words
    when they do not)."""
    with demo_copy() as path:
        loaded = load_setup(path)
        after = change(path)
        setup = _edited(loaded.setup)
        try:
            save_setup(loaded, setup)
            lib = Result(place, "save_setup", "saved", "", False, overwrote)
        except FileChangedOnDisk as exc:
            why = one_line(str(exc), path) or _same_bytes(path, after)
            lib = Result(place, "save_setup", "refused", str(exc), not why, why)
        shutil.copyfile(SOURCE, path)
        return [lib, tuner_save(place, path, change_on_disk=change)]


def rows_changed_on_disk() -> list[Result]:
    return rows_edited_elsewhere("file replaced while open", _replace_on_disk, "overwrote the other program's save")


def rows_folder() -> list[Result]:
    place = "setup path is a folder"
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "rig.toml"
        folder.mkdir()
        good = Path(tmp) / "good.toml"
        shutil.copyfile(SOURCE, good)
        return [library_load(place, folder), library_save(place, good, path_arg=folder),
                cli(place, ["report", str(folder)], folder), cli(place, [str(folder)], folder),
                tuner_save(place, good, save_as=folder)]


def rows_dangling_link() -> list[Result]:
    place = "symlink to nowhere"
    with tempfile.TemporaryDirectory() as tmp:
        link = Path(tmp) / "rig.toml"
        link.symlink_to(Path(tmp) / "gone" / "rig.toml")
        rows = [library_load(place, link), cli(place, ["report", str(link)], link), cli(place, [str(link)], link)]
        # saving to it: the save must either write a whole file or refuse in one line
        setup = load_setup(SOURCE).setup
        try:
            save_setup(None, setup, link)
            ok = load_setup(link).setup == setup
            rows.append(Result(place, "save_setup", "saved", "saved to where the link points", ok,
                               "" if ok else "saved file reads back different"))
        except SaveError as exc:
            why = one_line(str(exc), link)
            rows.append(Result(place, "save_setup", "refused", str(exc), not why, why))
        return rows


def rows_link_to_file() -> list[Result]:
    place = "symlink to a setup file"
    with tempfile.TemporaryDirectory() as tmp:
        (Path(tmp) / "kept").mkdir()
        target = Path(tmp) / "kept" / "rig.toml"
        shutil.copyfile(SOURCE, target)
        link = Path(tmp) / "rig.toml"
        link.symlink_to(target)
        loaded = load_setup(link)
        setup = _edited(loaded.setup)
        try:
            save_setup(loaded, setup)
        except SaveError as exc:
            return [Result(place, "save_setup", "refused", str(exc), False, "refused a plain save")]
        why = "" if link.is_symlink() else "the link was replaced by a plain file"
        why = why or ("" if load_setup(target).setup == setup else "the file it points to was not updated")
        why = why or ("" if "# Gear stages" in target.read_text() else "comments lost")
        why = why or ("temporary file left" if temp_files(target.parent) + temp_files(link.parent) else "")
        return [Result(place, "save_setup", "saved", "written through the link, link kept", not why, why)]


def rows_deleted() -> list[Result]:
    place = "file deleted while open"
    with demo_copy() as path:
        loaded = load_setup(path)
        path.unlink()
        setup = _edited(loaded.setup)
        save_setup(loaded, setup)
        ok = load_setup(path).setup == setup and "# Gear stages" in path.read_text()
        return [Result(place, "save_setup", "saved", "file written again, comments kept", ok,
                       "" if ok else "the saved file differs")]


def rows_unreadable() -> list[Result]:
    place = "file the user may not read"
    if os.geteuid() != 0:
        raise Unavailable("needs root to switch to the user nobody")
    with demo_copy() as path:
        path.parent.chmod(0o755)  # nobody may enter the folder, not read the file
        path.chmod(0o600)
        return [cli(place, ["report", str(path)], path, user="65534")]


PLACES = {
    "read-only folder": rows_read_only,
    "full disk": rows_full_disk,
    "file replaced while open": rows_changed_on_disk,
    "setup path is a folder": rows_folder,
    "symlink to nowhere": rows_dangling_link,
    "symlink to a setup file": rows_link_to_file,
    "file deleted while open": rows_deleted,
    "file the user may not read": rows_unreadable,
}


def main(places=None) -> int:
    places_run = PLACES if places is None else places
    t0 = time.perf_counter()
    results, skipped = [], []
    for name, make in places_run.items():
        try:
            results += make()
        except Unavailable as exc:
            skipped.append((name, str(exc)))
    print(f"{'place':<27} {'action':<34} {'outcome':<8} ok  message")
    for r in results:
        msg = r.message if len(r.message) <= 110 else r.message[:107] + "..."
        print(f"{r.place:<27} {r.action:<34} {r.outcome:<8} {'OK' if r.ok else 'NO'}  {msg}")
        if not r.ok:
            print(f"{'':<27} problem: {r.why}")
    for name, why in skipped:
        print(f"{name:<27} skipped: {why}")
    bad = sum(not r.ok for r in results)
    places = len(places_run) - len(skipped)
    print(f"{places} places, {len(results)} checks, {len(results) - bad} OK, {bad} not OK, "
          f"{len(skipped)} places skipped ({time.perf_counter() - t0:.1f} s)")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
