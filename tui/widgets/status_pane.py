"""The flag line and the status words under the chart.

Both widgets repaint only what changed: they draw line by line (Textual's line API) from strips
made once per changed line and mark only the changed cells for repainting, so stepping a value
that does not move the words costs no bytes on the link.
"""

from __future__ import annotations

from typing import Optional

from rich.segment import Segment
from rich.text import Text
from textual.geometry import Region, Size
from textual.strip import Strip
from textual.widget import Widget

from ..status_words import StatusView
from .line_strips import changed_cells, changed_regions, text_strip
from .style_cache import StyleCache


def _wrapped(text: Text, width: int, console) -> list[Text]:
    """`text` as screen lines `width` wide; rich's word wrap only when a line is too long."""
    lines = text.split("\n", allow_blank=True)
    if all(line.cell_len <= width for line in lines):
        return list(lines)
    return list(text.wrap(console, max(width, 1)))


class FlagLine(Widget):
    """One highlighted line: OK, SLIP FLAG or STOP, in words as well as colour.

    Until the first analysis it says so, on a plain background ("wait"), so no colour claims
    anything yet. A new level restyles the line (its class); new words repaint only the cells that
    changed (usually the slope's digits).
    """

    def __init__(self, words: str = "", *, id: Optional[str] = None) -> None:
        super().__init__(id=id, classes="-wait")
        self.level = "wait"
        self.words = words
        self._style_cache = StyleCache(self, "flag-line", (), partial=False)
        self._strip_key: Optional[tuple] = None
        self._strip = Strip([])

    def refresh(self, *regions: Region, **kwargs) -> Widget:
        if not regions and hasattr(self, "_style_cache"):
            self._style_cache.invalidate()  # a full refresh: perhaps restyled (see StyleCache)
        return super().refresh(*regions, **kwargs)

    def show(self, level: str, words: str) -> None:
        if level != self.level:
            self.remove_class(f"-{self.level}")
            self.add_class(f"-{level}")
            self.level = level
        if words != self.words:
            cells = changed_cells(Text(self.words), Text(words))
            self.words = words
            if cells is not None and self.is_mounted:
                self.refresh(Region(cells[0], 0, cells[1] - cells[0], 1))

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        base = self._style_cache.styles()[1]
        if y > 0:
            return Strip.blank(width, base)
        key = (self.words, width, self._style_cache.version)
        if key != self._strip_key:
            self._strip = Strip([Segment(self.words)]).crop_extend(0, width, None).apply_style(base)
            self._strip_key = key
        return self._strip

    def render(self) -> Text:
        return Text(self.words, no_wrap=True, overflow="crop")


class StatusPane(Widget):
    """The plain-words status at the setup's slope, the baseline comparison, the suggested fixes
    and one note line.

    Its height is fixed (the stylesheet's), so the chart above keeps its size and scale while
    lines come and go; when the words do not fit, the status lines go from the last up (the note,
    the fixes and the comparison stay). Not reactives: a step that changes the words repaints the
    lines that changed alone. To show more facts, add them to `StatusView.lines` (in the order they
    should survive) or a part to `_parts`.
    """

    COMPONENT_CLASSES = {"status-pane--compare", "status-pane--note", "status-pane--error", "status-pane--fixes"}

    def __init__(self, note: tuple[str, str] = ("", "info"), *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self._view: Optional[StatusView] = None
        self._note = note
        self._fixes = ""
        self._style_cache = StyleCache(self, "status-pane", ("compare", "note", "error", "fixes"), partial=False)
        self._lines_key = None  # (view, note, width, styles version) that `_lines` were wrapped for
        self._lines: list[Text] = []  # the words wrapped to the width, as on screen
        self._strips: list[Optional[Strip]] = []

    def refresh(self, *regions: Region, **kwargs) -> Widget:
        if not regions and hasattr(self, "_style_cache"):
            self._style_cache.invalidate()  # a full refresh: perhaps restyled (see StyleCache)
        return super().refresh(*regions, **kwargs)

    @property
    def view(self) -> Optional[StatusView]:
        return self._view

    @view.setter
    def view(self, view: Optional[StatusView]) -> None:
        if view != self._view:
            self._view = view
            self._changed()

    @property
    def fixes(self) -> str:
        """One line of suggested changes for the current verdict ("" for none)."""
        return self._fixes

    @fixes.setter
    def fixes(self, words: str) -> None:
        if words != self._fixes:
            self._fixes = words
            self._changed()

    @property
    def note(self) -> tuple[str, str]:
        return self._note

    @note.setter
    def note(self, note: tuple[str, str]) -> None:
        if note != self._note:
            self._note = note
            self._changed()

    def _parts(self) -> list[tuple[int, Text]]:
        """(priority, text) of each part, in screen order; the lowest priority goes first when the
        pane is too short: status lines from the last up, then the comparison."""
        styles = self._style_cache.styles()[0]
        parts: list[tuple[int, Text]] = []
        if self._view is not None:
            count = len(self._view.lines)
            parts += [(count - i, Text(line)) for i, line in enumerate(self._view.lines)]
            if self._view.compare:
                parts.append((count + 1, Text(self._view.compare, styles["compare"])))
        if self._fixes:
            parts.append((1000, Text(self._fixes, styles["fixes"])))
        words, severity = self._note
        if words:
            parts.append((1001, Text(words, styles["error" if severity == "error" else "note"])))
        return parts

    def _fitted(self, width: int, height: int) -> list[Text]:
        """Every part wrapped to `width`; parts dropped by priority until they fit `height` lines."""
        wrapped = [(p, _wrapped(text, width, self.app.console)) for p, text in self._parts()]
        total = sum(len(lines) for _p, lines in wrapped)
        for p in sorted(p for p, _lines in wrapped):
            if total <= height or height <= 0:
                break
            i = next(i for i, (q, _l) in enumerate(wrapped) if q == p)
            total -= len(wrapped[i][1])
            del wrapped[i]
        lines = [line for _p, group in wrapped for line in group]
        return lines[-height:] if height > 0 and len(lines) > height else lines

    def _wrap(self, width: int) -> None:
        """Wrap the words to `width`; keep the strips of the lines that did not change."""
        self._style_cache.styles()
        height = self.size.height if self.is_mounted else 0
        key = (self._view, self._note, self._fixes, width, height, self._style_cache.version)
        if key == self._lines_key:
            return
        old, old_strips = self._lines, self._strips
        same_width = self._lines_key is not None and self._lines_key[3:] == key[3:]
        lines = self._fitted(width, height)
        self._strips = [old_strips[y] if same_width and y < len(old) and old[y] == line else None
                        for y, line in enumerate(lines)]
        self._lines, self._lines_key = lines, key

    def _changed(self) -> None:
        """Repaint the lines whose words changed; a new layout only when the line count changes."""
        width = self.size.width
        if not width or not self.is_mounted:
            self.refresh(layout=True)
            return
        old = self._lines
        self._wrap(width)
        if len(old) != len(self._lines):
            self.refresh()  # the pane's height is fixed: no new layout, only its own lines
            return
        regions = changed_regions(old, self._lines)
        if regions:
            self.refresh(*regions)

    def get_content_height(self, container: Size, viewport: Size, width: int) -> int:
        self._wrap(width)
        return len(self._lines)

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        self._wrap(width)
        if y >= len(self._lines):
            return Strip.blank(width, self._style_cache.styles()[1])
        strip = self._strips[y]
        if strip is None:
            strip = text_strip(self._lines[y], width, self._style_cache.styles()[1], self.app.console)
            self._strips[y] = strip
        return strip

    def render(self) -> Text:
        """Every part, none dropped (what `render_line` shows when the pane is tall enough)."""
        return Text("\n").join(text for _p, text in self._parts())
