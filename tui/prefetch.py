"""The first analysis, worked out in a forked process while the parent imports Textual.

Start-up is two imports in a row on one core: Textual (to paint) and numpy (to analyse), about
0.1 s and 0.04 s here, several times that on a Pi. A child forked before Textual loads imports
numpy and the engine (never Textual: `chart_data` and `status_words` are free of it), analyses the
setup, and sends back only what the first screen shows (the chart's data and the status words:
plain tuples and strings, no numpy objects). The parent, once Textual and plotext are in, waits a
moment for that answer and composes it into its first frame; an answer that comes later is shown
the moment it arrives. The parent then analyses on its own, after that frame, for everything that
follows.

Where fork is missing (Windows) or fails, nothing is started and the tuner starts as before.
"""

from __future__ import annotations

import os
import pickle
import sys
from typing import NamedTuple, Optional


class FirstScreen(NamedTuple):
    """What the child sends back: the chart's data and the status words for the file's setup."""

    setup: object  # the engine Setup it was worked out for (the parent checks it is still current)
    chart: object  # chart_data.ChartData
    view: object  # status_words.StatusView
    # plotext's text of that chart at the size the widget is expected to have on the terminal
    # the parent saw: (width, height, text), or None (no terminal size, or too small to draw)
    plot: Optional[tuple] = None


class Prefetch:
    """A forked child working out the first screen; `fd` becomes readable when it is done."""

    def __init__(self, pid: int, fd: int) -> None:
        self.pid, self.fd = pid, fd

    def ready(self, timeout_s: float) -> bool:
        """Whether the answer is there to read, waiting at most `timeout_s`."""
        import select

        try:
            return bool(select.select([self.fd], [], [], max(timeout_s, 0.0))[0])
        except (OSError, ValueError):
            return False

    def result(self) -> Optional[FirstScreen]:
        """Read the child's answer (blocks until it is written) and reap the child; None on failure."""
        chunks = []
        try:
            while True:
                chunk = os.read(self.fd, 1 << 16)
                if not chunk:
                    break
                chunks.append(chunk)
        except OSError:
            chunks = []
        finally:
            self.close()
        try:
            answer = pickle.loads(b"".join(chunks)) if chunks else None
        except Exception:  # noqa: BLE001 - a broken answer only means the parent works it out
            return None
        return answer if isinstance(answer, FirstScreen) else None

    def close(self) -> None:
        try:
            os.close(self.fd)
        except OSError:
            pass
        try:
            os.waitpid(self.pid, 0)
        except OSError:
            pass


def spare_core() -> bool:
    """True when another core is idle enough for the child: on a busy or one-core machine the
    child would only take time from the parent's first frame."""
    cores = os.cpu_count() or 1
    try:
        load = os.getloadavg()[0]
    except (AttributeError, OSError):
        return cores >= 2
    return cores >= 2 and load <= cores - 1


def start(setup, baseline_setup, ascii_only: bool, terminal: Optional[tuple[int, int]] = None) -> Optional[Prefetch]:
    """Fork a child that works out the first screen of `setup` (and draws its chart for a
    `terminal` of (columns, rows), when given); None where that cannot be done or would not help
    (no fork, no spare core, `SLOPETUNE_PREFETCH=0`)."""
    if not hasattr(os, "fork") or sys.platform == "win32":
        return None
    setting = os.environ.get("SLOPETUNE_PREFETCH", "auto")
    if setting == "0" or (setting != "1" and not spare_core()):
        return None
    try:
        read_fd, write_fd = os.pipe()
    except OSError:
        return None
    try:
        pid = os.fork()
    except OSError:
        os.close(read_fd)
        os.close(write_fd)
        return None
    if pid == 0:  # the child: never returns, never touches the terminal
        status = 1
        try:
            os.close(read_fd)
            devnull = os.open(os.devnull, os.O_RDWR)
            for fd in (0, 1, 2):
                os.dup2(devnull, fd)
            answer = _first_screen(setup, baseline_setup, ascii_only, terminal)
            data = pickle.dumps(answer, protocol=pickle.HIGHEST_PROTOCOL)
            view = memoryview(data)
            while view:
                view = view[os.write(write_fd, view):]
            status = 0
        except BaseException:  # noqa: BLE001 - the parent falls back to its own analysis
            pass
        finally:
            os._exit(status)
    os.close(write_fd)
    return Prefetch(pid, read_fd)


def _first_screen(setup, baseline_setup, ascii_only: bool, terminal: Optional[tuple[int, int]] = None) -> FirstScreen:
    from slopetune.engine import analyse

    from .chart_data import chart_data
    from .chart_plot import MIN_HEIGHT, MIN_WIDTH, expected_chart_size, plot_text
    from .slopes import slope_grid
    from .status_words import status_view
    from .units import Units

    units = Units(imperial=False, ascii_only=ascii_only)
    slopes = slope_grid(False)
    analysis = analyse(setup, slopes)
    base = analyse(baseline_setup, slopes) if baseline_setup is not None else None
    data = chart_data(analysis, units, base)
    plot = None
    if terminal is not None:
        width, height = expected_chart_size(*terminal)
        if width >= MIN_WIDTH and height >= MIN_HEIGHT:
            plot = (width, height - 1, plot_text(data, width, height - 1, ascii_only))  # the last row: legend
    return FirstScreen(setup, data, status_view(analysis, units, base), plot)
