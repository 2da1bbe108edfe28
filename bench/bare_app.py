"""The yardstick for bench_tuner.py: a bare Textual app whose one label the arrow keys step.

Run: python bench/bare_app.py   (Ctrl+Q quits)
"""

from __future__ import annotations

from textual.app import App, ComposeResult
from textual.binding import Binding
from textual.widgets import Label


class BareApp(App):
    """One label; Right/Up add one, Left/Down take one away."""

    BINDINGS = [
        Binding("right,up", "step(1)", "up one"),
        Binding("left,down", "step(-1)", "down one"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.value = 0

    def compose(self) -> ComposeResult:
        yield Label("bare value 0", id="value")

    def action_step(self, delta: int) -> None:
        self.value += delta
        self.query_one("#value", Label).update(f"bare value {self.value}")


if __name__ == "__main__":
    BareApp().run()
