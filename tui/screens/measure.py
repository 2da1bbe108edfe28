"""Turn scale readings into setup values: front bias, CG height by axle lift, static mu by slide angle
(all wheels on the board, or one axle alone with the other on a low-friction sheet).

The sums are the engine's (`engine.measure`); this screen only parses, checks and shows them.
"""

from __future__ import annotations

import math
from typing import Optional

from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Static

from slopetune.engine import Setup
from slopetune.engine.measure import (
    DIGITS as MEASURE_DIGITS, MU_KEYS, ReadingCheck, bias_checks, cg_height_from_lift_mm, front_bias_pct,
    lift_checks, mu_from_slide_angle, mu_one_axle_from_slide_angle, slide_angle_checks,
)

from ..commands.measure import ONE_AXLE_FORMULA, mu_problem
from ..units import plain_scrollbars
from ..widgets.choice import Choice
from .measure_fields import (
    FieldProblem, Plain, _fmt, choice_row, field_row, parse_lift_pairs, parse_number, refusal, result_row, say,
    show_result,
)

KEYS = "Up/Down: field  Left/Right: choose  Enter: next, then Apply  Esc: cancel"
# Typing pauses this long before the sums are redone (a burst of keys costs one redraw, not one each).
SETTLE_S = 0.12
LAYOUT_S = 0.05

# What a field means, shown beside it while its value is fine (a problem replaces it).
NOTES = {
    "m-total": "as weighed, ready to run",
    "m-axle": "loaded tyre radius",
    "m-lifts": "mm raised : front g",
    "m-slide": "board angle at first slide",
}

# The slide-angle section: which mu (all wheels on the board, or one axle alone) and which way the
# rig's nose pointed. No facing is assumed: one axle's load depends on it (as `measure mu --facing`).
AXLE_CHOICES = [("both", "both axles"), ("front", "front only"), ("rear", "rear only")]
FACING_CHOICES = [("", "not noted"), ("up", "nose up"), ("down", "nose down")]
SHEET_HOW = "{other} wheels on a low-friction sheet (plastic on glass), {axle} blocked."
# Focusing these scrolls the section's result into view too: the choice and its result together.
MU_FIELDS = ("m-mu-axle", "m-mu-facing", "m-slide")

# Rounded to what a kitchen scale and a protractor resolve, as the command line does.
DIGITS = {key: MEASURE_DIGITS[key] for key in ("rig.front_bias_pct", "rig.cg_height_mm", "grip.mu_static")}

# The field and its label for a reading's plausibility check (engine.measure.ReadingCheck.reading).
CHECK_FIELDS = {"front": ("m-front", "Front axle reading"), "total": ("m-total", "Total weight"),
                "level": ("m-level", "Front reading, level"), "lift": ("m-lifts", "Lifts"),
                "axle": ("m-axle", "Axle height"), "wheelbase": ("m-wheelbase", "Wheelbase"),
                "angle": ("m-slide", "Slide angle"), "rig": ("m-mu-axle", "The setup's rig")}

LIFT_HOW = "Before lifting: driveshaft out (wheels roll freely), suspension locked."

class MeasureScreen(ModalScreen[dict[str, float] | None]):
    """Three small forms; Apply returns the setup keys to change, Esc returns None."""

    CSS_PATH = "measure.tcss"
    BINDINGS = [
        Binding("escape", "cancel", "Cancel", id="measure.cancel"),
        # priority: the scrolling body would otherwise take Up/Down to scroll, not to move between fields
        Binding("down", "app.focus_next", "Next field", show=False, id="measure.next", priority=True),
        Binding("up", "app.focus_previous", "Previous field", show=False, id="measure.previous", priority=True),
        # reached only from a choice: a reading's Enter and a button's press come first
        Binding("enter", "app.focus_next", "Next field", show=False, id="measure.choice_next"),
    ]

    def __init__(self, setup: Setup, ascii_only: Optional[bool] = None) -> None:
        super().__init__()
        self.setup = setup
        self._ascii_only = ascii_only
        self.results: dict[str, Optional[float]] = {key: None for key in DIGITS}
        self.total_g: Optional[float] = None
        self.mu_key = MU_KEYS["both"]  # the setup key the slide-angle section's value goes to
        self._notes = dict(NOTES)  # the choices' notes follow what is chosen
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
        yield from result_row(stem, label)

    def compose(self) -> ComposeResult:
        rig, grip = self.setup.rig, self.setup.grip
        front_g = rig.mass_g * rig.front_bias_pct / 100.0
        axle_mm = (rig.tire_dia_front_mm + rig.tire_dia_rear_mm) / 4.0
        slide_deg = math.degrees(math.atan(grip.mu_static))
        mu_word, tan_word = ("mu", "tan a") if self._ascii() else ("μ", "tan α")
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
                yield Plain("Static grip: block the wheels, tilt the board until the rig slides",
                             classes="m-heading")
                yield from choice_row("m-mu-axle", "Which mu", AXLE_CHOICES)
                yield from choice_row("m-mu-facing", "Rig on the board", FACING_CHOICES)
                yield from self._field("m-slide", "Slide angle", f"{slide_deg:.1f}", "deg")
                yield Plain("", id="mu-how", classes="m-note")
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
        say(self, field_id, why, self._notes.get(field_id, ""), warn)

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

    def _show(self, key: str, value: Optional[float], line: str, setup_key: Optional[str] = None) -> None:
        """Record a section's result (None: not usable), write its line, enable its Apply button;
        `setup_key` is where the value goes when that is not the section's own key."""
        stem = key.split(".")[1]
        if value is not None:
            value = round(value, MEASURE_DIGITS[setup_key or key])
            why = refusal(self.setup, setup_key or key, value)
            if why:
                line, value = f"{line.split('  (')[0]}: {why}", None
        self.results[key] = value
        show_result(self, stem, line, value is not None)

    def _recompute(self) -> None:
        self.total_g = total = self._number("m-total", "rig.mass_g")
        self._front_bias(total)
        self._cg_height(total)
        self._mu()
        if self.focused is not None and self.focused.id in MU_FIELDS:
            self._show_mu_result()  # a check line or the sheet line may have pushed it down

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
        key, words = "grip.mu_static", self._words
        axle = self.query_one("#m-mu-axle", Choice).value
        facing = self.query_one("#m-mu-facing", Choice).value or None
        self.mu_key = MU_KEYS[axle]
        self._notes["m-mu-axle"] = f"writes {self.mu_key}"
        self._say("m-mu-axle", "")
        wheelbase, b, h = self._board_rig()
        if axle == "both":
            self._notes["m-mu-facing"] = "for the tip-over check"
            name = f"{words['mu']} static"
        else:
            uphill = (axle == "front") == (facing == "up")
            self._notes["m-mu-facing"] = f"{axle} axle {'uphill' if uphill else 'downhill'}"
            name = f"{axle} {words['mu']} static"
        self._say("m-mu-facing", "needed: load depends on it" if axle != "both" and facing is None else "")
        angle = self._number("m-slide")
        checks = []
        if angle is not None and (axle == "both" or facing is not None):
            checks = slide_angle_checks(angle, axle=axle, facing=facing, wheelbase_mm=wheelbase, cg_from_rear_mm=b,
                                        cg_height_mm=h)
        if self._refused(key, checks):
            self._show(key, None, f"{name}: the slide angle looks wrong (see above)")
            return
        if angle is None or (axle != "both" and facing is None):
            self._show(key, None, f"{name}: needs {'the slide angle' if angle is None else 'the facing'}")
            return
        if axle == "both":
            mu, formula = float(mu_from_slide_angle(angle)), words["tan"]
        else:
            mu = mu_one_axle_from_slide_angle(angle, wheelbase, b, h, axle, facing)
            formula = ONE_AXLE_FORMULA[axle, facing]
            if not self._ascii():
                formula = formula.replace("tan a", words["tan"]).replace(" - ", " − ")
        if not math.isfinite(mu):  # the checks above refuse these; a hair's breadth at a tip angle may remain
            self._show(key, None, f"{name}: this rig cannot slide on the {axle} axle alone there")
            return
        why = mu_problem(self.setup, self.mu_key, round(mu, MEASURE_DIGITS[self.mu_key]))
        if why:
            self._refused(key, [ReadingCheck("angle", None, True,
                                             f"gives {self.mu_key.split('.')[-1]} {mu:.2f}, which the setup "
                                             f"refuses: {why}")])
            self._show(key, None, f"{name} = {mu:.2f}: not taken (see above)")
            return
        self._show(key, mu, f"{name} = {mu:.2f}  ({words['mu']} = {formula})", setup_key=self.mu_key)

    def _board_rig(self) -> tuple[float, float, float]:
        """L, b and h of the rig on the board [mm]: the open setup's, ballast included; said under
        the slide angle, with the sheet to lay for one axle."""
        from slopetune.engine.ballast import combine_ballast

        rig = self.setup.rig
        _mass, b, h = combine_ballast(rig)
        axle = self.query_one("#m-mu-axle", Choice).value
        n = len(rig.ballast)
        whose = f"the setup's, {n} ballast item{'s' if n > 1 else ''} in" if n else "the setup's"
        how = f"Rig ({whose}): L {rig.wheelbase_mm:g} mm, b {b:.1f} mm, h {h:.1f} mm"
        if axle != "both":
            other = "rear" if axle == "front" else "front"
            how = SHEET_HOW.format(other=other.capitalize(), axle=axle) + "\n" + how
        self.query_one("#mu-how", Static).update(how)
        return rig.wheelbase_mm, b, h

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

    def on_descendant_focus(self, event: events.DescendantFocus) -> None:
        """A field of the slide-angle section: show its result line and Apply as well."""
        if event.widget.id in MU_FIELDS:
            self._show_mu_result()

    def _show_mu_result(self) -> None:
        result = self.query_one("#mu_static-result", Static)
        # once the lines just changed above it (a check, the sheet line) are laid out: the next
        # refresh is too early, it scrolls by the old height
        self.set_timer(LAYOUT_S, lambda: result.scroll_visible(animate=False))

    @on(Choice.Changed)
    def _chosen(self) -> None:
        """Another mu or facing: the sums are redone at once (one key, not a burst)."""
        if self._settle is not None:
            self._settle.stop()
            self._settle = None
        self._recompute()

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
        key = next(k for k in DIGITS if k.split(".")[1] == stem)
        value = self.results.get(key)
        if value is None:
            return
        if key == "grip.mu_static":  # the weight cancels from every mu
            self.dismiss({self.mu_key: value})
            return
        out = {key: value}
        if self.total_g is not None and self.total_g != self.setup.rig.mass_g:
            out["rig.mass_g"] = self.total_g
        self.dismiss(out)

    def action_cancel(self) -> None:
        self.dismiss(None)
