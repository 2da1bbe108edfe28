"""The tuner's modal screens: each is imported when first used and hands its answer back.

A mixin of `SlopeTuneApp`: help, measuring, the course view and the planner, plus the yes/no
question every other action asks through `_ask`.
"""

from __future__ import annotations

import importlib
from typing import Callable, Optional

from slopetune.engine import Setup


class ScreenActions:
    """Pushing the tuner's modal screens for `SlopeTuneApp`."""

    def _screen_class(self, module: str, name: str):
        try:
            mod = importlib.import_module(module)
        except ModuleNotFoundError as exc:
            if exc.name and module.startswith(exc.name):
                return None
            raise
        return getattr(mod, name, None)

    def _ask(self, question: str, yes: str, no: str, then: Callable[[], None], *,
             otherwise: Optional[Callable[[], None]] = None,
             other: Optional[tuple[str, Callable[[], None]]] = None) -> None:
        """Ask a question; run `then` on yes, `otherwise` on no or Esc, `other[1]` on the third answer."""
        confirm = self._screen_class("slopetune.tui.screens.confirm", "ConfirmScreen")
        if confirm is None:
            self._note(f"{question} (no confirm screen in this build: not done)", "error")
            return

        def answered(answer) -> None:
            if answer == "other" and other is not None:
                other[1]()
            elif answer is True:
                then()
            elif otherwise is not None:
                otherwise()

        self.push_screen(confirm(question, yes_label=yes, no_label=no,
                                 other_label=other[0] if other else None), answered)

    def _push(self, module: str, name: str, make: Callable, then: Optional[Callable] = None,
              what: str = "that screen") -> None:
        cls = self._screen_class(module, name)
        if cls is None:
            self._note(f"{what} is not in this build", "error")
            return
        self.push_screen(make(cls), then)

    def action_help(self) -> None:
        """Keys, what the chart and flags mean, and the cautions."""
        from .screens.help import binding_rows

        rows = binding_rows(self.screen)  # now, while the keys' own screen is the active one
        self._push("slopetune.tui.screens.help", "HelpScreen", lambda cls: cls(ascii_only=self.ascii_only, rows=rows),
                   None, "help")

    def action_measure(self) -> None:
        """Turn scale readings into front bias, CG height and mu."""
        def apply(values: Optional[dict]) -> None:
            if not values:
                return
            from slopetune.engine import check_value

            setup, refused = self.setup, []
            for key, value in values.items():
                problem = check_value(setup, key, value)
                if problem:
                    refused.append(f"{key}: {problem}")
                else:
                    setup = setup.with_value(key, value)
            self._replace_setup(setup, "; ".join(refused) if refused else
                                "Measured: " + ", ".join(f"{k.split('.')[-1]} {v:.3g}" for k, v in values.items()),
                                what="measurement applied")

        self._push("slopetune.tui.screens.measure", "MeasureScreen", lambda cls: cls(self.setup), apply, "measuring")

    def action_course(self) -> None:
        """Walk the rig over the setup's course (front and rear on different ground)."""
        self._push("slopetune.tui.course_screen", "CourseScreen", lambda cls: cls(self.setup, setup_path=self.path), None,
                   "the course view")

    def action_headings(self) -> None:
        """Tip, wheel lift and hold angle at every heading across a face; brings a new heading back."""
        def apply(setup: Optional[Setup]) -> None:
            if setup is not None:
                t = setup.terrain
                self._replace_setup(setup, f"Heading {t.heading_deg:g}, slope {t.slope_deg:g} from the headings screen",
                                    what="headings screen")

        self._push("slopetune.tui.headings_screen", "HeadingsScreen", lambda cls: cls(self.setup), apply,
                   "the headings screen")

    def action_plan(self, target=None, lever: str = "ballast", item: int = 0) -> None:
        """Let the planner suggest a setup; apply it if accepted (`target`, `lever`, `item` pre-fill it)."""
        before = self.setup

        def apply(setup: Optional[Setup]) -> None:
            if setup is None:
                return
            note = "Planned setup applied (not saved yet)"

            def with_baseline() -> None:
                # the setup before the plan becomes the baseline: the chart overlays it and the
                # status says how each named angle moved
                self._set_baseline(before, "before plan")
                self._replace_setup(setup, note + "; the setup before it is the baseline (x clears it)",
                                    what="plan accepted")

            if self.baseline is None or self.baseline.label == "before plan":
                with_baseline()
            else:
                self._ask(f"Replace the baseline ({self.baseline.label}) with the setup before the plan?",
                          "Replace", "Keep it", with_baseline,
                          otherwise=lambda: self._replace_setup(setup, note, what="plan accepted"))

        self._push("slopetune.tui.screens.plan", "PlanScreen",
                   lambda cls: cls(self.setup, target=target, lever=lever, item=item), apply, "the planner")
