"""What every command prints the same way: the file's warnings on stderr, `--json` on stdout."""

from __future__ import annotations

import json
import sys


def print_warnings(warnings) -> None:
    """Each of a loaded file's warnings as one ``slopetune: warning:`` line on stderr."""
    for w in warnings:
        print(f"slopetune: warning: {w}", file=sys.stderr)


def print_json(document) -> None:
    """A ``--json`` document on stdout: indented, strict JSON (no NaN or Infinity), one newline after."""
    json.dump(document, sys.stdout, indent=1, allow_nan=False)
    sys.stdout.write("\n")
