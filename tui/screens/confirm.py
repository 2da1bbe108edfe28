"""A yes/no question: `y`/`n` keys or two buttons; Enter presses the focused button.

An optional third answer (its key is the first letter of its label, e.g. `s` for "Save and
quit") dismisses with the string "other".
"""

from __future__ import annotations

from functools import partial

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.content import Content
from textual.screen import ModalScreen
from textual.widgets import Button, Static
from slopetune.engine.safe_text import one_line

# Words from files and setups may hold brackets: never read them as markup.
Plain = partial(Static, markup=False)


class ConfirmScreen(ModalScreen["bool | str"]):
    """Ask one question; dismiss with True (yes), False (no) or "other" (the optional third answer).

    "No" holds the focus at first, so a stray Enter never discards or overwrites anything.
    """

    CSS_PATH = "confirm.tcss"
    BINDINGS = [
        Binding("y", "answer(True)", "Yes", id="confirm.yes"),
        Binding("n", "answer(False)", "No", id="confirm.no"),
        Binding("escape", "answer(False)", "No", show=False, id="confirm.cancel"),
        Binding("left,right", "switch_button", "Other button", show=False, id="confirm.switch"),
    ]

    def __init__(self, question: str, yes_label: str = "Yes", no_label: str = "No",
                 other_label: str | None = None) -> None:
        super().__init__()
        self.question = question
        self.yes_label = yes_label
        self.no_label = no_label
        self.other_label = other_label
        self.other_key = other_label[0].lower() if other_label else None

    def compose(self) -> ComposeResult:
        with Vertical(id="confirm-box"):
            yield Plain(one_line(self.question), id="confirm-question")
            with Horizontal(id="confirm-buttons"):
                if self.other_label:
                    yield Button(Content(f"{self.other_label} ({self.other_key})"), id="confirm-other", compact=True)
                yield Button(Content(f"{self.yes_label} (y)"), id="confirm-yes", compact=True)
                yield Button(Content(f"{self.no_label} (n)"), id="confirm-no", compact=True)

    def on_mount(self) -> None:
        self.set_class(bool(getattr(self.app, "ascii_only", False)), "-ascii")
        self.query_one("#confirm-no", Button).focus()

    @on(Button.Pressed, "#confirm-yes")
    def _yes(self) -> None:
        """The yes button was pressed."""
        self.dismiss(True)

    @on(Button.Pressed, "#confirm-no")
    def _no(self) -> None:
        """The no button was pressed."""
        self.dismiss(False)

    @on(Button.Pressed, "#confirm-other")
    def _other(self) -> None:
        """The third button was pressed."""
        self.dismiss("other")

    def on_key(self, event) -> None:
        """The third answer's letter."""
        if self.other_key and event.character == self.other_key:
            event.stop()
            self.dismiss("other")

    def action_answer(self, answer: bool) -> None:
        self.dismiss(answer)

    def action_switch_button(self) -> None:
        buttons = list(self.query(Button))
        focused = next((i for i, b in enumerate(buttons) if b.has_focus), -1)
        buttons[(focused + 1) % len(buttons)].focus()
