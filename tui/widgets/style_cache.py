"""A widget's Rich styles (its own and its component classes'), kept until it is restyled.

Textual drops a widget's style cache on every refresh, so a widget that repaints a few lines per
key would work its styles out again per key (a walk up the DOM for each). Whatever restyles a
widget (a theme change, a class or pseudo-class on it or an ancestor, new component styles) ends
in a full refresh of it, with no regions: the widget calls `invalidate()` then, and only then.
"""

from __future__ import annotations

from rich.style import Style
from textual.widget import Widget


class StyleCache:
    """`styles()` -> ({component name: Rich style}, the widget's own Rich style)."""

    def __init__(self, widget: Widget, prefix: str, names: tuple[str, ...], partial: bool) -> None:
        self.widget, self.partial = widget, partial
        self.names = names
        self._classes = tuple(f"{prefix}--{name}" for name in names)
        self._value: tuple[dict[str, Style], Style] = ({}, Style())
        self._stale = True
        self.version = 0  # counts the times the styles were worked out: a key for caches built on them

    def invalidate(self) -> None:
        self._stale = True

    def styles(self) -> tuple[dict[str, Style], Style]:
        if self._stale:
            w = self.widget
            components = {name: w.get_component_rich_style(c, partial=self.partial)
                          for name, c in zip(self.names, self._classes)}
            value = (components, w.rich_style)
            self._stale = False
            if value != self._value:
                self._value = value
                self.version += 1
        return self._value
