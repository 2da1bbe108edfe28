"""Plan a change: pick a target angle and a lever, see the answer applied to a preview.

The goal seek is the engine's (`engine.goal_seek.plan`); it runs in a worker thread (a few tens
of milliseconds here, several times that on a Pi) and posts its answer back, so typing never
waits for it. Enter accepts a reached answer (the screen returns the new `Setup`); Esc discards
(returns None).
"""

from __future__ import annotations

import math
from typing import Optional

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.screen import ModalScreen
from textual.timer import Timer
from textual.widgets import Input, Static

from slopetune.engine import Setup
from slopetune.engine.safe_text import one_line
from slopetune.engine.goal_seek import (
    AddBallast, CgHeight, Compound, LeverError, MoveBallast, Overdrive, Plan, Target,
    angle_value_deg, plan,
)

from ..commands.plan import ANGLE_LABELS, angle_words, change_words
from ..widgets.choice import Choice

KEYS = "Enter: accept   Esc: discard   Up/Down: field   Left/Right: choose"
# Typing settles for this long before the goal seek starts (a held key starts one, not dozens).
SETTLE_S = 0.12
LEVER_KINDS = ("ballast", "move", "cg-height", "overdrive", "mu")
LEVER_WORDS = {
    "ballast": "add ballast at a place",
    "move": "move a ballast item along x",
    "cg-height": "raise or lower the CG",
    "overdrive": "gear overdrive",
    "mu": "tyre compound (all mu scaled)",
}
LIMIT_UNITS = {"ballast": "g", "move": "mm", "cg-height": "mm", "overdrive": "%", "mu": "mu"}
ANGLE_CHOICES = {
    "handover": "handover (climb)",
    "handover_weight_only": "handover, weight-only rule",
    "balance": "balance",
    "max_grade": "max grade",
    "front_lift": "front lift",
}


class FieldProblem(ValueError):
    """A typed value the planner cannot use; the message is shown in the answer area."""


def default_limits(kind: str, setup: Setup) -> tuple[float, float]:
    """The engine's default limits of a lever kind, for the min/max fields."""
    if kind == "ballast":
        return AddBallast.min_g, AddBallast.max_g
    if kind == "move":
        return 0.0, float(setup.rig.wheelbase_mm)
    if kind == "cg-height":
        return CgHeight.min_mm, CgHeight.max_mm
    if kind == "overdrive":
        return Overdrive.min_pct, Overdrive.max_pct
    return Compound.min_mu, Compound.max_mu


def _num(text: str, what: str) -> float:
    try:
        value = float(text.strip().replace(",", "."))
    except ValueError:
        raise FieldProblem(f"{what}: not a number") from None
    if not math.isfinite(value):
        raise FieldProblem(f"{what}: must be finite")
    return value


def _fmt(value: float) -> str:
    return f"{value:.6g}"


def short_change(p: Plan) -> str:
    """The change as a short instruction that fits one line of the screen."""
    return change_words(p, short=True)


class PlanScreen(ModalScreen[Optional[Setup]]):
    """Target and lever on top, the answer applied to a preview below; Enter accepts, Esc discards."""

    CSS_PATH = "plan.tcss"
    BINDINGS = [
        Binding("escape", "discard", "Discard", id="plan.discard"),
        Binding("enter", "accept", "Accept", id="plan.accept"),
        Binding("down", "app.focus_next", "Next field", show=False, id="plan.next"),
        Binding("up", "app.focus_previous", "Previous field", show=False, id="plan.previous"),
    ]

    class Planned(Message):
        """A goal seek finished (posted from the worker thread)."""

        def __init__(self, generation: int, result: Optional[Plan], problem: Optional[str]) -> None:
            super().__init__()
            self.generation = generation
            self.result = result
            self.problem = problem

    def __init__(self, setup: Setup, ascii_only: Optional[bool] = None, *, target: Optional[Target] = None,
                 lever: str = "ballast", item: int = 0) -> None:
        """`target`, `lever` and `item` pre-fill the fields (the tuner's suggested fixes)."""
        super().__init__()
        self.setup = setup
        self._ascii_only = ascii_only
        self._start_target = target
        self._start_lever = lever if lever in LEVER_KINDS else "ballast"
        self._start_item = item if 0 <= item < len(setup.rig.ballast) else 0
        self.result: Optional[Plan] = None
        self._generation = 0
        self._settle: Optional[Timer] = None
        self._accept_when_ready = False

    # ---- layout -------------------------------------------------------------------------------

    def _deg(self) -> str:
        ascii_only = self._ascii_only
        if ascii_only is None:
            ascii_only = bool(getattr(self.app, "ascii_only", False))
        return " deg" if ascii_only else "°"

    def _defaults(self) -> tuple[str, float]:
        """A first target a builder would likely ask for: push the handover (or balance) up 2°."""
        from slopetune.engine import analyse

        if self._start_target is not None:
            return self._start_target.angle, self._start_target.value_deg

        a = analyse(self.setup, [self.setup.terrain.slope_deg])
        name = "handover" if a.overdrive.overdriven_axle is not None else "balance"
        now = angle_value_deg(a, name)
        return name, float(round(now + 2.0)) if math.isfinite(now) else 10.0

    def compose(self) -> ComposeResult:
        rig = self.setup.rig
        angle, value = self._defaults()
        angles = list(ANGLE_CHOICES.items())
        lever = self._start_lever
        lo, hi = default_limits(lever, self.setup)
        op = self._start_target.op if self._start_target is not None else ">="
        items = [(str(i), f"{i + 1}: {one_line(b.name)}") for i, b in enumerate(rig.ballast)] or [("-1", "no ballast items")]
        with Vertical(id="plan-box"):
            yield Static("Plan a change: what reaches a target angle", id="plan-title")
            with Horizontal(classes="p-row"):
                yield Static("Target", classes="p-label")
                yield Choice(angles, [k for k, _ in angles].index(angle), id="p-angle", classes="p-choice")
                yield Choice([(">=", "at least"), ("<=", "at most")], [">=", "<="].index(op), id="p-op",
                             classes="p-op")
                yield Input(_fmt(value), id="p-value", compact=True, classes="p-input")
                yield Static(self._deg().strip(), classes="p-unit")
            with Horizontal(classes="p-row"):
                yield Static("Lever", classes="p-label")
                yield Choice([(k, LEVER_WORDS[k]) for k in LEVER_KINDS], LEVER_KINDS.index(lever), id="p-lever",
                             classes="p-choice -wide")
            with Horizontal(classes="p-row", id="p-place"):
                yield Static("at x", classes="p-small")
                yield Input(_fmt(rig.wheelbase_mm), id="p-x", compact=True, classes="p-input")
                yield Static("mm  z", classes="p-small")
                yield Input(_fmt(round(rig.tire_dia_front_mm / 2.0, 1)), id="p-z", compact=True, classes="p-input")
                yield Static("mm", classes="p-unit")
            with Horizontal(classes="p-row", id="p-which"):
                yield Static("item", classes="p-small")
                yield Choice(items, self._start_item if rig.ballast else 0, id="p-item", classes="p-choice -wide")
            with Horizontal(classes="p-row"):
                yield Static("limits", classes="p-small")
                yield Input(_fmt(lo), id="p-min", compact=True, classes="p-input")
                yield Static("to", classes="p-small -to")
                yield Input(_fmt(hi), id="p-max", compact=True, classes="p-input")
                yield Static("g", id="p-limit-unit", classes="p-unit")
            yield Static("", id="p-answer")
            yield Static("", id="p-preview")
            yield Static(KEYS, id="plan-keys")

    def on_mount(self) -> None:
        self._show_lever_fields(self._start_lever)
        self.query_one("#p-value", Input).focus()
        self._schedule()

    # ---- reading the fields -------------------------------------------------------------------

    def _text(self, field_id: str) -> str:
        return self.query_one(f"#{field_id}", Input).value

    def _target(self) -> Target:
        angle = self.query_one("#p-angle", Choice).value
        op = self.query_one("#p-op", Choice).value
        value = _num(self._text("p-value"), "target")
        if not -90.0 <= value <= 90.0:
            raise FieldProblem("target: must be within -90 to 90 degrees")
        return Target(angle, op, value)

    def _lever(self):
        kind = self.query_one("#p-lever", Choice).value
        lo = _num(self._text("p-min"), "min")
        hi = _num(self._text("p-max"), "max")
        if kind == "ballast":
            return AddBallast(_num(self._text("p-x"), "x"), _num(self._text("p-z"), "z"), lo, hi)
        if kind == "move":
            index = int(self.query_one("#p-item", Choice).value)
            if index < 0:
                raise FieldProblem("this setup has no ballast items to move")
            return MoveBallast(index, lo, hi)
        if kind == "cg-height":
            return CgHeight(lo, hi)
        if kind == "overdrive":
            return Overdrive(lo, hi)
        return Compound(lo, hi)

    def _show_lever_fields(self, kind: str) -> None:
        self.query_one("#p-place").display = kind == "ballast"
        self.query_one("#p-which").display = kind == "move"
        self.query_one("#p-limit-unit", Static).update(LIMIT_UNITS[kind])

    # ---- planning -----------------------------------------------------------------------------

    def _schedule(self) -> None:
        """Start a goal seek once typing settles; older answers are marked stale at once."""
        self._generation += 1
        self.result = None
        self.query_one("#p-answer", Static).update("working ...")
        if self._settle is not None:
            self._settle.stop()
        self._settle = self.set_timer(SETTLE_S, self._start)

    def _start(self) -> None:
        self._settle = None
        try:
            target, lever = self._target(), self._lever()
        except (FieldProblem, LeverError) as exc:
            self._show_problem(str(exc))
            return
        self._seek(self._generation, target, lever)

    @work(thread=True, exclusive=True, group="plan")
    def _seek(self, generation: int, target: Target, lever) -> None:
        try:
            result, problem = plan(self.setup, target, lever), None
        except LeverError as exc:
            result, problem = None, str(exc)
        self.post_message(self.Planned(generation, result, problem))

    @on(Planned)
    def _planned(self, message: Planned) -> None:
        """A goal seek came back: show it unless the fields changed since it started."""
        if message.generation != self._generation:
            return
        if message.problem:
            self._show_problem(message.problem)
            return
        self.result = message.result
        self._show_result(message.result)
        if self._accept_when_ready:
            self._accept_when_ready = False
            self.action_accept()

    def _show_problem(self, problem: str) -> None:
        self.result = None
        self._accept_when_ready = False
        answer = self.query_one("#p-answer", Static)
        answer.update(problem)
        answer.set_class(True, "-bad")
        self.query_one("#p-preview", Static).update("")

    def _show_result(self, p: Plan) -> None:
        d = self._deg()
        name = p.target.angle
        before, after = angle_words(p.before, name, d), angle_words(p.after, name, d)
        goal = f"target {p.target.op} {p.target.value_deg:g}{d}"
        if p.already_met:
            lines = [f"Already met: {name} is {before} ({goal}). Enter keeps the setup."]
        elif p.reached:
            cost = f"   cost {p.added_mass_g:+.1f} g" if p.added_mass_g else ""
            lines = [short_change(p), f"{name} {before} -> {after} ({goal}){cost}"]
        else:
            if math.isnan(p.angle_after_deg) and name.startswith("handover"):
                why = "no overdriven axle, so no handover at any value: try the overdrive lever"
            elif p.insensitive:
                why = f"{name} does not change with this lever"
            elif p.value == p.start_value:
                why = f"Best is no change: this lever only moves {name} the other way"
            else:
                change = short_change(p)
                why = f"Best: {change[0].lower()}{change[1:]} -> {name} {after}"
            lines = [f"Cannot reach {name} {p.target.op} {p.target.value_deg:g}{d} within the limits.", why]
        answer = self.query_one("#p-answer", Static)
        answer.update("\n".join(lines))
        answer.set_class(not p.reached, "-bad")
        wide = max(len(label) for label in ANGLE_LABELS.values()) + 1  # the longest label sets the column
        rows = [f"{'angle':<{wide + 1}}{'before':>10}{'after':>12}{'change':>10}"]
        moved = p.moved_deg()
        for key, label in ANGLE_LABELS.items():
            delta = moved.get(key)
            mark = "*" if key == name else " "
            change = "" if delta is None else f"{delta:+.2f}"
            rows.append(f"{mark}{label:<{wide}}{angle_words(p.before, key, ''):>10}"
                        f"{angle_words(p.after, key, ''):>12}{change:>10}")
        self.query_one("#p-preview", Static).update("\n".join(rows))

    # ---- events -------------------------------------------------------------------------------

    @on(Input.Changed)
    def _typed(self) -> None:
        """A number changed: plan again once typing settles."""
        self._schedule()

    @on(Input.Submitted)
    def _submitted(self) -> None:
        """Enter in a field accepts, as it does everywhere on this screen."""
        self.action_accept()

    @on(Choice.Changed, "#p-lever")
    def _lever_changed(self, event: Choice.Changed) -> None:
        """Another lever: show its fields and its default limits."""
        self._show_lever_fields(event.value)
        lo, hi = default_limits(event.value, self.setup)
        with self.prevent(Input.Changed):
            self.query_one("#p-min", Input).value = _fmt(lo)
            self.query_one("#p-max", Input).value = _fmt(hi)
        self._schedule()

    @on(Choice.Changed, "#p-angle, #p-op, #p-item")
    def _choice_changed(self) -> None:
        """Another target angle, comparison or item: plan again."""
        self._schedule()

    def action_accept(self) -> None:
        if self.result is None:
            # still working (or the fields have a problem): accept when a reached answer arrives
            self._accept_when_ready = self._settle is not None or self.workers_running()
            return
        if self.result.reached:
            self.dismiss(self.result.setup)

    def workers_running(self) -> bool:
        return any(w.group == "plan" and w.is_running for w in self.workers)

    def action_discard(self) -> None:
        self.dismiss(None)
