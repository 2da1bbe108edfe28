"""Open and save hostile files: special files, read-only files, other owners, hard links, outside
edits that keep the modification time, and save-as through a link to nowhere.

Run: python bench/hostile_files.py        (as root for the other-owner rows)
Goal: every row OK. A special file (FIFO, /dev/zero, /dev/urandom, a terminal) is refused in one
line within 2 s; a read-only, hard-linked or other user's file is refused with how to save
elsewhere and left byte for byte (and link for link) as it was; a save keeps the file's mode and
owner; an outside edit that keeps the mtime is noticed (the tuner asks); save-as through a link
to nowhere asks before creating a file in another folder. The places of bench/hostile_places.py
(read-only folder, full disk, ...) are run there.
"""

from __future__ import annotations

import asyncio
import os
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench.hostile_places import (  # noqa: E402
    Result, _edited, cli, demo_copy, library_load, library_save, rows_edited_elsewhere, tuner_save,
)
from slopetune.engine import load_setup  # noqa: E402
from slopetune.tui.setup_writer import LinkToNowhere, save_setup  # noqa: E402

LOAD_BUDGET_S = 2.0


def _timed_load(place: str, path: Path) -> Result:
    """library_load in a thread: a hang is a failure, not a stuck bench."""
    box: dict = {}
    t0 = time.perf_counter()
    th = threading.Thread(target=lambda: box.setdefault("r", library_load(place, path)), daemon=True)
    th.start()
    th.join(LOAD_BUDGET_S)
    if th.is_alive():
        return Result(place, "load_setup", "hung", "", False, f"still reading after {LOAD_BUDGET_S} s")
    r = box["r"]
    if r.outcome != "refused":
        return Result(place, "load_setup", r.outcome, r.message, False, "a special file was not refused")
    r.action = f"load_setup ({time.perf_counter() - t0:.2f} s)"
    return r


def rows_special_files() -> list[Result]:
    place = "special file"
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        fifo = Path(tmp) / "pipe.toml"
        os.mkfifo(fifo)
        rows += [_timed_load(place, fifo), cli(place, ["report", str(fifo)], fifo)]
        for dev in ("/dev/zero", "/dev/urandom", "/dev/tty"):
            if os.path.exists(dev):
                rows += [_timed_load(place, Path(dev)), cli(place, ["report", dev], Path(dev))]
    return rows


def rows_read_only_file() -> list[Result]:
    place = "read-only file"
    with demo_copy() as path:
        path.chmod(0o444)
        rows = [library_save(place, path), cli(place, ["measure", "bias", "--front", "1300", "--write", str(path)], path),
                tuner_save(place, path)]
        for r in rows:
            if r.ok and "another name" not in r.message and r.outcome != "asked":
                r.ok, r.why = False, "does not say how to save elsewhere"
        return rows


def rows_hard_link() -> list[Result]:
    place = "hard-linked file"
    with demo_copy() as path:
        os.link(path, path.parent / "same-file.toml")
        rows = [library_save(place, path), tuner_save(place, path)]
        if path.stat().st_nlink != 2:
            rows.append(Result(place, "links", "split", "", False, "the hard link was split"))
        return rows


def rows_mode_and_owner() -> list[Result]:
    place = "mode and owner kept"
    rows = []
    with demo_copy() as path:
        path.parent.chmod(0o755)
        path.chmod(0o664)
        old = os.umask(0o022)
        try:
            loaded = load_setup(path)
            save_setup(loaded, _edited(loaded.setup))
        finally:
            os.umask(old)
        mode = path.stat().st_mode & 0o7777
        rows.append(Result(place, "save_setup 0664 under umask 022", oct(mode), "", mode == 0o664,
                           "" if mode == 0o664 else f"mode became {oct(mode)}"))
        if os.geteuid() == 0:
            os.chown(path, 65534, 65534)
            loaded = load_setup(path)
            save_setup(loaded, _edited(loaded.setup))
            st = path.stat()
            ok = (st.st_uid, st.st_gid) == (65534, 65534)
            rows.append(Result(place, "root saves nobody's file", f"{st.st_uid}:{st.st_gid}", "", ok,
                               "" if ok else "the owner changed"))
            rows.append(cli(place, ["measure", "bias", "--front", "1300", "--write", str(path)], path,
                            expect_code=2, user="1"))  # another plain user: refused, not taken over
        return rows


def _edit_keeping_mtime(path: Path) -> bytes:
    """An outside edit that leaves the modification time as it was (what cp -p and rsync -t leave)."""
    st = path.stat()
    path.write_text(path.read_text(encoding="utf-8").replace("mass_g = 2380", "mass_g = 2390"), encoding="utf-8")
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns))
    return path.read_bytes()


def rows_same_mtime_edit() -> list[Result]:
    return rows_edited_elsewhere("outside edit, mtime kept", _edit_keeping_mtime, "overwrote the outside edit")


def rows_save_as_dangling() -> list[Result]:
    place = "save-as via link to nowhere"
    with demo_copy() as good:
        elsewhere = good.parent / "elsewhere"
        elsewhere.mkdir()
        link = good.parent / "new.toml"
        link.symlink_to(elsewhere / "made.toml")
        loaded = load_setup(good)
        try:
            save_setup(loaded, loaded.setup, link)
            lib = Result(place, "save_setup", "saved", "", False, "created a file elsewhere without asking")
        except LinkToNowhere as exc:
            made = (elsewhere / "made.toml").exists()
            lib = Result(place, "save_setup", "asked", exc.question, not made, "created the file" if made else "")
        outcome, message = asyncio.run(_tuner_save_as(good, link))
        made = (elsewhere / "made.toml").exists()
        why = "" if outcome == "asked" else "did not ask"
        why = why or ("created the file before the answer" if made else "")
        return [lib, Result(place, "tuner save-as", outcome, message, not why, why)]


async def _tuner_save_as(path: Path, target: Path) -> tuple[str, str]:
    from textual.widgets import Input

    from slopetune.tui.app import SlopeTuneApp

    app = SlopeTuneApp(load_setup(path))
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        await pilot.press("right", "a")
        await pilot.pause()
        app.screen.query_one(Input).value = str(target)
        await pilot.press("enter")
        await pilot.pause()
        if type(app.screen).__name__ == "ConfirmScreen":
            question = str(app.screen.question)
            await pilot.press("escape")
            await pilot.pause()
            return "asked", question
        return "saved", app.status.note[0]


PLACES = {
    "special file": rows_special_files,
    "read-only file": rows_read_only_file,
    "hard-linked file": rows_hard_link,
    "mode and owner kept": rows_mode_and_owner,
    "outside edit, mtime kept": rows_same_mtime_edit,
    "save-as via link to nowhere": rows_save_as_dangling,
}


def main() -> int:
    from bench.hostile_places import main as run_places

    return run_places(PLACES)


if __name__ == "__main__":
    sys.exit(main())
