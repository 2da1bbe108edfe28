"""The flag line and the status words under the chart.

Both widgets repaint only when what they show changes (reactives compare the new value first), so
stepping a value that does not move the words costs no bytes on the link.
"""

from __future__ import annotations

from typing import Optional

from rich.text import Text
from textual.geometry import Region
from textual.reactive import reactive
from textual.widget import Widget

from ..status_words import StatusView


class FlagLine(Widget):
    """One highlighted line: OK, SLIP FLAG or STOP, in words as well as colour."""

    level: reactive[str] = reactive("ok")
    words: reactive[str] = reactive("")

    def watch_level(self, old: str, new: str) -> None:
        self.remove_class(f"-{old}")
        self.add_class(f"-{new}")

    def show(self, level: str, words: str) -> None:
        self.level, self.words = level, words

    def render(self) -> Text:
        return Text(self.words, no_wrap=True, overflow="crop")


class StatusPane(Widget):
    """The plain-words status at the setup's slope, the baseline comparison and one note line.

    Not reactives: a new layout (the whole screen) is asked for only when the number of lines
    changes, so a step that changes the words repaints this pane alone.
    """

    COMPONENT_CLASSES = {"status-pane--compare", "status-pane--note", "status-pane--error"}

    def __init__(self, *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self._view: Optional[StatusView] = None
        self._note: tuple[str, str] = ("", "info")
        self._lines: Optional[list[Text]] = None  # what is on screen, wrapped, to find what changed

    @property
    def view(self) -> Optional[StatusView]:
        return self._view

    @view.setter
    def view(self, view: Optional[StatusView]) -> None:
        if view != self._view:
            self._view = view
            self._changed()

    @property
    def note(self) -> tuple[str, str]:
        return self._note

    @note.setter
    def note(self, note: tuple[str, str]) -> None:
        if note != self._note:
            self._note = note
            self._changed()

    def _wrapped(self) -> Optional[list[Text]]:
        width = self.size.width
        return list(self.render().wrap(self.app.console, width)) if width and self.is_mounted else None

    def _changed(self) -> None:
        """Repaint the lines whose words changed; a new layout only when the line count changes."""
        old, new = self._lines, self._wrapped()
        self._lines = new
        if old is None or new is None or len(old) != len(new):
            self.refresh(layout=True)
            return
        for y, (was, now) in enumerate(zip(old, new)):
            if was != now:
                self.refresh(Region(0, y, self.size.width, 1))

    def on_resize(self) -> None:
        self._lines = self._wrapped()

    def render(self) -> Text:
        text = Text()
        if self._view is not None:
            text.append("\n".join(self._view.lines))
            if self._view.compare:
                text.append("\n")
                text.append(self._view.compare, self.get_component_rich_style("status-pane--compare"))
        words, severity = self._note
        if words:
            style = "status-pane--error" if severity == "error" else "status-pane--note"
            text.append("\n" if text else "")
            text.append(words, self.get_component_rich_style(style))
        return text
