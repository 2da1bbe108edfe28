"""Start the tuner on awkward terminals under a real pty: it paints, stays usable, exits cleanly.

Run: python bench/hostile_terminals.py
Goal: every row OK. For each terminal the tuner is started with `python -m slopetune.tui.cli FILE` on a
pseudo-terminal of the given size; the check waits for the setup's name (or, in a window below
the tuner's minimum, the plain "too small" notice), steps the slope with the Right arrow and waits
for 31.0 to appear, presses q and answers y to "quit without saving?", and then wants exit code 0,
no traceback, and the terminal handed back (alternate screen left). Bytes are checked for what the
terminal can show: no braille or eighth blocks on a Linux console font, plain ASCII under
`LC_ALL=C PYTHONUTF8=0`, and under NO_COLOR no colour with a hue (Textual then draws in greys;
no-color.org: "prevents the addition of ANSI color"). The flag says OK / SLIP FLAG / STOP in words,
so nothing depends on colour.
"""

from __future__ import annotations

import fcntl
import os
import pty
import re
import select
import shutil
import signal
import struct
import sys
import tempfile
import termios
import time
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "setups" / "marmot-overdrive.toml"
NAME = "Marmot 313"
BASE_ENV = {"PATH": os.environ.get("PATH", "/usr/bin:/bin"), "HOME": os.environ.get("HOME", "/root"),
            "LANG": "C.UTF-8", "TERM": "xterm-256color", "PYTHONPATH": str(ROOT)}

# name -> (environment on top of BASE_ENV, (columns, rows))
TERMINALS = {
    "xterm-256color 100x30 (reference)": ({}, (100, 30)),
    "TERM=linux": ({"TERM": "linux"}, (80, 25)),
    "TERM=dumb": ({"TERM": "dumb"}, (80, 24)),
    "NO_COLOR=1": ({"NO_COLOR": "1"}, (80, 24)),
    "LC_ALL=C PYTHONUTF8=0": ({"LC_ALL": "C", "LANG": "C", "PYTHONUTF8": "0"}, (80, 24)),
    "40x12 window": ({}, (40, 12)),
}

ANSI = re.compile(r"\x1b\[[0-9;?<>=]*[ -/]*[@-~]|\x1b[()][0-9A-Za-z]|\x1b[=>78cDEHM]|\x1b\][^\x07\x1b]*(\x07|\x1b\\)")
SGR = re.compile(r"\x1b\[([0-9;]*)m")


def _grey_256(n: int) -> bool:
    """Whether xterm 256-colour palette entry `n` is a grey (no hue)."""
    if n < 16:
        return n in (0, 7, 8, 15)
    if n >= 232:
        return True
    n -= 16
    return n // 36 == (n // 6) % 6 == n % 6


def hued_colours(text: str) -> int:
    """How many SGR sequences set a colour with a hue (greys, black and white do not count)."""
    count = 0
    for params in SGR.findall(text):
        p = [int(x) if x else 0 for x in params.split(";")]
        i = 0
        while i < len(p):
            if p[i] in (38, 48) and i + 2 < len(p) and p[i + 1] == 5:
                count += not _grey_256(p[i + 2])
                i += 3
            elif p[i] in (38, 48) and i + 4 < len(p) and p[i + 1] == 2:
                count += not (p[i + 2] == p[i + 3] == p[i + 4])
                i += 5
            else:
                count += p[i] in (31, 32, 33, 34, 35, 36, 41, 42, 43, 44, 45, 46) or 91 <= p[i] <= 96 \
                    or 101 <= p[i] <= 106
                i += 1
    return count


@dataclass
class Run:
    name: str
    size: tuple
    painted: str = ""  # what was seen: the name, the notice, or nothing
    usable: str = ""
    exit_code: int | None = None
    seconds_to_paint: float | None = None
    problems: list = field(default_factory=list)
    out: bytes = b""

    @property
    def ok(self) -> bool:
        return not self.problems


class Pty:
    def __init__(self, env: dict, size: tuple, argv: list[str]):
        cols, rows = size
        pid, fd = pty.fork()
        if pid == 0:  # child: the pty is our terminal; size it before the program looks
            fcntl.ioctl(0, termios.TIOCSWINSZ, struct.pack("HHHH", rows, cols, 0, 0))
            os.chdir(ROOT)
            try:
                os.execve(sys.executable, [sys.executable, "-m", "slopetune.tui.cli", *argv], env)
            finally:
                os._exit(127)
        self.pid, self.fd, self.out = pid, fd, b""
        self.status = None

    def read(self, seconds: float) -> bytes:
        """Read for up to `seconds`; returns the new bytes."""
        new = b""
        end = time.monotonic() + seconds
        while time.monotonic() < end:
            r, _, _ = select.select([self.fd], [], [], max(0.0, min(0.05, end - time.monotonic())))
            if not r:
                if self.exited():
                    break
                continue
            try:
                chunk = os.read(self.fd, 65536)
            except OSError:  # EIO: the child closed the terminal
                break
            if not chunk:
                break
            new += chunk
        self.out += new
        return new

    def wait_for(self, pattern: str, seconds: float, start: int = 0) -> bool:
        """Read until `pattern` shows in the text (escape codes removed) after byte `start`."""
        end = time.monotonic() + seconds
        while time.monotonic() < end:
            if pattern in plain(self.out[start:]):
                return True
            if not self.read(0.1) and self.exited():
                return pattern in plain(self.out[start:])
        return pattern in plain(self.out[start:])

    def send(self, data: bytes) -> None:
        os.write(self.fd, data)

    def exited(self) -> bool:
        if self.status is None:
            pid, status = os.waitpid(self.pid, os.WNOHANG)
            if pid:
                self.status = status
        return self.status is not None

    def wait_exit(self, seconds: float) -> int | None:
        end = time.monotonic() + seconds
        while time.monotonic() < end:
            self.read(0.1)
            if self.exited():
                self.read(0.2)
                return os.waitstatus_to_exitcode(self.status)
        return None

    def kill(self) -> None:
        if not self.exited():
            os.kill(self.pid, signal.SIGKILL)
            os.waitpid(self.pid, 0)
        os.close(self.fd)


def plain(data: bytes) -> str:
    return ANSI.sub("", data.decode("utf-8", "replace"))


def run_terminal(name: str, env_extra: dict, size: tuple, folder: Path, timeout: float = 30.0) -> Run:
    run = Run(name, size)
    path = folder / "rig.toml"
    shutil.copyfile(SOURCE, path)
    env = {**BASE_ENV, **env_extra}
    small = size[0] < 60 or size[1] < 20
    t0 = time.monotonic()
    p = Pty(env, size, [str(path)])
    try:
        want = "too small" if small else NAME
        if p.wait_for(want, timeout):
            run.seconds_to_paint = time.monotonic() - t0
            run.painted = "notice: " + next(l.strip() for l in plain(p.out).splitlines() if "too small" in l) \
                if small else f"tuner ({NAME} shown)"
        else:
            run.problems.append(f"nothing painted in {timeout:.0f} s")
        if run.painted and not small:
            mark = len(p.out)
            p.read(0.3)  # let the first frames settle (the chart comes a frame after the words)
            p.send(b"\x1b[C")  # Right: slope 30 -> 31
            if p.wait_for("31.0", 10, start=mark):
                run.usable = "Right arrow stepped the slope 30 -> 31"
                mark = len(p.out)
                p.send(b"q")
                if p.wait_for("without saving", 10, start=mark):
                    p.send(b"y")
                else:
                    run.problems.append("q did not ask before dropping the change")
            else:
                run.problems.append("the Right arrow changed nothing on screen")
        elif run.painted:
            run.usable = "says why not (window too small); q still quits"
            p.send(b"q")
        else:
            p.send(b"q")
        run.exit_code = p.wait_exit(15)
        if run.exit_code is None:
            run.problems.append("did not exit within 15 s of q")
        elif run.exit_code != 0:
            run.problems.append(f"exit code {run.exit_code}")
    finally:
        p.kill()
    run.out = p.out
    text = p.out.decode("utf-8", "replace")
    if "Traceback" in text:
        run.problems.append("a traceback")
    if b"\x1b[?1049h" in p.out and b"\x1b[?1049l" not in p.out:
        run.problems.append("left the alternate screen on")
    chars = set(text)
    if env.get("TERM") == "linux":
        odd = sorted(c for c in chars if 0x2580 <= ord(c) <= 0x259F or 0x2800 <= ord(c) <= 0x28FF)
        if odd:
            run.problems.append(f"characters a Linux console font lacks: {''.join(odd[:10])!r}")
    if env.get("LC_ALL") == "C":
        if not p.out.isascii():
            run.problems.append("non-ASCII bytes on an ASCII terminal")
    if env.get("NO_COLOR"):
        n = hued_colours(text)  # Textual's NO_COLOR is monochrome: shades of grey, no hue
        if n:
            run.problems.append(f"{n} colour codes with a hue despite NO_COLOR")
    return run


def main() -> int:
    t0 = time.perf_counter()
    runs = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, (env, size) in TERMINALS.items():
            runs.append(run_terminal(name, env, size, Path(tmp)))
    print(f"{'terminal':<34} {'size':>6}  {'paints':<44} {'usable':<40} exit  ok")
    for r in runs:
        size = f"{r.size[0]}x{r.size[1]}"
        paint = (r.painted or "no") + (f" in {r.seconds_to_paint:.1f} s" if r.seconds_to_paint else "")
        print(f"{r.name:<34} {size:>6}  {paint[:44]:<44} {r.usable[:40]:<40} {r.exit_code!s:>4}  "
              f"{'OK' if r.ok else 'NO'}")
        for p in r.problems:
            print(f"{'':<34} problem: {p}")
    bad = sum(not r.ok for r in runs)
    print(f"{len(runs)} terminals, {len(runs) - bad} OK, {bad} not OK ({time.perf_counter() - t0:.0f} s)")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
