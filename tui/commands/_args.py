"""Argument parsing shared by every command: one-line errors that name the argument and what it takes.

argparse's own errors print the usage block and a message (four lines or more) and, for options of a
sub-command it did not recognise, name the top-level program. `Parser` keeps argparse's parsing and
replaces only its error reporting: one line on stderr, `PROG: ARGUMENT ...: what is wrong; what is
allowed`, exit 2.
"""

from __future__ import annotations

import argparse
import difflib
import math
import re
import sys
from typing import Optional

from slopetune.engine.safe_text import one_line

# The leaf parser that parsed a namespace (the deepest sub-command), so extra words are reported by it.
LEAF = "_slopetune_parser"


class ArgumentRefused(ValueError):
    """An argument of the right type that the command cannot use; `str()` is one line naming it."""


def number(text: str) -> float:
    """A finite number, for `type=`; the error says what was typed."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a number") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"'{text}' is not a finite number")
    return value


def close_match(word: str, choices) -> Optional[str]:
    """The one choice a typo most likely meant, or None."""
    found = difflib.get_close_matches(word, list(choices), n=1, cutoff=0.6)
    return found[0] if found else None


def _plain(text: Optional[str]) -> str:
    return " ".join((text or "").split())


class Parser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line each (see the module docstring)."""

    def parse_known_args(self, args=None, namespace=None):
        ns, extra = super().parse_known_args(args, namespace)
        if not hasattr(ns, LEAF):  # the deepest parser runs first and wins
            setattr(ns, LEAF, self)
        return ns, extra

    # ---- what an argument takes, in words ----------------------------------------------------

    def _action_for(self, name: str) -> Optional[argparse.Action]:
        for action in self._actions:
            if name in action.option_strings or name in (action.dest, action.metavar):
                return action
        return None

    def allowed(self, action: Optional[argparse.Action]) -> str:
        """What `action` takes: its choices, or its value's name and help."""
        if action is None:
            return ""
        if action.choices is not None and not isinstance(action, argparse._SubParsersAction):
            return "one of " + ", ".join(str(c) for c in action.choices)
        if isinstance(action, argparse._SubParsersAction):
            return "one of " + ", ".join(action.choices)
        what = action.metavar or action.dest.upper()
        helptext = _plain(action.help)
        return f"{what}, {helptext}" if helptext else str(what)

    def options_words(self) -> str:
        words = []
        for action in self._actions:
            if not action.option_strings or action.help == argparse.SUPPRESS:
                continue
            name = max(action.option_strings, key=len)
            if action.nargs == 0:
                words.append(name)
            elif action.choices is not None:
                words.append(f"{name} {'|'.join(map(str, action.choices))}")
            else:
                words.append(f"{name} {action.metavar or action.dest.upper()}")
        return ", ".join(words)

    def _positional_actions(self) -> list[argparse.Action]:
        return [a for a in self._actions if not a.option_strings]

    # ---- the one-line error ------------------------------------------------------------------

    def one_line(self, message: str) -> str:
        """argparse's message rewritten to say what is wrong and what is allowed."""
        m = re.match(r"the following arguments are required: (.*)", message)
        if m:
            names = [n.strip() for n in m.group(1).split(",")]
            action = self._action_for(names[0].split("/")[0])
            if isinstance(action, argparse._SubParsersAction):
                return f"which {names[0].lower()}? {self.allowed(action)}"
            if action is None:
                return f"{', '.join(names)} {'is' if len(names) == 1 else 'are'} required"
            first = (action.metavar or action.dest.upper()) if not action.option_strings else (
                f"{names[0]} {action.metavar or action.dest.upper()}")
            more = f" (and {', '.join(names[1:])})" if len(names) > 1 else ""
            return f"{first} is required{more}: {_plain(action.help)}"
        m = re.match(r"unrecognized arguments: (.*)", message)
        if m:
            word = m.group(1).split()[0]
            if word.startswith("-") and len(word) > 1:
                options = [s for a in self._actions for s in a.option_strings]
                guess = close_match(word, options)
                hint = f"did you mean {guess}? " if guess else ""
                return f"unknown option {word}; {hint}allowed: {self.options_words()}"
            takes = ", ".join(a.metavar or a.dest.upper() for a in self._positional_actions()
                              if not isinstance(a, argparse._SubParsersAction)) or "no words"
            return f"extra argument '{word}': this command takes {takes} and options ({self.options_words()})"
        m = re.match(r"argument (\S+?)(?:/\S+)?: (.*)", message)
        if m:
            name, what = m.group(1), m.group(2)
            action = self._action_for(name)
            choice = re.match(r"invalid choice: '?(.*?)'? \(choose from", what)
            if choice:
                typed = choice.group(1)
                guess = close_match(typed, action.choices) if action is not None and action.choices else None
                hint = f" - did you mean {guess}?" if guess else ""
                label = name.lower() if not name.startswith("-") else name
                return f"unknown {label} '{typed}'{hint}; {self.allowed(action)}"
            if what == "expected one argument":
                return f"{name} needs a value: {self.allowed(action)}"
            if what.startswith("ignored explicit argument"):
                return f"{name} takes no value ({what.split(':', 1)[-1].strip()} given)"
            return f"{name} {what}; give {self.allowed(action)}"
        return message

    def error(self, message: str):
        # what was typed is echoed: spell out control and bidi characters (engine.safe_text)
        print(one_line(f"{self.prog}: {_plain(self.one_line(message))}"), file=sys.stderr)
        self.exit(2)


def leaf_parser(namespace, default: Parser) -> Parser:
    """The sub-command's parser that produced `namespace` (for errors about its extra words)."""
    return getattr(namespace, LEAF, None) or default


__all__ = ["ArgumentRefused", "Parser", "number", "close_match", "leaf_parser", "LEAF"]
