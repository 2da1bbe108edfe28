"""One of a few options in one cell row, stepped with Left/Right or a click (the planner's target and
lever, the measuring screen's axle and facing).

Drawn as `< option >` in plain characters, so it reads the same on a Linux console.
"""

from __future__ import annotations

from textual import events
from textual.binding import Binding
from textual.message import Message
from textual.reactive import reactive
from textual.widgets import Static


class Choice(Static, can_focus=True):
    """One of a few options, stepped with Left/Right (or a click); posts `Changed`."""

    BINDINGS = [
        Binding("left", "step(-1)", "Previous", show=False, id="plan.choice.previous"),
        Binding("right", "step(1)", "Next", show=False, id="plan.choice.next"),
    ]

    index = reactive(0, init=False)

    class Changed(Message):
        """The chosen option changed."""

        def __init__(self, choice: "Choice", value: str) -> None:
            super().__init__()
            self.choice = choice
            self.value = value

        @property
        def control(self) -> "Choice":
            return self.choice

    def __init__(self, options: list[tuple[str, str]], index: int = 0, **kwargs) -> None:
        super().__init__(**kwargs)
        self.options = list(options)
        self.set_reactive(Choice.index, index)

    @property
    def value(self) -> str:
        return self.options[self.index][0]

    def render(self) -> str:
        return f"< {self.options[self.index][1]} >"

    def watch_index(self) -> None:
        self.post_message(self.Changed(self, self.value))

    def action_step(self, delta: int) -> None:
        self.index = (self.index + delta) % len(self.options)

    def on_click(self, event: events.Click) -> None:
        """A click steps on: the left arrow's cells step back, the rest forward."""
        self.focus()
        self.action_step(-1 if event.x <= 1 else 1)
