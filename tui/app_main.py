"""Start the tuner: read the files first (a bad one is one line on stderr, exit 2), then Textual.

`slopetune FILE` opens FILE; `slopetune` alone opens the bundled demo as an unsaved copy (saving
asks for a name). ASCII mode (`--ascii`, `TERM=linux` or `dumb`, or an output that is not UTF-8)
keeps every character on screen within Latin-1 (plain ASCII when the output cannot even take
that), so a plain Linux console or a `LC_ALL=C` session shows a readable screen.
"""

from __future__ import annotations

import codecs
import gc
import os
import sys
from typing import Optional

from slopetune.engine import LoadedSetup, SetupError, load_setup, parse_setup

DEMO_FILE = "marmot-overdrive.toml"
PLAIN_TERMS = ("linux", "dumb")
# How long the start waits for the forked child's first screen once Textual has loaded: it is
# usually ready (numpy and one analysis against Textual's import); a slow child is not waited
# for, its screen then follows the first frame.
FIRST_SCREEN_WAIT_S = 0.05


def _encoding(stream) -> str:
    try:
        return codecs.lookup(getattr(stream, "encoding", None) or "ascii").name
    except LookupError:
        return "ascii"


def display_charset(force_ascii: bool = False, environ=None, streams=None) -> tuple[bool, str]:
    """(ascii_only, charset): whether to keep to plain marks, and what the output can carry.

    The charset is "utf-8", "latin-1" (UTF-8 output on a console font without braille or
    quadrants, or a Latin-1 locale) or "ascii" (anything else, e.g. `LC_ALL=C PYTHONUTF8=0`).
    """
    environ = os.environ if environ is None else environ
    streams = (sys.stdout, sys.__stderr__) if streams is None else streams
    names = {_encoding(s) for s in streams if s is not None}
    if names <= {"utf-8"}:
        charset = "utf-8"
    elif names <= {"utf-8", "latin-1", "iso8859-1"}:
        charset = "latin-1"
    else:
        charset = "ascii"
    plain = force_ascii or environ.get("TERM", "") in PLAIN_TERMS or charset != "utf-8"
    if plain and charset == "utf-8":
        charset = "latin-1"
    return plain, charset


def demo_setup() -> LoadedSetup:
    """The bundled demo as an unsaved copy: its text is kept (comments survive a save-as), no path."""
    from importlib import resources

    text = resources.files("slopetune.tui").joinpath("demo", DEMO_FILE).read_text(encoding="utf-8")
    setup, data, warnings = parse_setup(text, f"demo/{DEMO_FILE}")
    return LoadedSetup(None, setup, text, data, None, warnings)


def _folding_driver(charset: str):
    """The terminal driver, with every write folded into `charset` (Textual's own widgets too)."""
    from textual.drivers.linux_driver import LinuxDriver

    from .widgets.load_chart import ASCII_FOLD

    fold = dict(ASCII_FOLD)
    fold.update({ord(c): "#" for c in "\u2588\u2589\u258a\u258b\u258c\u258d\u258e\u258f"})
    fold.update({ord(c): "=" for c in "\u2581\u2582\u2583\u2584\u2585\u2586\u2587\u2594\u2501\u2550"})
    # one character for one: Textual has already laid out every cell
    fold.update({ord("\u2026"): ".", ord("\u2191"): "^", ord("\u2193"): "v", ord("\u2190"): "<",
                 ord("\u2192"): ">", ord("\u258f"): "|", ord("\u2595"): "|"})
    if charset == "ascii":
        fold[ord("\u00b0")] = "o"

    class FoldingDriver(LinuxDriver):
        def write(self, data: str) -> None:
            if not data.isascii():
                data = data.translate(fold).encode(charset, "replace").decode(charset)
            super().write(data)

    return FoldingDriver


def run_tuner(args) -> int:
    """Open the tuner on `args.file` (or the demo); `args.baseline` pins a file as the baseline."""
    plain, charset = display_charset(bool(getattr(args, "ascii", False)))
    try:
        loaded = load_setup(args.file) if getattr(args, "file", None) else demo_setup()
        baseline: Optional[LoadedSetup] = None
        if getattr(args, "baseline", None):
            baseline = load_setup(args.baseline)
    except SetupError as exc:
        print(f"slopetune: {exc}", file=sys.stderr)
        return 2
    # Importing Textual and drawing the first frame make tens of thousands of lasting objects and
    # little garbage: the collector's passes over them cost 10-20 ms of the start. The app
    # collects once and turns it back on after its first chart (`SlopeTuneApp.resume_gc`).
    gc.disable()
    try:
        from . import prefetch

        # before Textual loads: a child works out the first screen on the other core meanwhile,
        # its chart drawn for this terminal's size (Textual asks the same `shutil` for it)
        import shutil

        size = shutil.get_terminal_size()
        child = prefetch.start(loaded.setup, baseline.setup if baseline else None, plain,
                               (size.columns, size.lines))

        from .app import SlopeTuneApp  # after the files are read: a bad file never starts Textual

        first = None
        if child is not None and child.ready(FIRST_SCREEN_WAIT_S):
            # the child is usually done by now: the first frame is the whole screen, chart included
            first, child = child.result(), None
        if first is not None and first.plot is None:
            from .widgets.load_chart import load_plotext

            load_plotext()  # the chart is drawn here, in the first frame
        driver = _folding_driver(charset) if plain and sys.platform != "win32" else None
        app = SlopeTuneApp(loaded, baseline=baseline, ascii_only=plain, driver_class=driver, prefetch=child,
                           first_screen=first)
        app.resume_gc = True
        app.run()
    finally:
        gc.enable()
    return int(app.return_code or 0)
