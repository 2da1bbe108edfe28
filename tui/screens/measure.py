"""Turn scale readings into setup values: front bias, CG height by axle lift, static mu by slide angle.

The sums are the engine's (`engine.measure`); this screen only parses, checks and shows them.
"""

from __future__ import annotations

import math
import re
from functools import partial
from typing import Optional

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Static

from slopetune.engine import Setup, check_value
from slopetune.engine.measure import (
    DIGITS as MEASURE_DIGITS, ReadingCheck, bias_checks, cg_height_from_lift_mm, front_bias_pct, lift_checks,
    mu_from_slide_angle, slide_angle_checks,
)
from slopetune.engine.setup_model import cross_field_problems, rule_for

from ..units import plain_scrollbars

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


KEYS = "Up/Down: field   Enter: next, then Apply   Esc: cancel"
# Typing pauses this long before the sums are redone (a burst of keys costs one redraw, not one each).
SETTLE_S = 0.12

# What a field means, shown beside it while its value is fine (a problem replaces it).
NOTES = {
    "m-total": "as weighed, ready to run",
    "m-axle": "loaded tyre radius",
    "m-lifts": "mm raised : front g",
    "m-slide": "board angle at the first slide",
}

# Rounded to what a kitchen scale and a protractor resolve, as the command line does.
DIGITS = {key: MEASURE_DIGITS[key] for key in ("rig.front_bias_pct", "rig.cg_height_mm", "grip.mu_static")}

# The field and its label for a reading's plausibility check (engine.measure.ReadingCheck.reading).
CHECK_FIELDS = {"front": ("m-front", "Front axle reading"), "total": ("m-total", "Total weight"),
                "level": ("m-level", "Front reading, level"), "lift": ("m-lifts", "Lifts"),
                "axle": ("m-axle", "Axle height"), "wheelbase": ("m-wheelbase", "Wheelbase"),
                "angle": ("m-slide", "Slide angle")}

LIFT_HOW = "Before lifting: driveshaft out (wheels roll freely), suspension locked."

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


class MeasureScreen(ModalScreen[dict[str, float] | None]):
    """Three small forms; Apply returns the setup keys to change, Esc returns None."""

    CSS_PATH = "measure.tcss"
    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="measure.cancel"),
        # priority: the scrolling body would otherwise take Up/Down to scroll, not to move between fields
        Binding("down", "app.focus_next", "Next field", show=False, id="measure.next", priority=True),
        Binding("up", "app.focus_previous", "Previous field", show=False, id="measure.previous", priority=True),
    ]

    def __init__(self, setup: Setup, ascii_only: Optional[bool] = None) -> None:
        super().__init__()
        self.setup = setup
        self._ascii_only = ascii_only
        self.results: dict[str, Optional[float]] = {key: None for key in DIGITS}
        self.total_g: Optional[float] = None
        self._settle = None  # the timer that recomputes once typing pauses

    # ---- layout -------------------------------------------------------------------------------

    def _ascii(self) -> bool:
        if self._ascii_only is not None:
            return self._ascii_only
        return bool(getattr(self.app, "ascii_only", False))

    def _field(self, field_id: str, label: str, value: str, unit: str, wide: bool = False) -> ComposeResult:
        yield from field_row(field_id, label, value, unit, wide)

    def _result(self, key: str, label: str) -> ComposeResult:
        stem = key.split(".")[1]
        yield Plain("", id=f"{stem}-check", classes="m-check")
        with Horizontal(classes="m-row"):
            yield Plain("", id=f"{stem}-result", classes="m-result")
            yield Button(label, id=f"{stem}-apply", compact=True, classes="m-apply", disabled=True)

    def compose(self) -> ComposeResult:
        rig, grip = self.setup.rig, self.setup.grip
        front_g = rig.mass_g * rig.front_bias_pct / 100.0
        axle_mm = (rig.tire_dia_front_mm + rig.tire_dia_rear_mm) / 4.0
        slide_deg = math.degrees(math.atan(grip.mu_static))
        mu_word, tan_word = ("mu", "tan(angle)") if self._ascii() else ("μ", "tan α")
        self._words = {"mu": mu_word, "tan": tan_word}
        with Vertical(id="measure-box"):
            yield Plain("Measure the rig", id="measure-title")
            with VerticalScroll(id="measure-body"):
                yield from self._field("m-total", "Total weight", _fmt(rig.mass_g), "g")
                if rig.ballast:
                    yield Plain(
                        f"Weigh it without the file's {len(rig.ballast)} ballast item(s): "
                        "they are added on top.",
                        classes="m-note",
                    )
                yield Plain("Front bias: front axle on the scale, rig level", classes="m-heading")
                yield from self._field("m-front", "Front axle reading", f"{front_g:.1f}", "g")
                yield from self._result("rig.front_bias_pct", "Apply bias")
                yield Plain("CG height, ISO 10392 axle lift: raise the rear, read the front",
                             classes="m-heading")
                yield Plain(LIFT_HOW, classes="m-note")
                yield from self._field("m-wheelbase", "Wheelbase", _fmt(rig.wheelbase_mm), "mm")
                yield from self._field("m-axle", "Axle height", _fmt(round(axle_mm, 1)), "mm")
                yield from self._field("m-level", "Front reading, level", f"{front_g:.1f}", "g")
                yield from self._field("m-lifts", "Lifts", "", "", wide=True)
                yield from self._result("rig.cg_height_mm", "Apply CG")
                yield Plain(f"Static grip, {mu_word} = {tan_word}: block the wheels, tilt the board",
                             classes="m-heading")
                yield from self._field("m-slide", "Slide angle", f"{slide_deg:.1f}", "deg")
                yield from self._result("grip.mu_static", f"Apply {mu_word}")
                if hasattr(self.setup.grip, "slip_stiffness"):  # the slip model's setups
                    from .measure_slip import SlipStiffnessForm

                    yield SlipStiffnessForm(self.setup)
            yield Plain(KEYS, id="measure-keys")

    def on_mount(self) -> None:
        self.set_class(self._ascii(), "-ascii")
        if self._ascii():
            plain_scrollbars()  # the screen scrolls now that it holds the slip tests
        self.query_one("#m-lifts", Input).placeholder = "e.g. 30:1420, 60:1475"
        self._recompute()
        self.query_one("#m-front", Input).focus()

    # ---- live sums ----------------------------------------------------------------------------

    def _text(self, field_id: str) -> str:
        return self.query_one(f"#{field_id}", Input).value

    def _say(self, field_id: str, why: str, warn: bool = False) -> None:
        """Show `why` beside the field (a refusal, or with `warn` a warning), or its note when fine."""
        note = self.query_one(f"#{field_id}-why", Static)
        note.update(why or NOTES.get(field_id, ""))
        note.set_class(bool(why) and not warn, "-bad")
        note.set_class(bool(why) and warn, "-warn")
        self.query_one(f"#{field_id}", Input).set_class(bool(why), "-bad")

    def _number(self, field_id: str, key: Optional[str] = None, positive: bool = False) -> Optional[float]:
        """The field's number, or None with the reason shown beside it."""
        try:
            value = parse_number(self._text(field_id))
            if key is not None:
                why = refusal(self.setup, key, value)
                if why:
                    raise FieldProblem(why)
            if positive and not value > 0:
                raise FieldProblem("must be > 0")
        except FieldProblem as exc:
            self._say(field_id, str(exc))
            return None
        self._say(field_id, "")
        return value

    def _refused(self, key: str, checks: list[ReadingCheck], pairs=None) -> bool:
        """Say the first problem on the section's check line, naming the reading; True if refused.

        The field gets a short mark beside it (the line there is too narrow for the reason).
        """
        ordered = sorted(checks, key=lambda c: not c.refuse)
        line = self.query_one(f"#{key.split('.')[1]}-check", Static)
        if not ordered:
            line.update("")
            line.set_class(False, "-bad", "-warn")
            line.display = False
            return False
        check = ordered[0]
        field, label = CHECK_FIELDS[check.reading]
        if check.reading == "lift" and check.index is not None and pairs is not None:
            label = f"Lift pair {check.index + 1} ({pairs[0][check.index]:g}:{pairs[1][check.index]:g})"
        self._say(field, "looks wrong, see below" if check.refuse else "see below", warn=not check.refuse)
        line.update(f"{label}: {check.why}" if check.refuse else f"Check {label[0].lower()}{label[1:]}: {check.why}")
        line.set_class(check.refuse, "-bad")
        line.set_class(not check.refuse, "-warn")
        line.display = True
        return check.refuse

    def _show(self, key: str, value: Optional[float], line: str) -> None:
        """Record a result (None: not usable), write its line, enable its Apply button."""
        stem = key.split(".")[1]
        if value is not None:
            value = round(value, DIGITS[key])
            why = refusal(self.setup, key, value)
            if why:
                line, value = f"{line.split('  (')[0]}: {why}", None
        self.results[key] = value
        result = self.query_one(f"#{stem}-result", Static)
        result.update(line)
        result.set_class(value is None, "-bad")
        self.query_one(f"#{stem}-apply", Button).disabled = value is None

    def _recompute(self) -> None:
        self.total_g = total = self._number("m-total", "rig.mass_g")
        self._front_bias(total)
        self._cg_height(total)
        self._mu()

    def _front_bias(self, total: Optional[float]) -> None:
        front = self._number("m-front", positive=True)
        key = "rig.front_bias_pct"
        checks = bias_checks(front, total) if front is not None and total is not None else []
        if self._refused(key, checks):
            front = None
        if total is None or front is None:
            self._show(key, None, "front bias: needs the total weight and the front reading")
            return
        bias = float(front_bias_pct(front, total))
        self._show(key, bias, f"front bias = {bias:.1f} %  (front reading / total weight)")

    def _cg_height(self, total: Optional[float]) -> None:
        key = "rig.cg_height_mm"
        wheelbase = self._number("m-wheelbase", positive=True)
        axle = self._number("m-axle", positive=True)
        level = self._number("m-level", positive=True)
        pairs = None
        if not self._text("m-lifts").strip():
            self._say("m-lifts", "")
        else:
            try:
                pairs = parse_lift_pairs(self._text("m-lifts"))
                if wheelbase is not None:
                    bad = [lift for lift in pairs[0] if not 0 < lift < wheelbase]
                    if bad:
                        raise FieldProblem(f"lift {bad[0]:g} mm: must be above 0 and below the wheelbase")
                self._say("m-lifts", "")
            except FieldProblem as exc:
                self._say("m-lifts", str(exc))
                pairs = None
        if None in (total, wheelbase, axle, level) or pairs is None:
            self._refused(key, [])
            missing = "lift:reading pairs" if pairs is None else "the fields above"
            self._show(key, None, f"CG height: needs {missing}")
            return
        checks = lift_checks(total, wheelbase, axle, level, *pairs)
        if self._refused(key, checks, pairs):
            self._show(key, None, "CG height: a reading looks wrong (see above)")
            return
        height = cg_height_from_lift_mm(total, wheelbase, axle, level, *pairs)
        if not math.isfinite(height):
            self._show(key, None, "CG height: the readings give no finite height")
            return
        n = len(pairs[0])
        how = f"ISO 10392, {n} lifts, least squares" if n > 1 else "ISO 10392 axle lift"
        self._show(key, height, f"CG height = {height:.1f} mm  ({how})")

    def _mu(self) -> None:
        key = "grip.mu_static"
        angle = self._number("m-slide")
        if self._refused(key, slide_angle_checks(angle) if angle is not None else []):
            angle = None
        if angle is None:
            self._show(key, None, f"{self._words['mu']} static: needs the slide angle")
            return
        mu = float(mu_from_slide_angle(angle))
        words = self._words
        self._show(key, mu, f"{words['mu']} static = {mu:.2f}  ({words['mu']} = {words['tan']})")

    # ---- events -------------------------------------------------------------------------------

    @on(Input.Changed)
    def _changed(self) -> None:
        """A reading changed: redo the sums once typing pauses, so a fast burst of keys is never
        held up (and never loses a character) behind a redraw per key."""
        if self._settle is not None:
            self._settle.stop()
        self._settle = self.set_timer(SETTLE_S, self._settled)

    def _settled(self) -> None:
        self._settle = None
        self._recompute()

    def _flush(self) -> None:
        """Enter or Apply before the pause: the sums are worked out now."""
        if self._settle is not None:
            self._settle.stop()
            self._settled()

    @on(Input.Submitted)
    def _next(self, event: Input.Submitted) -> None:
        """Enter moves on; after a section's last field it lands on that section's Apply button."""
        self._flush()
        row = event.input.parent
        siblings = list(row.parent.children) if row is not None and row.parent is not None else []
        after = siblings[siblings.index(row) + 1:] if row in siblings else []
        for widget in after:
            if isinstance(widget, Horizontal):
                buttons = list(widget.query(Button))
                if buttons:
                    if not buttons[0].disabled:
                        buttons[0].focus()
                        return
                    break
                inputs = list(widget.query(Input))
                if inputs:
                    inputs[0].focus()
                    return
        self.focus_next()

    @on(Button.Pressed, ".m-apply")
    def _apply(self, event: Button.Pressed) -> None:
        """Apply one section's value (and the total weight when it was changed)."""
        self._flush()
        stem = event.button.id.removesuffix("-apply")
        key = next(k for k in DIGITS if k.endswith("." + stem))
        value = self.results.get(key)
        if value is None:
            return
        out = {key: value}
        if key != "grip.mu_static" and self.total_g is not None and self.total_g != self.setup.rig.mass_g:
            out["rig.mass_g"] = self.total_g
        self.dismiss(out)

    def action_cancel(self) -> None:
        self.dismiss(None)
