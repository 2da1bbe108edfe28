"""How the tuner feels over a slow link: a real pty at 80x24, beside a bare Textual app in the same run.

Measured for both apps, each in its own pseudo-terminal (`pty.fork`), TERM=xterm-256color:

(a) startup to first paint: spawn until the app's first screen text arrives (median of several starts),
    and to the full screen: until the chart's axis label arrives (the bare app's full screen is its
    first paint), against 1.5 x the bare app's first paint;
(b) key -> frame: send one arrow key, read until the output settles (60 ms of silence); the time of
    the last byte of that frame, median over many keys (each key sent after the last frame settled);
(c) bytes written per keystroke in that window, median;
(d) a burst of 30 arrow keys at 30 Hz while the parent reads the pty through a link throttled to
    11.5 KB/s (a 115200-baud serial line, or a poor SSH hop): time from the last key until the screen
    is settled (everything read, then 60 ms of silence);
(e) peak RSS of each child (`os.wait4` rusage).

The tuner starts as `python -m slopetune.tui.cli setups/marmot-overdrive.toml` in the project folder; its form
focuses the slope on start, Right/Left step it. Its file is checked unchanged at the end (the
benchmark never saves; it quits with Ctrl+Q and, if the tuner asks about unsaved changes, ends it
with SIGTERM rather than answer).

Run: /work/venv/bin/python bench/bench_tuner.py [--keys 30] [--starts 5] [--fps N]
"""

from __future__ import annotations

import argparse
import fcntl
import hashlib
import os
import pty
import select
import signal
import statistics
import struct
import sys
import termios
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional

ROOT = Path(__file__).resolve().parent.parent
COLS, ROWS = 80, 24
QUIET_S = 0.060  # the output has settled after this long without a byte
LINK_BYTES_PER_S = 11_500  # 11.5 KB/s, KB = 1000 B throughout
LINK_BUFFER_B = 1_150  # the throttled link holds at most 0.1 s of data when idle
BURST_KEYS, BURST_HZ = 30, 30.0
RIGHT, LEFT = b"\x1b[C", b"\x1b[D"
CTRL_Q = b"\x11"

# Goals from the tuner's issue.
GOAL_KEY_X_BARE = 4.0
GOAL_BYTES_PER_KEY = 3_000
GOAL_BURST_S = 1.5
GOAL_START_X_BARE = 1.3
GOAL_FULL_X_BARE = 1.5
GOAL_RSS_B = 60e6


@dataclass
class Target:
    """One app to measure and the text that shows it has painted its first screen."""

    label: str
    argv: list[str]
    cwd: Path
    marker: bytes
    full_marker: Optional[bytes] = None  # the text that shows the whole screen is drawn (the chart)


@dataclass
class Figures:
    starts_s: list[float] = field(default_factory=list)
    full_s: list[float] = field(default_factory=list)
    settled_s: list[float] = field(default_factory=list)
    key_s: list[float] = field(default_factory=list)
    key_first_byte_s: list[float] = field(default_factory=list)
    key_bytes: list[int] = field(default_factory=list)
    key_misses: int = 0
    burst_settle_s: Optional[float] = None
    burst_bytes: int = 0
    burst_span_s: float = 0.0
    rss_b: Optional[int] = None
    notes: list[str] = field(default_factory=list)


class PtyChild:
    """A program on the slave side of a new pty; the parent reads and writes the master."""

    def __init__(self, target: Target, env: dict[str, str]):
        self.started = time.perf_counter()
        pid, fd = pty.fork()
        if pid == 0:  # child: size the terminal before the program can ask for it
            try:
                fcntl.ioctl(0, termios.TIOCSWINSZ, struct.pack("HHHH", ROWS, COLS, 0, 0))
                os.chdir(target.cwd)
                os.execve(target.argv[0], target.argv, env)
            finally:
                os._exit(127)
        self.pid, self.fd = pid, fd
        self.eof = False
        self.rusage = None

    def send(self, data: bytes) -> None:
        os.write(self.fd, data)

    def readable(self, timeout: float) -> bool:
        if self.eof:
            return False
        ready, _, _ = select.select([self.fd], [], [], max(timeout, 0.0))
        return bool(ready)

    def read(self, max_bytes: int = 65536) -> bytes:
        try:
            data = os.read(self.fd, max_bytes)
        except OSError:  # EIO once the child has closed the terminal
            data = b""
        if not data:
            self.eof = True
        return data

    def read_until_quiet(self, timeout: float = 10.0, marker: Optional[bytes] = None,
                         also: Optional[bytes] = None):
        """Read until QUIET_S without output (counted after `marker` shows, if given).

        Returns (bytes, time of the first byte, time the marker completed, time of the last byte);
        times are perf_counter values, None when nothing came. The time `also` first completed
        is kept in `self.also_s`.
        """
        buf = bytearray()
        t_first = t_mark = t_last = None
        self.also_s = None
        deadline = time.perf_counter() + timeout
        while not self.eof:
            now = time.perf_counter()
            if now >= deadline:
                break
            settled_phase = (t_last is not None and (marker is None or t_mark is not None)
                             and (also is None or self.also_s is not None))
            wait = min(QUIET_S, deadline - now) if settled_phase else deadline - now
            if not self.readable(wait):
                if settled_phase:
                    break
                continue
            data = self.read()
            t = time.perf_counter()
            if not data:
                break
            t_first = t if t_first is None else t_first
            t_last = t
            before = len(buf)
            buf += data
            if marker is not None and t_mark is None and buf.find(marker, max(before - len(marker), 0)) >= 0:
                t_mark = t
            if also is not None and self.also_s is None and buf.find(also, max(before - len(also), 0)) >= 0:
                self.also_s = t
        return bytes(buf), t_first, t_mark, t_last

    def finish(self, quit_keys: bytes = CTRL_Q, grace_s: float = 2.0) -> Optional[int]:
        """Quit (keys, then SIGTERM, then SIGKILL); return the child's peak RSS in bytes."""
        steps = [(lambda: self.send(quit_keys)), (lambda: os.kill(self.pid, signal.SIGTERM)),
                 (lambda: os.kill(self.pid, signal.SIGKILL))]
        for step in steps:
            try:
                step()
            except OSError:
                pass
            end = time.perf_counter() + grace_s
            while time.perf_counter() < end:
                if self.readable(0.05):
                    self.read()  # keep the pty drained so the child can write its goodbye
                pid, _status, rusage = os.wait4(self.pid, os.WNOHANG)
                if pid:
                    self.rusage = rusage
                    os.close(self.fd)
                    return rusage.ru_maxrss * 1024  # KiB on Linux
        os.close(self.fd)
        return None


def child_env(fps: Optional[int]) -> dict[str, str]:
    """The caller's environment without Textual overrides, as a 256-colour 80x24 terminal."""
    # PYTHONDONTWRITEBYTECODE off: an installed copy has its bytecode compiled by pip, so a source
    # tree measured without it would time the compiler, not the tuner (the warm-up start writes it)
    env = {k: v for k, v in os.environ.items()
           if not k.startswith("TEXTUAL_") and k not in ("COLORTERM", "PYTHONDONTWRITEBYTECODE")}
    env.update(TERM="xterm-256color", COLUMNS=str(COLS), LINES=str(ROWS))
    if fps is not None:
        env["TEXTUAL_FPS"] = str(fps)
    return env


def measure_start(target: Target, env: dict[str, str], figures: Figures) -> None:
    child = PtyChild(target, env)
    _data, _first, t_mark, t_last = child.read_until_quiet(timeout=20.0, marker=target.marker,
                                                           also=target.full_marker)
    if t_mark is None:
        figures.notes.append(f"{target.label}: first screen never showed {target.marker!r}")
    else:
        figures.starts_s.append(t_mark - child.started)
        figures.settled_s.append(t_last - child.started)
        full = child.also_s if target.full_marker is not None else t_mark
        if full is None:
            figures.notes.append(f"{target.label}: the full screen never showed {target.full_marker!r}")
        else:
            figures.full_s.append(full - child.started)
    child.finish()


def measure_keys(child: PtyChild, keys: int, key: bytes, figures: Figures) -> None:
    for _ in range(keys):
        t0 = time.perf_counter()
        child.send(key)
        data, t_first, _mark, t_last = child.read_until_quiet(timeout=3.0)
        if not data:
            figures.key_misses += 1
            continue
        figures.key_s.append(t_last - t0)
        figures.key_first_byte_s.append(t_first - t0)
        figures.key_bytes.append(len(data))


def measure_burst(child: PtyChild, key: bytes, figures: Figures) -> bytes:
    """30 keys at 30 Hz through the throttled link; returns the bytes the link delivered."""
    t0 = time.perf_counter()
    due = [t0 + i / BURST_HZ for i in range(BURST_KEYS)]
    sent = 0
    credit_at, credit = t0, 0.0  # token bucket: LINK_BYTES_PER_S, at most LINK_BUFFER_B banked
    got = bytearray()
    t_last_key = t_last_byte = None
    deadline = t0 + 60.0
    while not child.eof and time.perf_counter() < deadline:
        now = time.perf_counter()
        if sent < BURST_KEYS and now >= due[sent]:
            child.send(key)
            sent += 1
            if sent == BURST_KEYS:
                t_last_key = time.perf_counter()
            continue
        credit = min(credit + (now - credit_at) * LINK_BYTES_PER_S, LINK_BUFFER_B)
        credit_at = now
        until_key = due[sent] - now if sent < BURST_KEYS else float("inf")
        if credit < 64:  # the link is busy: wait for room (or the next key)
            time.sleep(max(min(until_key, (64 - credit) / LINK_BYTES_PER_S), 0.0))
            continue
        if child.readable(min(until_key, QUIET_S)):
            data = child.read(int(credit))
            credit -= len(data)
            got += data
            t_last_byte = time.perf_counter()
        elif sent == BURST_KEYS and time.perf_counter() - now >= QUIET_S:
            break  # the link had room and the app wrote nothing for QUIET_S: settled
    if t_last_key is None:
        figures.notes.append("burst: keys not all sent")
        return bytes(got)
    figures.burst_settle_s = max((t_last_byte or t_last_key) - t_last_key, 0.0)
    figures.burst_bytes = len(got)
    figures.burst_span_s = t_last_key - t0
    return bytes(got)


def measure_session(target: Target, env: dict[str, str], keys: int, figures: Figures) -> None:
    child = PtyChild(target, env)
    _data, _first, t_mark, _last = child.read_until_quiet(timeout=20.0, marker=target.marker)
    if t_mark is None:
        figures.notes.append(f"{target.label}: no first screen; session skipped")
        child.finish()
        return
    child.read_until_quiet(timeout=2.0)  # anything drawn a frame later (a chart) settles first
    time.sleep(0.3)
    child.read_until_quiet(timeout=2.0)
    measure_keys(child, keys, RIGHT, figures)  # each step a new value: no cache can answer it
    time.sleep(0.2)
    child.read_until_quiet(timeout=2.0)
    burst = measure_burst(child, LEFT, figures)
    if target.label == "bare":
        final = f"bare value {keys - BURST_KEYS}".encode()
        if final not in burst:
            figures.notes.append(f"bare: burst ended without showing {final.decode()!r}")
    figures.rss_b = child.finish()


def _median(values):
    return statistics.median(values) if values else None


def _ms(s):
    return "-" if s is None else f"{s * 1e3:.1f} ms"


def _sec(s):
    return "-" if s is None else (f"{s:.2f} s" if s >= 0.1 else f"{s * 1e3:.0f} ms")


def _bytes(b):
    return "-" if b is None else (f"{b:.0f} B" if b < 1000 else f"{b / 1000:.1f} KB")


def _mb(b):
    return "-" if b is None else f"{b / 1e6:.1f} MB"


def _verdict(ok):
    return "n/a" if ok is None else ("PASS" if ok else "MISS")


def report(bare: Figures, tuner: Figures, args) -> int:
    rows = []
    start_b, start_t = _median(bare.starts_s), _median(tuner.starts_s)
    ok = None if None in (start_b, start_t) else start_t <= GOAL_START_X_BARE * start_b
    limit = None if start_b is None else GOAL_START_X_BARE * start_b
    rows.append(("startup to first paint, median", _sec(start_b), _sec(start_t),
                 f"<= {GOAL_START_X_BARE:g} x bare ({_sec(limit)})", ok))
    full_t = _median(tuner.full_s)
    ok = None if None in (start_b, full_t) else full_t <= GOAL_FULL_X_BARE * start_b
    limit = None if start_b is None else GOAL_FULL_X_BARE * start_b
    rows.append(("startup to full chart, median", _sec(start_b), _sec(full_t),
                 f"<= {GOAL_FULL_X_BARE:g} x bare ({_sec(limit)})", ok))
    key_b, key_t = _median(bare.key_s), _median(tuner.key_s)
    ok = None if None in (key_b, key_t) else key_t <= GOAL_KEY_X_BARE * key_b
    limit = None if key_b is None else GOAL_KEY_X_BARE * key_b
    rows.append(("key -> frame, median", _ms(key_b), _ms(key_t),
                 f"<= {GOAL_KEY_X_BARE:g} x bare ({_ms(limit)})", ok))
    bytes_b, bytes_t = _median(bare.key_bytes), _median(tuner.key_bytes)
    rows.append(("bytes per keystroke, median", _bytes(bytes_b), _bytes(bytes_t),
                 f"<= {_bytes(GOAL_BYTES_PER_KEY)}", None if bytes_t is None else bytes_t <= GOAL_BYTES_PER_KEY))
    rows.append((f"burst {BURST_KEYS} keys @ {BURST_HZ:g} Hz, 11.5 KB/s", _sec(bare.burst_settle_s),
                 _sec(tuner.burst_settle_s), f"<= {GOAL_BURST_S:g} s after last key",
                 None if tuner.burst_settle_s is None else tuner.burst_settle_s <= GOAL_BURST_S))
    rows.append(("peak RSS", _mb(bare.rss_b), _mb(tuner.rss_b), f"<= {_mb(GOAL_RSS_B)}",
                 None if tuner.rss_b is None else tuner.rss_b <= GOAL_RSS_B))

    fps = f"TEXTUAL_FPS={args.fps}" if args.fps is not None else "TEXTUAL_FPS default (unset)"
    print(f"slopetune tuner benchmark: real pty {COLS}x{ROWS}, TERM=xterm-256color, {fps}")
    print(f"{args.starts} starts each, {args.keys} single keys each (60 ms quiet = settled)")
    print()
    head = f"{'figure':<36} {'bare app':>10} {'tuner':>10}  {'goal':<30} result"
    print(head)
    print("-" * len(head))
    for name, b, t, goal, ok in rows:
        print(f"{name:<36} {b:>10} {t:>10}  {goal:<30} {_verdict(ok)}")
    print()
    print("detail")
    for label, f in (("bare", bare), ("tuner", tuner)):
        q = statistics.quantiles(f.key_s, n=10) if len(f.key_s) >= 10 else None
        pad = " " * 8
        print(f"  {label:<5} first paint {', '.join(f'{s:.2f}' for s in f.starts_s)} s;"
              f" start-up output settled, median {_sec(_median(f.settled_s))}")
        if f.full_s and label == "tuner":
            ratios = ", ".join(f"{t:.2f}" for t in f.full_s)
            print(f"{pad}full chart {ratios} s; median {_median(f.full_s) / _median(bare.starts_s):.2f} x the bare"
                  " app's first paint")
        print(f"{pad}key -> frame p90 {_ms(q[-1] if q else None)},"
              f" max {_ms(max(f.key_s) if f.key_s else None)};"
              f" first byte, median {_ms(_median(f.key_first_byte_s))}; keys with no output {f.key_misses}")
        print(f"{pad}bytes per key mean {_bytes(statistics.fmean(f.key_bytes) if f.key_bytes else None)},"
              f" max {_bytes(max(f.key_bytes) if f.key_bytes else None)};"
              f" burst: {_bytes(f.burst_bytes)} through the link for {f.burst_span_s:.2f} s of keys")
        for note in f.notes:
            print(f"  {label:<5} note: {note}")
    verdicts = [ok for *_, ok in rows]
    return 0 if all(v is True for v in verdicts) else 1


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--keys", type=int, default=30, help="single keys timed per app (default 30)")
    parser.add_argument("--starts", type=int, default=5, help="starts timed per app (default 5)")
    parser.add_argument("--fps", type=int, default=None, help="set TEXTUAL_FPS in the children")
    parser.add_argument("--setup", default="setups/marmot-overdrive.toml", help="the tuner's file")
    args = parser.parse_args(argv)

    python = sys.executable
    bare_t = Target("bare", [python, str(ROOT / "bench" / "bare_app.py")], ROOT, b"bare value 0")
    # "slope": the form's first field (and the title's first word), in the tuner's first frame.
    # the chart's x-axis label: plotext draws it with the chart, in the frame the chart first shows
    tuner_t = Target("tuner", [python, "-m", "slopetune.tui.cli", args.setup], ROOT, b"slope", b"slope [deg]")
    setup_path = ROOT / args.setup
    before = hashlib.sha256(setup_path.read_bytes()).hexdigest()
    env = child_env(args.fps)
    bare, tuner = Figures(), Figures()

    measure_start(bare_t, env, Figures())  # warm-up, not counted: bytecode written, files in the page cache
    measure_start(tuner_t, env, Figures())
    for _ in range(args.starts):  # interleaved, so drift on a shared machine hits both alike
        measure_start(bare_t, env, bare)
        measure_start(tuner_t, env, tuner)
    measure_session(bare_t, env, args.keys, bare)
    measure_session(tuner_t, env, args.keys, tuner)

    if hashlib.sha256(setup_path.read_bytes()).hexdigest() != before:
        tuner.notes.append(f"{args.setup} CHANGED during the run")
    return report(bare, tuner, args)


if __name__ == "__main__":
    sys.exit(main())
