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
from pathlib import Path

from slopetune.engine import SetupError
from slopetune.engine.safe_text import one_line, safe_lines

from .commands import COMMANDS
from .commands._args import ArgumentRefused, Parser, close_match, leaf_parser

PROG = "slopetune"
HELP_FLAGS = ("-h", "--help")

USAGE = """\
slopetune [FILE] [--ascii] [--baseline FILE]    the full-screen tuner
       slopetune COMMAND ...                          a command for scripts (COMMAND --help)
       slopetune --version | --help"""

INTRO = """\
Setup tuner for scale rock crawlers: axle loads, overdrive wind-up and which axle lets go.
With no COMMAND it opens the tuner on FILE (no FILE: a bundled demo, unsaved).
"""

EPILOG = """\
--help works after any command (slopetune measure cg-height --help).
Units: grams (forces in grams-force), millimetres, degrees. Slope > 0 is nose up (climbing),
< 0 nose down. Forces along the ground are positive up-slope.
The results are a static model: check on the bench, hands clear of the driveline.
"""


def version() -> str:
    """The installed distribution's version (one place: pyproject.toml)."""
    from importlib import metadata

    try:
        return metadata.version("slopetune")
    except metadata.PackageNotFoundError:  # run from a source tree that was never installed
        return "unknown (not installed)"


class _VersionAction(argparse.Action):
    """`--version`, looked up only when asked: reading the installed metadata costs the tuner's
    start 10-20 ms it would otherwise spend on every launch."""

    def __init__(self, option_strings, dest=argparse.SUPPRESS, default=argparse.SUPPRESS,
                 help="print the version and exit"):
        super().__init__(option_strings, dest=dest, default=default, nargs=0, help=help)

    def __call__(self, parser, namespace, values, option_string=None):
        parser.exit(message=f"{PROG} {version()}\n")


def _tuner_arguments(parser) -> None:
    parser.add_argument("file", nargs="?", metavar="FILE",
                        help="setup file to open (TOML, format 1); none: a bundled demo, unsaved")
    parser.add_argument("--ascii", action="store_true",
                        help="plain characters only (automatic on TERM=linux or dumb, or non-UTF-8 output)")
    parser.add_argument("--baseline", metavar="FILE",
                        help="pin this setup file as the baseline the chart and status compare against")


def build_parser(tuner_help: bool = False) -> Parser:
    """The parser of the sub-commands (the tuner's own arguments are parsed by `tuner_parser`).

    `tuner_help`: also list the tuner's arguments, for the top-level help only (parsing with them
    would take a command's name for a FILE).
    """
    parser = Parser(prog=PROG, usage=USAGE, description=INTRO, epilog=EPILOG,
                    formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action=_VersionAction)
    if tuner_help:
        _tuner_arguments(parser.add_argument_group("the tuner"))
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", title="commands", prog=PROG)
    for name in COMMANDS:
        try:
            module = importlib.import_module(f"slopetune.tui.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"slopetune.tui.commands.{name}":
                raise
            continue  # a command not built yet is simply not offered
        module.register(sub)
    return parser


def tuner_parser() -> Parser:
    parser = Parser(prog=PROG, usage=USAGE, add_help=False)
    _tuner_arguments(parser)
    parser.add_argument("--version", action=_VersionAction)
    return parser


def print_help() -> None:
    """Top-level help: the tuner's arguments, then the commands."""
    build_parser(tuner_help=True).print_help()


def _words(argv: list[str]) -> list[str]:
    """The positional words of a tuner call (skipping --baseline's value), up to a `--`."""
    words, skip = [], False
    for arg in argv:
        if arg == "--":
            break
        if skip:
            skip = False
        elif arg == "--baseline":
            skip = True
        elif not arg.startswith("-") or arg == "-":
            words.append(arg)
    return words


def _help_argv(argv: list[str]) -> list[str] | None:
    """`--help` anywhere: the command words before it plus --help (None: not asked for help)."""
    head = argv[: argv.index("--")] if "--" in argv else argv
    if not any(a in HELP_FLAGS for a in head) or not head or head[0] not in COMMANDS:
        return None
    words = [head[0]]
    if head[0] == "measure":  # its kinds are sub-commands with their own help
        from .commands.measure import KINDS

        kind = next((a for a in head[1:] if a in KINDS), None)
        if kind:
            words.append(kind)
    return [*words, "--help"]


def _unknown_command(word: str) -> str | None:
    """One line for a word that is neither a command nor a file, else None (let the tuner open it)."""
    if Path(word).exists():
        return None
    guess = close_match(word, COMMANDS)
    if guess:
        return f"unknown command '{word}' - did you mean {guess}? (commands: {', '.join(COMMANDS)})"
    if "/" in word or "." in word:
        return None  # looks like a path: the loader says "no such file" with the name
    return f"unknown command '{word}' and no such file (commands: {', '.join(COMMANDS)}; FILE opens the tuner)"


def _code(exc: SystemExit) -> int:
    return exc.code if isinstance(exc.code, int) else 2


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
    head = argv[: argv.index("--")] if "--" in argv else argv
    if head and head[0] in COMMANDS:
        return _command(argv)
    if any(a in HELP_FLAGS for a in head):
        print_help()
        return 0
    if "--version" in head:
        print(f"{PROG} {version()}")
        return 0
    words = _words(argv)
    if words and words[0] not in COMMANDS:
        problem = _unknown_command(words[0])
        if problem:
            print(one_line(f"{PROG}: {problem}"), file=sys.stderr)
            return 2
    if words and words[0] in COMMANDS:  # `slopetune --ascii report x`
        print(f"{PROG}: options before '{words[0]}' belong to the tuner; put them after the command",
              file=sys.stderr)
        return 2
    try:
        tuner = tuner_parser().parse_args(argv)
    except SystemExit as exc:  # a one-line argument error (2), already printed
        return _code(exc)
    try:
        from .app_main import run_tuner
    except ModuleNotFoundError as exc:
        if exc.name != "slopetune.tui.app_main":
            raise
        print(f"{PROG}: the tuner is not built yet; try `slopetune report FILE`", file=sys.stderr)
        return 2
    return run_tuner(tuner)


def _command(argv: list[str]) -> int:
    parser = build_parser()
    help_argv = _help_argv(argv)
    try:
        args, extra = parser.parse_known_args(help_argv or argv)
        if extra:
            leaf_parser(args, parser).error(f"unrecognized arguments: {' '.join(extra)}")
    except SystemExit as exc:  # --help (0) or a one-line argument error (2), already printed
        return _code(exc)
    try:
        with safe_stdout():
            return int(args.func(args) or 0)
    except ArgumentRefused as exc:  # a value of the right type that the command cannot use
        print(one_line(f"{leaf_parser(args, parser).prog}: {exc}"), file=sys.stderr)
        return 2
    except SetupError as exc:
        print(f"{PROG}: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # `slopetune report x | head`
        return 0
    except OSError as exc:  # a save that failed (SaveError) or a file that vanished mid-run
        print(f"{PROG}: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":
    sys.exit(main())
