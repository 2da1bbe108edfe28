"""Kill a saving process at random moments; the setup file is never half-written.

Run: python bench/kill_during_save.py [--kills 150] [--seed 313]
Goal: after every SIGKILL the file loads, equals either the last saved or the next complete document
(byte for byte), keeps every comment of the original, and the next save leaves no temporary file.

A child process (forked, so it starts at once) saves two different setups in turn through
`tui.setup_writer.save_setup` on a copy of setups/marmot-overdrive.toml, and tells the parent after
each completed save. The parent kills it with SIGKILL after a random delay, checks the file, saves
once itself (the "next save"), checks no `*.slopetune-tmp` file is left, and starts a new child.
A SIGKILL stops the process, not the machine: the page cache survives it, so this proves the
write order (temporary file, fsync, rename), not the disk's own behaviour on a power cut.
"""

from __future__ import annotations

import argparse
import os
import random
import re
import shutil
import signal
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import LoadedSetup, SetupError, load_setup  # noqa: E402
from slopetune.tui.setup_writer import TMP_SUFFIX, render_setup, save_setup  # noqa: E402

SOURCE = ROOT / "setups" / "marmot-overdrive.toml"


def two_setups(setup):
    """The original setup and one that differs in values everywhere in the file (inline comments too)."""
    other = setup
    for key, value in (("rig.mass_g", 2455.5), ("rig.tire_dia_front_mm", 116), ("rig.ballast.0.x_mm", 300),
                       ("grip.mu_kinetic", 0.75), ("terrain.slope_deg", 34.5), ("notes", setup.notes + " Edited.")):
        other = other.with_value(key, value)
    return setup, other


def comments(text: str) -> list[str]:
    """Every comment of a TOML text (whole-line and trailing), as written."""
    return [m.group(0).rstrip() for m in re.finditer(r"#[^\n]*", text)]


def temp_files(folder: Path) -> list[Path]:
    return sorted(folder.glob(f"*{TMP_SUFFIX}"))


def _child(path: Path, setups, start: int, notify: int) -> None:
    """Save forever, alternating setups; one byte to the parent after each completed save."""
    loaded = load_setup(path)
    i = start
    while True:
        loaded = save_setup(loaded, setups[i % 2], force=True)
        os.write(notify, b".")
        i += 1


@dataclass
class Tally:
    kills: int = 0
    saves_completed: int = 0
    intact: int = 0
    was_old: int = 0
    was_new: int = 0
    temp_left_by_kill: int = 0
    temp_left_after_next_save: int = 0
    problems: list = field(default_factory=list)


def run(kills: int, seed: int, folder: Path, max_delay_s: float | None = None, log=print) -> Tally:
    rng = random.Random(seed)
    path = folder / SOURCE.name
    shutil.copyfile(SOURCE, path)
    original = path.read_text(encoding="utf-8")
    wanted_comments = comments(original)
    setups = two_setups(load_setup(path).setup)

    # how long one save takes, so the kill delays cover several saves and every phase of one
    loaded = load_setup(path)
    t0 = time.perf_counter()
    for i in range(10):
        loaded = save_setup(loaded, setups[i % 2], force=True)
    one_save = (time.perf_counter() - t0) / 10
    shutil.copyfile(SOURCE, path)
    max_delay = max_delay_s if max_delay_s is not None else 4 * one_save
    log(f"one save takes {one_save * 1e3:.1f} ms; kill after a random 0 to {max_delay * 1e3:.1f} ms")

    tally = Tally()
    for k in range(kills):
        start_text = path.read_text(encoding="utf-8")
        start = rng.randrange(2)
        # the documents the child will write, in order: chain[n] is on disk after n saves
        chain = [start_text]

        def nth(n):
            while len(chain) <= n:
                prev = LoadedSetup(path, setups[0], chain[-1])
                chain.append(render_setup(prev, setups[(start + len(chain) - 1) % 2]))
            return chain[n]

        nth(3)
        read_end, write_end = os.pipe()
        pid = os.fork()
        if pid == 0:  # child
            os.close(read_end)
            try:
                _child(path, setups, start, write_end)
            finally:
                os._exit(0)
        os.close(write_end)
        time.sleep(rng.uniform(0.0, max_delay))
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        done = 0
        while chunk := os.read(read_end, 4096):
            done += len(chunk)
        os.close(read_end)
        tally.kills += 1
        tally.saves_completed += done

        on_disk = path.read_text(encoding="utf-8")
        problem = None
        try:
            load_setup(path)
        except SetupError as exc:
            problem = f"does not load: {exc}"
        if problem is None:
            # the notice of a finished save can be lost with the kill: the next one may be on disk too
            if on_disk == nth(done):
                tally.was_old += 1
            elif on_disk == nth(done + 1):
                tally.was_new += 1
            else:
                problem = f"neither save {done} nor {done + 1} ({len(on_disk)} bytes)"
        if problem is None:
            lost = [c for c in wanted_comments if c not in on_disk]
            if lost:
                problem = f"lost comments: {lost[:2]}"
        if problem is None:
            tally.intact += 1
        else:
            tally.problems.append(f"kill {k + 1} (seed {seed}): {problem}")
        if temp_files(folder):
            tally.temp_left_by_kill += 1

        # the next save, as the user would make it after restarting
        try:
            reloaded = load_setup(path)
        except SetupError:  # already counted; start the next round from a good copy
            shutil.copyfile(SOURCE, path)
            reloaded = load_setup(path)
        save_setup(reloaded, reloaded.setup)
        if temp_files(folder):
            tally.temp_left_after_next_save += 1
            tally.problems.append(f"kill {k + 1}: temporary files after the next save: {temp_files(folder)}")
            for p in temp_files(folder):
                p.unlink()
    return tally


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--kills", type=int, default=150)
    ap.add_argument("--seed", type=int, default=313)
    ap.add_argument("--dir", help="folder to work in (default: the system's temporary folder); "
                                  "pick one on the disk you care about, a tmpfs makes fsync free")
    args = ap.parse_args(argv)
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(dir=args.dir) as tmp:
        t = run(args.kills, args.seed, Path(tmp))
    print(f"kills: {t.kills} (seed {args.seed}), saves completed between them: {t.saves_completed}")
    print(f"file after the kill: loads, complete and with every comment: {t.intact}/{t.kills} "
          f"(the last save: {t.was_old}, the one in progress: {t.was_new})")
    print(f"kills that left a temporary file: {t.temp_left_by_kill}; "
          f"temporary files left after the next save: {t.temp_left_after_next_save}")
    for p in t.problems[:10]:
        print("  PROBLEM", p)
    print(f"corrupted or lost files: {t.kills - t.intact}  ({time.perf_counter() - t0:.1f} s)")
    return 0 if not t.problems else 1


if __name__ == "__main__":
    sys.exit(main())
