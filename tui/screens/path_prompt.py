"""Ask for a file path (save as, open as baseline): Enter accepts, Esc cancels."""

from __future__ import annotations

from functools import partial

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Static

# Words from files and setups may hold brackets: never read them as markup.
Plain = partial(Static, markup=False)

HINT = "Type a new path or an arrow key to edit this one; .toml is added"
KEYS = "Enter: OK   Esc: cancel"


class PathPromptScreen(ModalScreen[str | None]):
    """One input line; dismiss with the typed path (stripped) or None."""

    CSS_PATH = "path_prompt.tcss"
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="path_prompt.cancel")]

    def __init__(self, title: str, initial: str = "") -> None:
        super().__init__()
        self.title_text = title
        self.initial = initial

    def compose(self) -> ComposeResult:
        with Vertical(id="path-box"):
            yield Plain(self.title_text, id="path-title")
            # the offered path is selected: typing replaces it, an arrow key keeps it to edit
            yield Input(self.initial, id="path-input", compact=True, select_on_focus=True)
            yield Plain("", id="path-problem")
            yield Plain(HINT, id="path-hint")
            yield Plain(KEYS, id="path-keys")

    def on_mount(self) -> None:
        self.set_class(bool(getattr(self.app, "ascii_only", False)), "-ascii")
        self.query_one("#path-input", Input).focus()

    @on(Input.Submitted, "#path-input")
    def _submit(self, event: Input.Submitted) -> None:
        """Enter in the input: hand back the path unless it is blank."""
        text = event.value.strip()
        if not text:
            self.query_one("#path-problem", Static).update("Type a path, or Esc to cancel.")
            return
        self.dismiss(text)

    @on(Input.Changed, "#path-input")
    def _clear_problem(self) -> None:
        """Typing clears an earlier complaint."""
        self.query_one("#path-problem", Static).update("")

    def action_cancel(self) -> None:
        self.dismiss(None)
