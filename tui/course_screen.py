"""The course view: the rig walked over a course, stepped with the arrow keys.

The course is the setup's own [course], or one picked from the course files of the setup's folder
and the current folder (`o`, or at once when the setup has none).

A side view of the terrain with the rig (wheels, chassis line, CG) at the current position, the
status words for that position, and the axle loads along the whole course as a chart with a
marker at the current position. Everything drawn is Latin-1, so it shows on a plain console
(`ascii_only` also folds plotext's box lines to ASCII).

The walk is computed once, in a worker thread, and handed down to the widgets; the arrow keys
only move an index. Each widget holds its own reactive index and draws lazily in `render()`,
the chart from a cache keyed on what it shows, so a held key never queues up chart builds.
"""

from __future__ import annotations

import math
from typing import ClassVar, Optional

import numpy as np
from rich.style import Style
from rich.text import Span, Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding, BindingType
from textual.message import Message
from textual.reactive import reactive
from textual.screen import Screen
from textual.widget import Widget
from textual.widgets import Static

from slopetune.engine import Setup, SetupError
from slopetune.engine.safe_text import one_line
from slopetune.engine.course_walk import CourseWalk, state_words, walk_course

from .widgets.load_chart import ASCII_FOLD, nice_step, restyle

STEP_MM = 5.0
FAR_STEPS = 10
VIEW_WHEELBASES = 2.6  # horizontal span of the side view
KEYS_LINE = "Left/Right step  PgUp/PgDn x10  Home/End  n/p event  o course  Esc/q close"


def _deg(ascii_only: bool) -> str:
    return " deg" if ascii_only else "\u00b0"


def _num(x, digits=0, unit="") -> str:
    return "-" if x is None or not math.isfinite(x) else f"{round(float(x), digits) + 0.0:.{digits}f}{unit}"


# ----- side view ------------------------------------------------------------------------------

class SideView(Widget):
    """Terrain and rig seen from the side, centred on the rig, drawn with Latin-1 characters."""

    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "side-view--ground", "side-view--surface", "side-view--rig", "side-view--wheel", "side-view--touch",
    }
    index: reactive[int] = reactive(0)

    def __init__(self, *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self.walk: Optional[CourseWalk] = None

    def show(self, walk: CourseWalk) -> None:
        self.walk = walk
        self.refresh()

    def render(self) -> Text:
        width, height = self.size
        if self.walk is None or width < 10 or height < 3:
            return Text("")
        grid, tags = draw_side_view(self.walk, self.index, width, height)
        styles = {tag: self.get_component_rich_style(f"side-view--{tag}", partial=True)
                  for tag in ("ground", "surface", "rig", "wheel", "touch")}
        return _styled_grid(grid, tags, styles)


def _styled_grid(grid: list[list[str]], tags: list[list[str]], styles: dict[str, Style]) -> Text:
    """One Text from character and tag grids, one span per run of equal tags."""
    out = Text(no_wrap=True, overflow="crop", end="")
    spans = []
    offset = 0
    for r, (row, row_tags) in enumerate(zip(grid, tags)):
        line = "".join(row)
        start, current = 0, row_tags[0] if row_tags else ""
        for c in range(1, len(row_tags) + 1):
            tag = row_tags[c] if c < len(row_tags) else None
            if tag != current:
                if current:
                    spans.append(Span(offset + start, offset + c, styles[current]))
                start, current = c, tag
        out.append(line + ("\n" if r < len(grid) - 1 else ""))
        offset += len(line) + 1
    out.spans = spans
    return out


def view_scale(walk: CourseWalk, width: int, height: int) -> float:
    """Millimetres per column: `VIEW_WHEELBASES` across, or less zoom where the rig stands
    steeper than that leaves room for. One scale for the whole walk, so stepping never zooms."""
    p, rig = walk.pose, walk.setup.rig
    rise = np.abs(p.front_centre_mm[:, 1] - p.rear_centre_mm[:, 1])
    tallest = float(np.nanmax(rise, initial=0.0)) + rig.tire_dia_front_mm / 2.0 + rig.tire_dia_rear_mm / 2.0
    return max(VIEW_WHEELBASES * rig.wheelbase_mm / width, 1.15 * tallest / (2.0 * height))


def draw_side_view(walk: CourseWalk, index: int, width: int, height: int):
    """Character and tag grids (`height` rows of `width`) of the rig at position `index`.

    Cells are taken as twice as tall as wide. The view spans `VIEW_WHEELBASES` wheelbases across,
    centred on the middle of the rig; terrain above or below the view is cut off.
    """
    p = walk.pose
    rig = walk.setup.rig
    mm_col = view_scale(walk, width, height)
    mm_row = 2.0 * mm_col
    rear, front = p.rear_centre_mm[index], p.front_centre_mm[index]
    if not np.all(np.isfinite(front)):
        front = rear + np.array([rig.wheelbase_mm, 0.0])
    mid = (rear + front) / 2.0
    x0 = mid[0] - width * mm_col / 2.0
    z_top = mid[1] + height * mm_row / 2.0

    grid = [[" "] * width for _ in range(height)]
    tags = [[""] * width for _ in range(height)]

    def cell(x, z):
        return int(math.floor((x - x0) / mm_col)), int(math.floor((z_top - z) / mm_row))

    def put(col, row, ch, tag):
        if 0 <= col < width and 0 <= row < height:
            grid[row][col] = ch
            tags[row][col] = tag

    # terrain: the surface row of each column, ground below it; steep runs drawn as walls
    pts = np.asarray(walk.course.points_mm, dtype=float)
    xs = x0 + (np.arange(width + 1)) * mm_col
    zs = np.interp(xs, pts[:, 0], pts[:, 1])
    rows = np.floor((z_top - zs) / mm_row).astype(int)
    for col in range(width):
        r0, r1 = rows[col], rows[col + 1]  # surface row at the column's left and right edge
        top, low = min(r0, r1), max(r0, r1)
        for row in range(max(top + 1, 0), height):
            put(col, row, ".", "ground")
        if low - top <= 1:
            put(col, low, "_" if r0 == r1 else ("/" if r1 < r0 else "\\"), "surface")
        else:
            for row in range(top, low + 1):
                put(col, row, "|", "surface")

    # chassis line between the axle centres, the CG, the wheels
    touching = bool(walk.belly_touch[index])
    for t in np.linspace(0.0, 1.0, max(2, 2 * width)):
        put(*cell(*(rear + t * (front - rear))), "=", "touch" if touching else "rig")
    if np.all(np.isfinite(p.cg_mm[index])):
        put(*cell(*p.cg_mm[index]), "@", "rig")
    for centre, radius in ((rear, rig.tire_dia_rear_mm / 2.0), (front, rig.tire_dia_front_mm / 2.0)):
        for a in np.linspace(0.0, 2.0 * math.pi, 48, endpoint=False):
            put(*cell(centre[0] + radius * math.cos(a), centre[1] + radius * math.sin(a)), "o", "wheel")
        put(*cell(*centre), "+", "wheel")
    if touching and np.all(np.isfinite(p.belly_point_mm[index])):
        put(*cell(*p.belly_point_mm[index]), "!", "touch")
    return grid, tags


# ----- status words ---------------------------------------------------------------------------

class CourseStatus(Static):
    """The numbers and words for the current position."""

    index: reactive[int] = reactive(0)

    def __init__(self, *, id: Optional[str] = None) -> None:
        super().__init__("", id=id, markup=False)
        self.walk: Optional[CourseWalk] = None
        self.ascii_only = False

    def show(self, walk: CourseWalk, ascii_only: bool) -> None:
        self.walk, self.ascii_only = walk, ascii_only
        self.update(self.words())

    def watch_index(self) -> None:
        if self.walk is not None:
            self.update(self.words())

    def words(self) -> str:
        return status_text(self.walk, self.index, self.ascii_only)


EVENT_WORDS = {
    "front_lifts": "the front lifts", "front_down": "the front comes down", "rear_lifts": "the rear lifts",
    "rear_down": "the rear comes down", "handover": "handover", "hand_back": "hands back",
    "cannot_hold": "cannot hold", "holds_again": "holds again", "belly_touches": "the belly touches",
    "belly_clear": "the belly clears", "outside_model": "outside the model", "inside_model": "back in the model",
    "windup_reverses": "the wind-up reverses", "both_grip": "both grip", "binds": "the driveline binds",
    "unbinds": "the driveline frees",
}


def _pct(x) -> str:
    return "-" if x is None or not math.isfinite(x) else f"{100.0 * x:.0f}%"


STATUS_WIDTH = 78  # 80 columns less the padding
# where no loads reproduce their own K (the state flips with K) the onset rule of MODEL §5 decided
ONSET_WORDS = "onset rule: no steady K"


def doing_line(doing: str, belly: bool, onset: bool, width: int = STATUS_WIDTH) -> str:
    """What the rig does here, as one sentence of at most `width` characters.

    Where it does not fit, the state's "(faster here)" / "(dragged)" go first, then the belly's
    clause (its clearance is on the line above)."""
    plain = doing.replace(" (faster here)", "").replace(" (dragged)", "")
    tries = [(w, b) for b in ((True, False) if belly else (False,)) for w in (doing, plain)]
    for words, with_belly in tries:
        parts = [words] + (["the belly touches"] if with_belly else []) + ([ONSET_WORDS] if onset else [])
        line = "; ".join(parts)
        line = f"{line[0].upper()}{line[1:]}."
        if len(line) <= width:
            return line
    return line[: width - 3] + "..."


def status_text(walk: CourseWalk, i: int, ascii_only: bool = False) -> str:
    """Five short lines: where, loads, grip and path ratio, what the rig does here, the next event."""
    p, t = walk.pose, walk.traction
    d = _deg(ascii_only)
    lifted = walk.lifted[i]
    fast = walk.overdriven_here[i]
    doing = f"the {lifted} is off the ground: the rig tips over" if lifted else state_words(int(t.state[i]), fast)
    onset = walk.no_fixed_point is not None and bool(walk.no_fixed_point[i])
    ahead = next((e for e in walk.events if e.index > i), None)
    nxt = f"Next (n): {EVENT_WORDS[ahead.kind]} at {ahead.rear_x_mm:.0f} mm" if ahead else "No more events ahead"
    faster = f"{fast} overdriven" if fast else "no mismatch"
    slip = lambda x: "slides" if not math.isfinite(x) else f"{x:+.1f}%"  # noqa: E731
    grip = (f"Grip F {_pct(t.front_grip_used[i])} R {_pct(t.rear_grip_used[i])}, slip F "
            f"{slip(t.front_slip_pct[i])} R {slip(t.rear_slip_pct[i])}; path ratio {_num(p.path_ratio[i], 2)} "
            f"({faster})") if np.isfinite(t.front_grip_used[i]) else (
            f"Path ratio {_num(p.path_ratio[i], 2)} ({faster}); no tyre forces here")
    return "\n".join((
        f"Rear axle at {_num(walk.rear_x_mm[i], 0, ' mm')} (front {_num(p.front_centre_mm[i, 0], 0)}), "
        f"pitch {_num(p.pitch_deg[i], 1, d)}, ground F {_num(p.front_angle_deg[i], 1, d)} "
        f"R {_num(p.rear_angle_deg[i], 1, d)}",
        f"Normal F {_num(walk.front_normal_g[i])} R {_num(walk.rear_normal_g[i])} g; tyre force "
        f"F {_num(t.front_force_g[i])} R {_num(t.rear_force_g[i])} g; belly {_num(p.belly_clearance_mm[i], 0, ' mm')}",
        grip,
        doing_line(doing, bool(walk.belly_touch[i]), onset),
        f"{nxt}  [{i + 1}/{len(walk)}]",
    ))


# ----- load chart -----------------------------------------------------------------------------

# plotext draws in these standard colours; `render` swaps them for the theme's styles.
_TAGS = {"front": ("red", 1), "rear": ("green", 2), "here": ("blue", 4)}
_TAG_OF_NUMBER = {number: tag for tag, (_colour, number) in _TAGS.items()}


class CourseChart(Widget):
    """Front and rear normal force along the course, with a marker at the current position."""

    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "course-chart--front", "course-chart--rear", "course-chart--here", "course-chart--axes",
    }
    index: reactive[int] = reactive(0)

    def __init__(self, *, id: Optional[str] = None) -> None:
        super().__init__(id=id)
        self.walk: Optional[CourseWalk] = None
        self.ascii_only = False
        self._key = None
        self._cache: Optional[Text] = None
        self.builds = 0  # how many times plotext ran (tests check the coalescing)

    def show(self, walk: CourseWalk, ascii_only: bool) -> None:
        self.walk, self.ascii_only = walk, ascii_only
        self.refresh()

    def render(self) -> Text:
        width, height = self.size
        if self.walk is None:
            return Text("")
        if width < 24 or height < 5:
            return Text("chart needs more room", no_wrap=True, overflow="ellipsis")
        styles = {tag: self.get_component_rich_style(f"course-chart--{tag}", partial=True)
                  for tag in (*_TAGS, "axes")}
        key = (id(self.walk), self.index, width, height, self.ascii_only, tuple(styles.items()))
        if key != self._key:
            self.builds += 1
            body = load_plot(self.walk, self.index, width, height - 1, self.ascii_only)
            chart = restyle(Text.from_ansi(body, no_wrap=True, end=""), styles, _TAG_OF_NUMBER)
            chart.append("\n")
            chart.append(("*" if self.ascii_only else "\u2022") + " F front  ", styles["front"])
            chart.append("x R rear  ", styles["rear"])
            chart.append("| here   ", styles["here"])
            chart.append("normal force [g] by rear axle x [mm]", styles["axes"])
            self._cache, self._key = chart, key
        return self._cache


def load_plot(walk: CourseWalk, index: int, width: int, height: int, ascii_only: bool) -> str:
    """plotext's ANSI text of the normal forces against rear axle x (colours are tags)."""
    import plotext as plt  # lazily: importing plotext is slow and the first frame does not need it

    x = walk.rear_x_mm
    on_ground = np.isfinite(walk.front_normal_g) & np.isfinite(walk.rear_normal_g)
    plt.clf()
    plt.plotsize(width, height)
    plt.theme("clear")
    plt.xlim(float(x[0]), float(x[-1]) if x[-1] > x[0] else float(x[0]) + 1.0)
    top = float(np.nanmax(np.concatenate((walk.front_normal_g[on_ground], walk.rear_normal_g[on_ground],
                                          [walk.setup.rig.mass_g]))))
    bottom = float(min(0.0, np.nanmin(np.concatenate((walk.front_normal_g[on_ground],
                                                      walk.rear_normal_g[on_ground], [0.0])))))
    plt.ylim(bottom, top * 1.05)
    y_step = nice_step(top - bottom, max(2, min(4, (height - 3) // 2)))
    y_ticks = list(np.arange(math.ceil(bottom / y_step) * y_step, top * 1.05, y_step))
    plt.yticks(y_ticks, [f"{t:g}" for t in y_ticks])
    x_step = nice_step(float(x[-1] - x[0]), max(2, width // 14))
    x_ticks = list(np.arange(math.ceil(x[0] / x_step) * x_step, x[-1] + 1e-9, x_step))
    plt.xticks(x_ticks, [f"{t:g}" for t in x_ticks])
    xs = x[on_ground].tolist()
    plt.plot(xs, walk.front_normal_g[on_ground].tolist(), marker="*" if ascii_only else "dot",
             color=_TAGS["front"][0])
    plt.plot(xs, walk.rear_normal_g[on_ground].tolist(), marker="x", color=_TAGS["rear"][0])
    plt.vline(float(x[index]), _TAGS["here"][0])
    text = plt.build().rstrip("\n")
    if ascii_only:
        text = text.translate(ASCII_FOLD).encode("latin-1", "replace").decode("latin-1")
    return text


# ----- the screen -----------------------------------------------------------------------------

class CourseScreen(Screen[None]):
    """The rig stepping along the setup's course. `CourseScreen(setup)`; Esc or q closes."""

    CSS_PATH = "course_screen.tcss"
    BINDINGS: ClassVar[list[BindingType]] = [
        Binding("right", "step(1)", "Forward", id="course.forward"),
        Binding("left", "step(-1)", "Back", id="course.back"),
        Binding("pagedown,shift+right", f"step({FAR_STEPS})", f"Forward x{FAR_STEPS}", show=False,
                id="course.forward_far"),
        Binding("pageup,shift+left", f"step(-{FAR_STEPS})", f"Back x{FAR_STEPS}", show=False,
                id="course.back_far"),
        Binding("home", "go_end(0)", "Start", show=False, id="course.start"),
        Binding("end", "go_end(1)", "End", show=False, id="course.end"),
        Binding("n", "event(1)", "Next event", id="course.next_event"),
        Binding("p", "event(-1)", "Previous event", show=False, id="course.previous_event"),
        Binding("o", "other_course", "Other course", id="course.other"),
        Binding("escape,q", "close", "Close", id="course.close"),
    ]

    class WalkReady(Message):
        """The worker finished walking the course (or found why it cannot)."""

        def __init__(self, walk: Optional[CourseWalk], problem: Optional[str]) -> None:
            super().__init__()
            self.walk, self.problem = walk, problem

    def __init__(self, setup: Setup, *, setup_path=None, course=None, ascii_only: Optional[bool] = None,
                 step_mm: float = STEP_MM) -> None:
        super().__init__()
        self.setup = setup
        self.setup_path = setup_path
        self.course = course if course is not None else setup.course
        self._ascii_only = ascii_only
        self.step_mm = step_mm
        self.walk: Optional[CourseWalk] = None
        self.index = 0

    def course_folders(self) -> list:
        """Where course files are looked for: the setup's folder, ./setups and the current folder."""
        from pathlib import Path

        folders = [Path(self.setup_path).parent] if self.setup_path else []
        folders += [Path.cwd() / "setups", Path.cwd()]
        out, seen = [], set()
        for f in folders:
            try:
                key = f.resolve()
            except OSError:
                continue
            if key not in seen and f.is_dir():
                seen.add(key)
                out.append(f)
        return out

    @property
    def ascii_only(self) -> bool:
        if self._ascii_only is None:
            return bool(getattr(self.app, "ascii_only", False))
        return self._ascii_only

    def _title(self) -> str:
        return one_line(f"{self.setup.name} - course: {self.course.name if self.course else '(none)'}")

    def compose(self) -> ComposeResult:
        yield Static(self._title(), id="course-title", markup=False)
        yield SideView(id="course-view")
        yield CourseStatus(id="course-status")
        yield CourseChart(id="course-chart")
        yield Static(KEYS_LINE, id="course-keys", markup=False)

    def on_mount(self) -> None:
        self.set_class(self.ascii_only, "-ascii")
        if self.course is None:
            self.query_one(CourseStatus).update(
                "This setup has no course of its own: choose a course file (schema = 1 and [course] "
                "only) to walk the rig over. Esc or q closes.")
            self.action_other_course(close_if_none=True)
            return
        self._start_walk()

    def _start_walk(self) -> None:
        self.walk = None
        self.query_one("#course-title", Static).update(self._title())
        self.query_one(CourseStatus).update("Walking the course...")
        self._walk()

    def action_other_course(self, close_if_none: bool = False) -> None:
        """Offer the setup's own course and the course files nearby; walk the one picked."""
        from .screens.course_pick import CoursePickScreen

        def picked(entry) -> None:
            if entry is None:
                if close_if_none:
                    self.dismiss(None)
                return
            self.course = entry.course
            self._start_walk()

        self.app.push_screen(CoursePickScreen(self.course_folders(), own=self.setup.course), picked)

    @work(thread=True, exclusive=True)
    def _walk(self) -> None:
        """Walk the course off the event loop; report back with a message."""
        try:
            walk = walk_course(self.setup, self.step_mm, course=self.course)
        except SetupError as exc:
            self.post_message(self.WalkReady(None, exc.reason))
            return
        self.post_message(self.WalkReady(walk, None))

    @on(WalkReady)
    def _walk_ready(self, message: WalkReady) -> None:
        """Hand the walk down to the widgets."""
        if message.walk is None:
            self.query_one(CourseStatus).update(f"Cannot walk this course: {message.problem}")
            return
        self.walk = message.walk
        self.query_one(SideView).show(self.walk)
        self.query_one(CourseStatus).show(self.walk, self.ascii_only)
        self.query_one(CourseChart).show(self.walk, self.ascii_only)
        self._go(0)

    def _go(self, index: int) -> None:
        if self.walk is None:
            return
        self.index = max(0, min(len(self.walk) - 1, index))
        self.query_one(SideView).index = self.index
        self.query_one(CourseStatus).index = self.index
        chart = self.query_one(CourseChart)
        # the words and the drawing first; the chart a frame later
        self.call_after_refresh(setattr, chart, "index", self.index)

    def action_step(self, steps: int) -> None:
        """Move along the course by `steps` positions."""
        self._go(self.index + steps)

    def action_go_end(self, end: int) -> None:
        """Jump to the start (0) or the end (1) of the course."""
        self._go(0 if end == 0 else (len(self.walk) - 1 if self.walk else 0))

    def action_event(self, direction: int) -> None:
        """Jump to the next (1) or previous (-1) event."""
        if self.walk is None:
            return
        marks = sorted({e.index for e in self.walk.events})
        ahead = [m for m in marks if (m > self.index if direction > 0 else m < self.index)]
        if ahead:
            self._go(ahead[0] if direction > 0 else ahead[-1])

    def action_close(self) -> None:
        """Back to the tuner."""
        self.dismiss(None)
