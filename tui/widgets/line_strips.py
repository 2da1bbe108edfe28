"""Lines of text as Textual strips, and which cells of a line changed.

Textual repaints and re-sends every cell of the regions a widget marks as changed; a step that
moves the chart's slope marker by one column changes two cells per line, not the whole line.
"""

from __future__ import annotations

from typing import Optional

from rich.segment import Segment
from rich.style import Style
from rich.text import Text
from textual.geometry import Region
from textual.strip import Strip


def text_strip(text: Text, width: int, base: Style, console) -> Strip:
    """One line of `text` as a strip exactly `width` cells wide, on the widget's `base` style.

    The text's own style goes under its spans, as when Textual draws a whole text (rich's
    `Text.render` alone leaves it out of a text without spans).
    """
    own = text.style if isinstance(text.style, Style) else Style.parse(text.style) if text.style else Style()
    if text.cell_len > width:
        text = text.copy()
        text.truncate(width, overflow="crop")
    if text.spans:
        line = text.copy()
        line.style = base + own
        segments = list(line.render(console, end=""))
    else:
        segments = [Segment(text.plain, base + own)]
    pad = width - text.cell_len
    if pad > 0:
        segments.append(Segment(" " * pad, base))  # past the text: the widget's own style only
    return Strip(segments, width)


def _cell_styles(text: Text) -> list[tuple]:
    """The spans' styles on each character, in the order they apply."""
    styles: list[tuple] = [()] * len(text.plain)
    for span in text.spans:
        for i in range(span.start, min(span.end, len(styles))):
            styles[i] = styles[i] + (span.style,)
    return styles


def changed_regions(old: list[Text], new: list[Text]) -> list[Region]:
    """One region per line of `new` that differs from the same line of `old`, the changed cells only."""
    regions = []
    for y, (was, now) in enumerate(zip(old, new)):
        if was is not now:
            cells = changed_cells(was, now)
            if cells is not None:
                regions.append(Region(cells[0], y, cells[1] - cells[0], 1))
    return regions


def changed_cells(old: Text, new: Text) -> Optional[tuple[int, int]]:
    """(first, end) cell columns where `new` differs from `old`, or None when they look the same.

    One cell per character is assumed only where it holds (no wide characters); otherwise the
    whole line counts as changed.
    """
    a, b = old.plain, new.plain
    same_styles = old.spans == new.spans and old.style == new.style
    if a == b and same_styles:
        return None
    width = max(old.cell_len, new.cell_len)
    if old.style != new.style or len(a) != old.cell_len or len(b) != new.cell_len:
        return 0, width
    if same_styles and len(a) == len(b):
        cells_a, cells_b, blank = a, b, " "
    else:
        cells_a = list(zip(a, _cell_styles(old)))
        cells_b = list(zip(b, _cell_styles(new)))
        blank = (" ", ())
    # cell by cell at the same column: past its end a line is blank on screen
    n = max(len(cells_a), len(cells_b))
    cells_a = list(cells_a) + [blank] * (n - len(cells_a))
    cells_b = list(cells_b) + [blank] * (n - len(cells_b))
    changed = [i for i in range(n) if cells_a[i] != cells_b[i]]
    if not changed:
        return None  # the same cells, the spans only split differently
    return changed[0], changed[-1] + 1
