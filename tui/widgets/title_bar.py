"""The top line: program, setup name, file, the unsaved marker (a word, not only a colour) and units."""

from __future__ import annotations

from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget
from slopetune.engine.safe_text import one_line


class TitleBar(Widget):
    """Repaints only when one of its own reactives changes, never with the rest of the screen."""

    COMPONENT_CLASSES = {"title-bar--unsaved", "title-bar--right"}

    setup_name: reactive[str] = reactive("")
    file_label: reactive[str] = reactive("")
    unsaved: reactive[bool] = reactive(False)
    right: reactive[str] = reactive("")

    def __init__(self, setup_name: str = "", file_label: str = "", unsaved: bool = False, right: str = "",
                 *, id: str | None = None) -> None:
        super().__init__(id=id)
        # in the first frame already: set before mounting, nothing to repaint yet
        self.set_reactive(TitleBar.setup_name, setup_name)
        self.set_reactive(TitleBar.file_label, file_label)
        self.set_reactive(TitleBar.unsaved, unsaved)
        self.set_reactive(TitleBar.right, right)

    def show(self, setup_name: str, file_label: str, unsaved: bool, right: str) -> None:
        """New words; each reactive repaints the line only if it changed."""
        self.setup_name, self.file_label, self.unsaved, self.right = setup_name, file_label, unsaved, right

    def render(self) -> Text:
        width = self.size.width
        right = Text(self.right, self.get_component_rich_style("title-bar--right"))
        room = max(width - right.cell_len - 1, 1)
        marker = "* UNSAVED " if self.unsaved else ""
        # the program's name goes first when the line is short; the setup name is cropped last
        # names come from files: control and bidi characters are spelled out, never sent raw
        name, label = one_line(self.setup_name), one_line(self.file_label)
        words = f"slopetune | {label} | {name}"
        if len(marker) + len(words) > room:
            words = f"{label} | {name}"
        left = Text(no_wrap=True, overflow="crop")
        if marker:
            left.append(marker, self.get_component_rich_style("title-bar--unsaved"))
        left.append(_fit(words, room - len(marker), "..." if getattr(self.app, "ascii_only", False) else "\u2026"))
        left.truncate(room, overflow="crop", pad=True)
        left.append(" ")
        left.append_text(right)
        return left


def _fit(words: str, room: int, ellipsis: str = "\u2026") -> str:
    """`words` in `room` cells: cut at the last whole word, with an ellipsis to show the cut."""
    if len(words) <= room:
        return words
    if room <= 1:
        return words[:max(room, 0)]
    cut = words[:max(room - len(ellipsis), 1)]
    space = len(cut) if words[len(cut)] == " " else cut.rfind(" ")
    if space >= room // 2:  # end after the last whole word, not mid-word
        cut = cut[:space]
    return cut.rstrip(" |,-") + ellipsis
