"""The setup form: one row per setup key, stepped with the arrow keys or typed into.

The form keeps the setup it shows and updates it at once on every key, so a burst of steps always
starts from the latest value; each change goes up as `SetupForm.Edited`, and the new value is drawn
when the app has updated the words and the chart too (`show_changes`). What each key does to the
setup lives in `form_fields` (no widget code there); this module only draws rows and routes keys.
"""

from __future__ import annotations

from typing import ClassVar, NamedTuple, Optional

from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding, BindingType
from textual.geometry import Region, Size
from textual.message import Message
from textual.scroll_view import ScrollView
from textual.strip import Strip

from slopetune.engine import Setup
from slopetune.engine.safe_text import one_line

from . import form_fields as ff
from .line_strips import text_strip
from ..units import Units

EDIT_CHARS = set("0123456789.-+")
_FIELD_KEYS = Binding.Group("field", compact=True)
_STEP_KEYS = Binding.Group("step", compact=True)
MAX_TYPED = 80


class RowView(NamedTuple):
    """What one row shows; a row repaints only when this changes."""

    text: str
    value: str = ""
    unit: str = ""
    selected: bool = False
    editing: Optional[str] = None  # the typed text while editing
    fresh: bool = False  # the editing text is the old value: the first character typed replaces it
    inherited: bool = False
    error: Optional[str] = None
    hint: Optional[str] = None  # what the less obvious keys do here, under the selected row


class SetupForm(ScrollView, can_focus=True, inherit_bindings=False):
    """Every key of the setup; Up/Down choose a row, Left/Right step it, digits start typing.

    One widget draws every row line by line (Textual's line API): a step repaints only the lines
    of the rows whose text changed, and forty-odd rows cost no more memory than one widget.
    """

    COMPONENT_CLASSES = {"setup-form--heading", "setup-form--cursor", "setup-form--cursor-blurred",
                         "setup-form--value", "setup-form--inherited", "setup-form--edit",
                         "setup-form--error", "setup-form--hint", "setup-form--unit"}

    BINDINGS: ClassVar[list[BindingType]] = [
        Binding("up", "move(-1)", "Previous field", id="form.up", group=_FIELD_KEYS),
        Binding("down", "move(1)", "Next field", id="form.down", group=_FIELD_KEYS),
        Binding("left", "step(-1)", "Step value down", id="form.step_down", group=_STEP_KEYS),
        Binding("right", "step(1)", "Step value up", id="form.step_up", group=_STEP_KEYS),
        Binding("shift+left,left_square_bracket", f"step(-{ff.COARSE})", "Coarse step down",
                show=False, id="form.coarse_down"),
        Binding("shift+right,right_square_bracket", f"step({ff.COARSE})", "Coarse step up",
                show=False, id="form.coarse_up"),
        Binding("enter", "activate", "Type a value / add / toggle", show=False, id="form.activate"),
        Binding("delete,backspace", "remove", "Remove item / clear override", show=False, id="form.remove"),
        Binding("home", "jump(0)", "First field", show=False, id="form.first"),
        Binding("end", "jump(-1)", "Last field", show=False, id="form.last"),
        Binding("pageup", "page(-1)", "Previous section", show=False, id="form.page_up"),
        Binding("pagedown", "page(1)", "Next section", show=False, id="form.page_down"),
    ]

    class Edited(Message):
        """The form changed the setup (checked against the loader's rules); the handler should
        call `show_changes()` once it has updated the rest of the screen."""

        def __init__(self, setup: Setup, key: str, note: Optional[str] = None) -> None:
            super().__init__()
            self.setup, self.key, self.note = setup, key, note

    def __init__(self, setup: Setup, units: Units, *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self.setup = setup
        self.units = units
        self.rows: list[ff.Row] = ff.build_rows(setup)
        self.cursor = self._first_selectable(1)
        self.typed: Optional[str] = None
        self.fresh = False  # `typed` is the value as it was: typing replaces it, an arrow keeps it
        self.errors: dict[str, str] = {}
        self._views: list[RowView] = []
        self._heights: list[int] = []
        self._starts: list[int] = []  # first screen line of each row
        self._line_rows: list[tuple[int, int]] = []  # (row, line within the row) for each line
        self._strips: dict[tuple, Strip] = {}
        self._laid_width = 0  # the width the rows were last laid out for

    # ----- what the parent hands down

    def load(self, setup: Setup, units: Optional[Units] = None) -> None:
        """Show another setup (opened, measured, planned) or other units; keeps the cursor's key."""
        self.typed = None
        self.fresh = False
        self.errors.clear()
        if units is not None:
            self.units = units
        self._set_setup(setup)

    def on_mount(self) -> None:
        self._redraw(full=True)

    def on_resize(self) -> None:
        # the rows were laid out on mount for the CSS width: again only if the width differs
        self._redraw(full=self.size.width != self._laid_width)

    def on_click(self, event: events.Click) -> None:
        """A click puts the cursor on the row under the mouse."""
        line = event.y + int(self.scroll_offset.y)
        if 0 <= line < len(self._line_rows):
            row = self._line_rows[line][0]
            if self.rows[row].selectable:
                self._move_to(row)

    def refresh(self, *regions: Region, **kwargs) -> SetupForm:
        if not regions and hasattr(self, "_strips"):
            self._strips.clear()  # a full refresh: perhaps restyled (a theme), so draw rows anew
        return super().refresh(*regions, **kwargs)

    def on_focus(self) -> None:
        self._strips.clear()
        self.refresh()

    def on_blur(self) -> None:
        self._strips.clear()
        self.refresh()

    # ----- queries

    @property
    def row(self) -> ff.Row:
        return self.rows[self.cursor]

    def value_text(self, key: str) -> str:
        """The value shown for `key` (tests and the app's notes read it)."""
        for i, row in enumerate(self.rows):
            if row.key == key:
                return self._view(i).value
        raise KeyError(key)

    def error_for(self, key: str) -> Optional[str]:
        return self.errors.get(key)

    def focus_key(self, key: str) -> bool:
        """Put the cursor on the row of `key`; False if the form has no such row."""
        for i, row in enumerate(self.rows):
            if row.key == key and row.selectable:
                self._move_to(i)
                return True
        return False

    # ----- drawing

    def _view(self, i: int) -> RowView:
        row = self.rows[i]
        selected = i == self.cursor
        if not row.selectable and row.kind == "heading":
            return RowView(row.label)
        value, unit, inherited = ff.shown_value(self.setup, row, self.units)
        return RowView(row.label, value, unit, selected, self.typed if selected else None, selected and self.fresh,
                       inherited,
                       self.errors.get(row.key) if row.key else None,
                       ("typing replaces; Right keeps it to edit" if self.fresh else
                        ff.hint(row, inherited, self.typed is not None)) if selected else None)

    def _second(self, view: RowView) -> Optional[Text]:
        """The line under a row: the reason a value was refused (first), else the hint."""
        if view.error:
            return Text(f"! {one_line(view.error)}", self._part("setup-form--error"))
        if view.hint:
            return Text(view.hint, self._part("setup-form--hint"))
        return None

    def _second_lines(self, view: RowView, width: int) -> list[Text]:
        """The line under a row, wrapped: every line indented two cells under the row's label."""
        second = self._second(view)
        if second is None:
            return []
        return [Text("  ") + line for line in second.wrap(self.app.console, max(width - 2, 1))]

    def _height(self, view: RowView, width: int) -> int:
        return 1 + len(self._second_lines(view, width))

    def _redraw(self, full: bool = False) -> None:
        """Recompute every row's view; repaint the rows that changed (all when heights moved)."""
        if not self.is_attached:
            return
        width = self.size.width
        if not width:
            # on mount, before the first layout: lay the rows out for the CSS width, so the
            # first frame already shows them (the resize that follows redoes it if need be)
            css = self.styles.width
            width = int(css.value) if css is not None and css.is_cells else 30
        views = [self._view(i) for i in range(len(self.rows))]
        heights = [self._height(v, width) for v in views]
        old = self._views
        self._views = views
        if full or heights != self._heights or len(old) != len(views):
            self._heights = heights
            self._laid_width = width
            self._starts, self._line_rows, y = [], [], 0
            for i, h in enumerate(heights):
                self._starts.append(y)
                self._line_rows += [(i, k) for k in range(h)]
                y += h
            self._strips.clear()
            self.virtual_size = Size(width, y)
            self.refresh()
            return
        for i, (was, now) in enumerate(zip(old, views)):
            if was != now:
                self.refresh_lines(self._starts[i], heights[i])

    def _rebuild(self) -> None:
        self._redraw(full=True)
        self.call_after_refresh(self._scroll_to_cursor)

    def _scroll_to_cursor(self) -> None:
        if not self._starts or self.cursor >= len(self._starts):
            return
        # the row above the cursor too, so a heading stays in sight when moving up
        top = self._starts[max(self.cursor - 1, 0)]
        bottom = self._starts[self.cursor] + self._heights[self.cursor]
        self.scroll_to_region(Region(0, top, 1, bottom - top), animate=False, immediate=True)

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        line = y + int(self.scroll_offset.y)
        if line >= len(self._line_rows):
            return Strip.blank(width, self.rich_style)
        i, sub = self._line_rows[line]
        view = self._views[i]
        key = (view, sub, width)
        strip = self._strips.get(key)
        if strip is None:
            base = self.rich_style
            if view.selected:
                cursor = "setup-form--cursor" if self.has_focus else "setup-form--cursor-blurred"
                base = base + self.get_component_rich_style(cursor)
            if sub == 0:
                text = self._first_line(self.rows[i], view, width)
                text.truncate(width, overflow="crop")
            else:
                wrapped = self._second_lines(view, width)
                # a resize can draw before the rows are laid out again: a stale line is blank
                text = wrapped[sub - 1] if sub - 1 < len(wrapped) else Text("")
            strip = text_strip(text, width, base, self.app.console)
            if len(self._strips) > 400:
                self._strips.clear()
            self._strips[key] = strip
        return strip

    def _part(self, component: str) -> Style:
        """A component's own style only: the row's base (the cursor's background) shows through."""
        return self.get_component_rich_style(component, partial=True)

    def _first_line(self, row: ff.Row, v: RowView, width: int) -> Text:
        style = self._part
        if row.kind == "heading":
            rule = "-" if self.units.ascii_only else "\u2500"
            return Text(f"{rule * 2} {v.text} ".ljust(width, rule), style("setup-form--heading"))
        mark = ">" if v.selected else " "
        text = Text(no_wrap=True, overflow="crop")
        if row.kind in ("add_ballast", "add_stage"):
            text.append(f"{mark}{v.text}")
            return text
        label_w = 15 if width >= 28 else max(8, width // 2)
        if row.kind == "text":
            label_w = min(label_w, len(v.text) + 2)  # names and notes get the rest of the line
        text.append(f"{mark}{one_line(v.text)[:label_w - 1]:<{label_w - 1}} ")
        room = max(width - label_w - 1, 4)
        if v.editing is not None:
            editing = one_line(v.editing)  # file text: control and bidi characters spelled out
            # typed text shows its end (where the next key goes); the offered old value its start
            typed = (editing[:room - 1] if v.fresh else editing[-(room - 2):]) if room > 3 else editing
            # the old value, offered to be replaced, shows reversed (a selection) without colour too
            text.append(typed, style("setup-form--edit") + (Style(reverse=True) if v.fresh else Style()))
            text.append("_", style("setup-form--edit"))
        elif row.kind in ("text", "info"):
            value = one_line(v.value)
            shown = value if len(value) <= room else value[: max(room - 3, 1)] + "..."
            text.append(shown, style("setup-form--value"))
        elif row.kind not in ("number", "derived"):
            text.append(f"{v.value[:room]:>{room}}", style("setup-form--value"))
        else:
            unit = v.unit if v.unit in ("", "\u00b0") else f" {v.unit}"
            value_w = max(room - 4, 4)
            shown = f"={v.value}" if v.inherited else v.value
            muted = v.inherited or row.kind == "derived"  # not the user's own number
            text.append(f"{shown:>{value_w}}", style("setup-form--inherited" if muted else "setup-form--value"))
            text.append(unit, style("setup-form--unit"))
        return text

    # ----- changing the setup

    def show_changes(self) -> None:
        """Repaint the rows whose value changed; the app calls this with the rest of its update."""
        self._redraw()

    def _set_setup(self, setup: Setup, draw: bool = True) -> None:
        key = self.row.key if self.rows else ""
        same_shape = ff.shape(setup) == ff.shape(self.setup)
        self.setup = setup
        rows = self.rows if same_shape else ff.build_rows(setup)
        if rows != self.rows:
            self.rows = rows
            keys = [r.key for r in rows]
            self.cursor = keys.index(key) if key in keys and rows[keys.index(key)].selectable else min(
                self.cursor, len(rows) - 1)
            if not self.rows[self.cursor].selectable:
                self.cursor = self._next_selectable(self.cursor, 1)
            if self.is_mounted:
                self._rebuild()
        elif self.is_mounted and draw:
            self._redraw()

    def _apply(self, edit: ff.Edit) -> None:
        key = self.row.key or self.row.kind
        if edit.error:
            self.errors[key] = edit.error
            self._redraw()
            return
        self.errors.pop(key, None)
        if edit.setup == self.setup and not edit.note:
            self._redraw()
            return
        # The new value is drawn when the app has updated the words and the chart too
        # (`show_changes`), so one frame carries all three instead of two frames apart.
        self._set_setup(edit.setup, draw=False)
        self.post_message(self.Edited(edit.setup, key, edit.note))

    # ----- cursor

    def _first_selectable(self, direction: int) -> int:
        order = range(len(self.rows)) if direction > 0 else range(len(self.rows) - 1, -1, -1)
        return next(i for i in order if self.rows[i].selectable)

    def _next_selectable(self, start: int, direction: int) -> int:
        i = start + direction
        while 0 <= i < len(self.rows):
            if self.rows[i].selectable:
                return i
            i += direction
        return start if self.rows[start].selectable else self._first_selectable(direction)

    def _move_to(self, index: int) -> None:
        if index == self.cursor:
            return
        old = self.row.key
        self.errors.pop(old, None)
        self.cursor = index
        self._redraw()
        self._scroll_to_cursor()

    # ----- actions (bound keys)

    def action_move(self, direction: int) -> None:
        """Next or previous field."""
        self._move_to(self._next_selectable(self.cursor, direction))

    def action_jump(self, where: int) -> None:
        """First or last field."""
        self._move_to(self._first_selectable(1 if where == 0 else -1))

    def action_page(self, direction: int) -> None:
        """The next or previous section (Terrain, Rig, Ballast, Driveline, Grip, ...): its first field."""
        heads = [i for i, r in enumerate(self.rows) if r.kind == "heading"]
        starts = [self._next_selectable(h, 1) for h in heads]  # each section's first field
        if direction > 0:
            later = [(h, s) for h, s in zip(heads, starts) if s > self.cursor and h > self.cursor - 1]
            if not later:
                return
            head, target = later[0]
        else:
            earlier = [(h, s) for h, s in zip(heads, starts) if s < self.cursor]
            if not earlier:
                return
            head, target = earlier[-1]
        self._move_to(target)
        if self._starts and head < len(self._starts):
            # the section's heading on the top line: as much of the section in sight as fits
            self.call_after_refresh(self.scroll_to, y=self._starts[head], animate=False)

    def action_step(self, count: int) -> None:
        """Step the value by `count` fine steps."""
        self._apply(ff.step(self.setup, self.row, count))

    def action_activate(self) -> None:
        """Enter: type into a value, or do what the row says (add, toggle)."""
        row = self.row
        if row.kind in ("number", "text"):
            value, _unit, inherited = ff.shown_value(self.setup, row, self.units)
            self._start_typing("" if inherited else value, fresh=not inherited)
        else:
            self._apply(ff.activate(self.setup, row))

    def action_remove(self) -> None:
        """Remove a ballast item or gear stage, or clear a per-axle override."""
        row = self.row
        if row.optional:
            self._apply(ff.clear(self.setup, row))
        elif row.removable:
            self._apply(ff.remove(self.setup, row))

    # ----- typing

    def _start_typing(self, text: str, fresh: bool = False) -> None:
        self.typed = text
        self.fresh = fresh
        self.errors.pop(self.row.key, None)
        self._redraw()

    def _finish_typing(self, commit: bool) -> None:
        typed, self.typed = self.typed, None
        self.fresh = False
        if commit and typed is not None:
            self._apply(ff.set_typed(self.setup, self.row, typed, self.units))
        else:
            self._redraw()

    def on_key(self, event: events.Key) -> None:
        """While typing, keys go to the typed text; digits on a number row start typing."""
        if self.typed is None:
            if self.row.typeable and event.character and event.character in EDIT_CHARS:
                event.stop()
                event.prevent_default()
                self._start_typing(event.character)
            return
        key = event.key
        handled = True
        if key == "enter":
            self._finish_typing(commit=True)
        elif key == "escape":
            self._finish_typing(commit=False)
        elif key in ("up", "down", "tab"):
            self._finish_typing(commit=True)
            self.action_move(-1 if key == "up" else 1)
        elif key == "backspace":
            self.typed = "" if self.fresh else self.typed[:-1]
            self.fresh = False
            self._redraw()
        elif key in ("left", "right", "delete", "home", "end"):
            # no cursor inside the typed text: these keep the old value to edit (never step it)
            if self.fresh:
                self.fresh = False
                self._redraw()
        elif event.is_printable and event.character:
            if self.fresh:
                self.typed, self.fresh = "", False
            if len(self.typed) < MAX_TYPED:
                self.typed += event.character
                self._redraw()
        else:
            handled = False
        if handled:
            event.stop()
            event.prevent_default()
