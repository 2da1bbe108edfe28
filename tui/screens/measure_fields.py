"""The measuring screen's fields: one row per reading or choice, and the typed text parsed into
numbers (a `FieldProblem` carries the reason shown beside the field). Shared by every section of
the screen, the slip tests included.
"""

from __future__ import annotations

import math
import re
from functools import partial
from typing import Optional

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Button, Input, Static

from slopetune.engine import Setup, check_value
from slopetune.engine.setup_model import cross_field_problems, rule_for

from ..widgets.choice import Choice

# Words from files and setups may hold brackets: never read them as markup.
Plain = partial(Static, markup=False)


def field_row(field_id: str, label: str, value: str, unit: str, wide: bool = False) -> ComposeResult:
    """One reading: label, input, unit and the line that says why a value is refused (every
    section of the measuring screen, the slip tests included, lays its readings out this way)."""
    with Horizontal(classes="m-row"):
        yield Plain(label, classes="m-label")
        yield Input(value, id=field_id, compact=True, select_on_focus=True,
                    classes="m-input -wide" if wide else "m-input")
        yield Plain(unit, classes="m-unit")
        yield Plain("", id=f"{field_id}-why", classes="m-why")


def choice_row(field_id: str, label: str, options: list[tuple[str, str]], index: int = 0) -> ComposeResult:
    """One choice laid out like a reading: label, the choice (Left/Right), and the line beside it."""
    with Horizontal(classes="m-row"):
        yield Plain(label, classes="m-label")
        yield Choice(options, index, id=field_id, classes="m-choice")
        yield Plain("", classes="m-unit")
        yield Plain("", id=f"{field_id}-why", classes="m-why")


def say(node, field_id: str, why: str, note: str = "", warn: bool = False) -> None:
    """Show `why` beside a field of `field_row` or `choice_row` (a refusal, or with `warn` a
    warning), else its `note`."""
    line = node.query_one(f"#{field_id}-why", Static)
    line.update(why or note)
    line.set_class(bool(why) and not warn, "-bad")
    line.set_class(bool(why) and warn, "-warn")
    node.query_one(f"#{field_id}").set_class(bool(why), "-bad")


def result_row(stem: str, label: str) -> ComposeResult:
    """A result line and its Apply button, disabled until `show_result` gives it a usable value."""
    with Horizontal(classes="m-row"):
        yield Plain("", id=f"{stem}-result", classes="m-result")
        yield Button(label, id=f"{stem}-apply", compact=True, classes="m-apply", disabled=True)


def show_result(node, stem: str, line: str, usable: bool) -> None:
    """Write the result line of `result_row` (marked bad unless usable) and enable its Apply."""
    result = node.query_one(f"#{stem}-result", Static)
    result.update(line)
    result.set_class(not usable, "-bad")
    node.query_one(f"#{stem}-apply", Button).disabled = not usable


_PAIR_SPLIT = re.compile(r"[,;]\s*|\s+(?=\S+\s*:)")


class FieldProblem(ValueError):
    """A typed value that cannot be used; the message is the reason shown beside the field."""


def parse_number(text: str) -> float:
    """A finite number from `text`, else `FieldProblem`."""
    try:
        value = float(text.strip().replace(",", "."))
    except ValueError:
        raise FieldProblem("not a number") from None
    if not math.isfinite(value):
        raise FieldProblem("must be finite")
    return value


def parse_lift_pairs(text: str) -> tuple[list[float], list[float]]:
    """Lifts and front readings from "100:1096, 150:1140" ([mm]:[g] pairs, comma separated)."""
    pieces = [p.strip() for p in _PAIR_SPLIT.split(text.strip()) if p.strip()]
    if not pieces:
        raise FieldProblem("give one or more lift:reading pairs, e.g. 100:1096")
    lifts, readings = [], []
    for n, piece in enumerate(pieces, 1):
        lift_text, sep, reading_text = piece.partition(":")
        if not sep:
            raise FieldProblem(f"pair {n} '{piece}': write lift mm:reading g")
        try:
            lifts.append(parse_number(lift_text))
            readings.append(parse_number(reading_text))
        except FieldProblem:
            raise FieldProblem(f"pair {n} '{piece}': not two numbers") from None
    return lifts, readings


def refusal(setup: Setup, key: str, value: float) -> Optional[str]:
    """Why `value` cannot go at `key`, naming the other key when a cross-field rule refuses it."""
    why = check_value(setup, key, value)
    if why and rule_for(key).problem(value) is None:
        clashes = cross_field_problems(setup.with_value(key, value))
        other = clashes[0][0].split(".")[-1] if clashes and clashes[0][0] != key else None
        if other and other not in why:
            return f"{other} {why}"
    return why


def _fmt(value: float) -> str:
    return f"{value:.10g}" if value == round(value, 6) else f"{value:.6g}"
