"""`slopetune` command line: sub-commands for scripts, the tuner when none is given.

Exit codes: 0 done, 1 a result the user asked to be told about, 2 bad input (one line on stderr,
no traceback).
"""

from __future__ import annotations

import argparse
import contextlib
import importlib
import io
import sys
import warnings

from slopetune.engine import SetupError
from slopetune.engine.safe_text import safe_lines

from .commands import COMMANDS

INTRO = """\
Setup tuner for scale rock crawlers: axle loads, overdrive wind-up and which axle lets go.

  slopetune [FILE]          open the full-screen tuner (no FILE: a bundled demo, unsaved)
  slopetune COMMAND --help  help on one command

Units: grams (forces in grams-force), millimetres, degrees. Slope > 0 is nose up (climbing),
< 0 nose down. Forces along the ground are positive up-slope.
The results are a static model: check on the bench, hands clear of the driveline.
"""


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="slopetune", description=INTRO, formatter_class=argparse.RawDescriptionHelpFormatter
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        try:
            module = importlib.import_module(f"slopetune.tui.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"slopetune.tui.commands.{name}":
                raise
            continue  # a command not built yet is simply not offered
        module.register(sub)
    return parser


def _tuner_args(argv):
    """Arguments of the tuner when the first word is not a sub-command, else None."""
    if argv and (argv[0] in COMMANDS or argv[0] in ("-h", "--help")):
        return None
    parser = argparse.ArgumentParser(prog="slopetune", add_help=False)
    parser.add_argument("file", nargs="?")
    parser.add_argument("--ascii", action="store_true")
    parser.add_argument("--baseline")
    return parser.parse_args(argv)


def quiet_float_warnings() -> None:
    """Numpy's floating-point RuntimeWarnings (overflow, invalid value, divide by zero) are not for
    the user: results are checked finite where they are shown, and a warning line on stderr would
    break the one-line promise (and the tuner's screen)."""
    warnings.filterwarnings("ignore", category=RuntimeWarning,
                            message=r"(overflow|invalid value|divide by zero|underflow) encountered")


class _SafeOut(io.TextIOBase):
    """stdout for the sub-commands: names and notes from a file may hold terminal control or bidi
    characters; every write is passed through the shared escaping rule (line breaks kept). JSON is
    unaffected: `json.dump` already writes those characters as \\u escapes."""

    def __init__(self, raw):
        self.raw = raw

    def write(self, text: str) -> int:
        self.raw.write(safe_lines(text))
        return len(text)

    def flush(self) -> None:
        self.raw.flush()

    def isatty(self) -> bool:
        return self.raw.isatty()


@contextlib.contextmanager
def safe_stdout():
    raw = sys.stdout
    sys.stdout = _SafeOut(raw)
    try:
        yield
    finally:
        sys.stdout = raw


def main(argv=None) -> int:
    quiet_float_warnings()
    argv = sys.argv[1:] if argv is None else list(argv)
    tuner = _tuner_args(argv)
    if tuner is not None:
        try:
            from .app_main import run_tuner
        except ModuleNotFoundError as exc:
            if exc.name != "slopetune.tui.app_main":
                raise
            print("slopetune: the tuner is not built yet; try `slopetune report FILE`", file=sys.stderr)
            return 2
        return run_tuner(tuner)
    args = build_parser().parse_args(argv)
    if not getattr(args, "func", None):
        build_parser().print_help()
        return 2
    try:
        with safe_stdout():
            return int(args.func(args) or 0)
    except SetupError as exc:
        print(f"slopetune: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # `slopetune report x | head`
        return 0
    except OSError as exc:  # a save that failed (SaveError) or a file that vanished mid-run
        print(f"slopetune: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":
    sys.exit(main())
