"""The full-screen tuner: a setup form, the live load chart, the flag and the status words.

State lives here (the setup, the file it came from, the baseline, the display units); each widget
shows what the app hands it. A key in the form changes the setup and its value at once; a key on
its own redraws the flag, the words and the chart in one frame. While a key is held the words
update at most 12 times a second and the chart, one frame after them, 5 times, always ending on
the latest value, so a slow link never queues up frames. File actions live in `app_files.py`, the
modal screens (imported when first used) in `app_screens.py`.

Start-up (see `app_main.run_tuner` and `prefetch.py`): a child forked before Textual loads works
out the first screen while this process imports Textual; when its answer is in by the time the app
starts, the first frame is the whole screen, chart included, and numpy loads here only after it.
Without the child (no fork, a busy or one-core machine) the first frame shows the title, a
placeholder flag and the form, and the words and the chart follow once the analysis is done.
"""

from __future__ import annotations

import dataclasses

import gc
import math
import time
from pathlib import Path
from typing import TYPE_CHECKING, ClassVar, Iterable, NamedTuple, Optional

from textual import on
from textual.app import App, ComposeResult, SystemCommand
from textual.binding import Binding, BindingType
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Footer, Static

from slopetune.engine import LoadedSetup, Setup, SetupError, load_setup  # numpy-free: engine loads names lazily
from slopetune.engine.safe_text import one_line

from .app_files import FileActions
from .app_fixes import FixActions
from .app_screens import ScreenActions
from .history import History
from .slopes import SLOPE_SPANS, slope_grid  # noqa: F401 - SLOPE_SPANS: part of the app's names
from .throttle import Throttle
from .chart_data import chart_data
from .widgets.load_chart import LoadChart
from .widgets.setup_form import SetupForm
from .widgets.status_pane import FlagLine, StatusPane
from .widgets.title_bar import TitleBar
from .units import Units, plain_scrollbars

if TYPE_CHECKING:
    import numpy as np

    from slopetune.engine import Analysis

MIN_COLUMNS, MIN_ROWS = 60, 20
HELD_KEY_GAP_S = 0.06  # edits closer than this come from a held key (auto-repeat is 25-33 Hz)
WORDS_EVERY_S = 1 / 12
CHART_EVERY_S = 1 / 5
WAIT_WORDS = "Working out the loads..."
SHORT_CAUTION = "Static model: wind-up loads gears and motors; bench-test hands clear. F1: help"
# grouped keys are drawn side by side: the slash keeps "Up/Dn" readable
ASCII_KEYS = {"up": "Up", "down": "/Dn", "left": "Lt", "right": "/Rt", "shift+left": "S-Lt",
              "shift+right": "S-Rt"}


class Baseline(NamedTuple):
    setup: Setup
    label: str  # "pinned" or the file it came from


class TunerScreen(Screen):
    """The tuner's one screen; a plain notice replaces it when the terminal is too small."""

    def __init__(self, setup: Setup, units: Units, title: tuple[str, str, bool, str],
                 note: tuple[str, str], first=None) -> None:
        """`first`: a `prefetch.FirstScreen` for `setup`, drawn in the very first frame (or None)."""
        super().__init__(id="tuner")
        self._setup, self._units, self._title, self._first_note = setup, units, title, note
        self._first = first

    def compose(self) -> ComposeResult:
        flag = FlagLine(WAIT_WORDS, id="flag")
        chart = LoadChart(ascii_only=self._units.ascii_only, id="chart")
        status = StatusPane(self._first_note, id="status")
        if self._first is not None:
            flag.show(self._first.view.level, self._first.view.flag)
            if self._first.plot is not None:
                chart.preset(self._first.chart, *self._first.plot)  # drawn by the child: no plotext here
            chart.show(self._first.chart)
            status.view = self._first.view
        yield TitleBar(*self._title, id="title")
        yield flag
        with Horizontal(id="body"):
            yield SetupForm(self._setup, self._units, id="form")
            with Vertical(id="right"):
                yield chart
                yield status
        yield Static(f"Terminal too small: slopetune needs at least {MIN_COLUMNS}x{MIN_ROWS}.\n"
                     "Make the window larger; your setup is kept.", id="too-small", markup=False)
        yield Footer(show_command_palette=False)

    class Ready(Message):
        """The screen's widgets are mounted."""

    def on_mount(self) -> None:
        self.post_message(self.Ready())

    def on_resize(self, event) -> None:
        """Swap to the plain notice below the smallest usable size."""
        width, height = event.size
        small = width < MIN_COLUMNS or height < MIN_ROWS
        self.set_class(small, "-too-small")
        self.set_class(width >= 110, "-wide")
        self.set_class(width < 80 or height < 24, "-cramped")
        # the palette's key needs room the tuner's own keys use at 80 columns (Help lists it)
        footer, wide = self.query_one(Footer), width >= 90
        if footer.show_command_palette != wide:
            footer.show_command_palette = wide
            footer.refresh(recompose=True)
        if small:
            self.set_focus(None)  # no edits the user cannot see
        elif self.focused is None:
            self.call_after_refresh(self.query_one(SetupForm).focus)


class SlopeTuneApp(FileActions, ScreenActions, FixActions, App[int]):
    """slopetune's tuner. `run()` returns the exit code."""

    CSS_PATH = "app.tcss"
    TITLE = "slopetune"
    BINDINGS: ClassVar[list[BindingType]] = [
        Binding("ctrl+s", "save", "Save", id="tuner.save"),
        Binding("a", "save_as", "Save as", show=False, id="tuner.save_as"),
        Binding("o", "open", "Open", show=False, id="tuner.open"),
        Binding("b", "pin_baseline", "Pin baseline", id="tuner.pin_baseline"),
        Binding("B", "open_baseline", "Open file as baseline", show=False, id="tuner.open_baseline"),
        Binding("x", "clear_baseline", "Clear baseline", show=False, id="tuner.clear_baseline"),
        Binding("u", "toggle_units", "Units: metric / imperial", show=False, id="tuner.units"),
        Binding("r", "toggle_range", "Slope range: climbs / with descents", show=False, id="tuner.range"),
        Binding("m", "measure", "Measure the rig (scales, tilt board)", show=False, id="tuner.measure"),
        Binding("c", "course", "Course view", show=False, id="tuner.course"),
        Binding("p", "plan", "Plan a setup", show=False, id="tuner.plan"),
        Binding("f", "fix", "Plan the suggested fix", show=False, id="tuner.fix"),
        Binding("ctrl+z,z", "undo", "Undo", id="tuner.undo"),
        Binding("ctrl+y,Z", "redo", "Redo", show=False, id="tuner.redo"),
        Binding("h", "headings", "Headings: steepest face from every direction", show=False, id="tuner.headings"),
        Binding("f1,question_mark", "help", "Help", id="tuner.help"),
        Binding("q", "quit", "Quit", id="tuner.quit"),
    ]

    def __init__(self, loaded: LoadedSetup, *, baseline: Optional[LoadedSetup] = None,
                 ascii_only: bool = False, driver_class=None, prefetch=None, first_screen=None) -> None:
        """`prefetch`: a `tui.prefetch.Prefetch` still working out the first screen in a child
        process; `first_screen`: its answer when it came before the app started (drawn in the first
        frame)."""
        super().__init__(driver_class=driver_class)
        self.prefetch = prefetch
        self.loaded = loaded
        self.path: Optional[Path] = loaded.path
        self.setup = loaded.setup
        self.saved_setup = loaded.setup
        self.units = Units(imperial=False, ascii_only=ascii_only)
        if ascii_only:
            plain_scrollbars()
        self.full_range = False
        self.baseline: Optional[Baseline] = (
            Baseline(baseline.setup, baseline.path.name if baseline.path else "baseline") if baseline else None)
        self.analysis: Optional[Analysis] = None
        self.history = History()
        self._baseline_analysis: Optional[Analysis] = None
        self._chart_pending = False
        self._last_edit = -math.inf
        # A held key: the value moves every key, the words at most 12 times and the chart 5 times a
        # second, each with a last update that shows the final value; a slow link never queues frames.
        self.word_updates = Throttle(self, WORDS_EVERY_S, self._show_words)
        self.chart_updates = Throttle(self, CHART_EVERY_S, self._push_chart)
        self._first_note = "\n".join(loaded.warnings) if loaded.warnings else SHORT_CAUTION  # every one
        self.resume_gc = False  # the starter paused the garbage collector for the first frame
        self._first_screen = first_screen if self._fits(first_screen) else None
        self.main_screen = TunerScreen(self.setup, self.units, self._title_words(),
                                       (self._first_note, "info"), self._first_screen)

    # ----- set-up

    @property
    def ascii_only(self) -> bool:
        return self.units.ascii_only

    def get_default_screen(self) -> Screen:
        return self.main_screen

    @on(TunerScreen.Ready)
    def _tuner_ready(self) -> None:
        """The main screen is up: find its widgets and show the setup."""
        s = self.main_screen
        self.title_bar = s.query_one(TitleBar)
        self.flag = s.query_one(FlagLine)
        self.form = s.query_one(SetupForm)
        self.chart = s.query_one(LoadChart)
        self.status = s.query_one(StatusPane)
        self.form.focus()
        self._note(self._first_note, "warning" if self.loaded.warnings else "info")
        self._show_title()
        if self._first_screen is not None:
            # the first frame already holds the child's chart and words (tui/prefetch.py)
            self._after_first_screen()
            return
        if self.prefetch is not None:
            # a forked child is still working out the first screen: show it the moment it
            # arrives, and analyse here only after that frame
            import asyncio

            asyncio.get_running_loop().add_reader(self.prefetch.fd, self._prefetched)
            return
        # the form first; numpy, the analysis and then plotext load after that frame
        self.call_after_refresh(self._first_analysis)

    def _fits(self, first) -> bool:
        """Whether a prefetched first screen is still the one to show (no key has moved on)."""
        return (first is not None and getattr(self, "analysis", None) is None and first.setup == self.setup
                and not self.full_range)

    def _prefetched(self) -> None:
        """The child's first screen is ready: show it, then analyse here after that frame."""
        import asyncio

        prefetch, self.prefetch = self.prefetch, None
        asyncio.get_running_loop().remove_reader(prefetch.fd)
        first = prefetch.result()
        if self._fits(first):
            self.flag.show(first.view.level, first.view.flag)
            self.status.view = first.view
            if first.plot is not None:
                self.chart.preset(first.chart, *first.plot)
            self.chart.show(first.chart)
            self._after_first_screen()
        else:
            self.call_after_refresh(self._first_analysis)

    def _after_first_screen(self) -> None:
        if self.resume_gc:
            self.call_after_refresh(self._resume_gc)
        # one more frame for the chart to reach the terminal, then numpy loads here
        self.call_after_refresh(lambda: self.call_after_refresh(self._first_analysis))

    def _first_analysis(self) -> None:
        if self.analysis is None:  # no key has analysed the setup yet
            self._recompute(baseline_too=True, chart_now=False)
        self.chart.warm_up()  # plotext, before the first key needs it

    def _resume_gc(self) -> None:
        """After the first chart: collect start-up's garbage once, then keep the collector's later
        passes off what start-up made (Textual, numpy and plotext live as long as the app; the
        few start-up widgets Textual swaps out later, footer keys, simply stay in memory)."""
        if self.resume_gc:
            self.resume_gc = False
            gc.collect()
            gc.freeze()
            gc.enable()

    def get_key_display(self, binding: Binding) -> str:
        """Plain key names on terminals without arrows in their font."""
        if self.ascii_only and binding.key in ASCII_KEYS:
            return ASCII_KEYS[binding.key]
        return super().get_key_display(binding)

    # ----- state shown by the widgets

    @property
    def unsaved(self) -> bool:
        return self.path is None or self.setup != self.saved_setup

    def _slopes(self) -> np.ndarray:
        return slope_grid(self.full_range)

    def _recompute(self, baseline_too: bool = False, chart_now: bool = True) -> None:
        """Analyse the setup and show it now (a deliberate action, not a held key)."""
        if baseline_too:
            from slopetune.engine import analyse

            self._baseline_analysis = (analyse(self.baseline.setup, self._slopes())
                                       if self.baseline is not None else None)
        self._update(chart_now)

    def _only_the_slope_moved(self) -> bool:
        import numpy as np  # loaded by the first analysis already

        a = self.analysis
        if a is None or not np.array_equal(a.sweep.slope_deg, self._slopes()):
            return False
        same = lambda s: dataclasses.replace(s, terrain=dataclasses.replace(s.terrain, slope_deg=0.0))  # noqa: E731
        return same(a.setup) == same(self.setup)

    def _show_words(self) -> None:
        """A held key's update: the words now, the chart after them (at its own slower rate)."""
        self._update(chart_now=False)

    def _update(self, chart_now: bool) -> None:
        """Analyse the latest setup; show the flag and the words, and the chart now or a frame later."""
        from slopetune.engine import analyse  # after the first frame: numpy and the engine's sums load here

        from .status_words import status_view

        if self.baseline is not None and self._baseline_analysis is None:
            self._baseline_analysis = analyse(self.baseline.setup, self._slopes())
        if self._only_the_slope_moved():
            # the sweep covers every slope and the named angles are the rig's own: the setup's
            # slope only picks where the words and the marker look, so a held slope key analyses once
            self.analysis = dataclasses.replace(self.analysis, setup=self.setup)
        else:
            self.analysis = analyse(self.setup, self._slopes())
        view = status_view(self.analysis, self.units, self._baseline_analysis)
        self.flag.show(view.level, view.flag)
        self.status.view = view
        if view.level == "ok":
            self.status.fixes = ""  # nothing to fix: no stale advice while the planner is booked
        self.word_updates.mark()
        if chart_now:
            self.chart_updates.mark()
            self._push_chart()
        elif not self._chart_pending:
            self._chart_pending = True
            self.call_after_refresh(self._chart_after_words)
        self._schedule_fixes()  # the planner runs once the keys pause, in a worker

    def _chart_after_words(self) -> None:
        self._chart_pending = False
        self.chart_updates()

    def _push_chart(self) -> None:
        """Hand the chart the latest data; it repaints the lines that changed."""
        if self.analysis is not None:
            self.chart.show(chart_data(self.analysis, self.units, self._baseline_analysis))
            if self.resume_gc:
                self.call_after_refresh(self._resume_gc)  # plotext is drawn in that frame

    def _title_words(self) -> tuple[str, str, bool, str]:
        """(setup name, file, unsaved, the right-hand words) for the title line."""
        base = f"  base: {self.baseline.label}" if self.baseline else ""
        span = "-90..90" if self.full_range else "0..90"
        return (self.setup.name, self.path.name if self.path else "demo copy, not saved", self.unsaved,
                f"{self.units.name} {span}{base}")

    def _show_title(self) -> None:
        self.title_bar.show(*self._title_words())

    def _note(self, words: str, severity: str = "info") -> None:
        self.status.note = (one_line(words), "error" if severity == "error" else "info")  # may quote a file

    def _replace_setup(self, setup: Setup, note: Optional[str] = None, what: Optional[str] = None) -> None:
        """A whole new setup from outside the form (opened, measured, planned); `what` names the
        undo step (None: a fresh start, e.g. another file, that clears the undo history)."""
        if what is None:
            self.history.clear()
        else:
            self.history.record(self.setup, setup, what)
        self.setup = setup
        self.form.load(setup, self.units)
        self._recompute()
        self._show_title()
        if note:
            self._note(note)

    # ----- messages from the form

    @on(SetupForm.Edited)
    def _edited(self, message: SetupForm.Edited) -> None:
        """The form changed the setup: recompute and redraw."""
        what = self.form.row.label.strip() if self.form.row.key == message.key else message.key
        self.history.record(self.setup, message.setup, what, key=message.key)
        self.setup = message.setup
        if self.status.note[1] != "error":
            self._note("")  # a note has been read by the next key; give its room back to the chart
        now = time.monotonic()
        held = now - self._last_edit < HELD_KEY_GAP_S or self.word_updates.pending
        self._last_edit = now
        if held:
            self.word_updates()  # words at their rate, the chart after them at its own
        else:
            self._update(chart_now=True)  # one key on its own: words and chart in one frame
        self.form.show_changes()
        self._show_title()
        if message.note:
            self._note(message.note)

    # ----- undo

    def action_undo(self) -> None:
        """Take back the last change to the setup."""
        self._travel(self.history.undo(), back=True)

    def action_redo(self) -> None:
        """Do again the last change taken back."""
        self._travel(self.history.redo(), back=False)

    def check_action(self, action: str, parameters: tuple) -> Optional[bool]:
        """Undo and redo belong to the tuner's screen: on a modal screen the keys go to it."""
        if action in ("undo", "redo"):
            return isinstance(self.screen, TunerScreen)
        return True

    def _travel(self, step, back: bool) -> None:
        if step is None:
            self._note("Nothing to undo" if back else "Nothing to redo")
            return
        self.setup = step.before if back else step.after
        self.form.load(self.setup, self.units)
        self._recompute()
        self._show_title()
        self._note(f"{'Undone' if back else 'Redone'}: {step.what} (Ctrl+Z/z undo, Ctrl+Y/Z redo)")

    # ----- baseline

    def _set_baseline(self, setup: Optional[Setup], label: str = "") -> None:
        """Compare with `setup` from now on (None: stop comparing)."""
        self.baseline = Baseline(setup, label) if setup is not None else None
        self._recompute(baseline_too=True)
        self._show_title()

    def action_pin_baseline(self) -> None:
        """Pin the current setup as the baseline to compare against."""
        self._set_baseline(self.setup, "pinned")
        self._note("Baseline pinned (dimmed on the chart); x clears it")

    def action_open_baseline(self) -> None:
        """Open a setup file as the baseline."""
        def chosen(path: Optional[Path]) -> None:
            if path is None:
                return
            try:
                loaded = load_setup(path)
            except SetupError as exc:
                self._note(str(exc), "error")
                return
            self._set_baseline(loaded.setup, Path(path).name)
            self._note(f"Baseline: {path}")

        self._push("slopetune.tui.screens.open_file", "OpenFileScreen", lambda cls: cls(self._folders()), chosen,
                   "open-as-baseline")

    def action_clear_baseline(self) -> None:
        """Stop comparing with a baseline."""
        if self.baseline is None:
            return
        self._set_baseline(None)
        self._note("Baseline cleared")

    # ----- display

    def action_toggle_units(self) -> None:
        """Show metric or imperial units (the file always stays metric)."""
        self.units = Units(imperial=not self.units.imperial, ascii_only=self.ascii_only)
        self.form.load(self.setup, self.units)
        self._recompute()
        self._show_title()

    def action_toggle_range(self) -> None:
        """Chart climbs only (0..90) or descents too (-90..90)."""
        self.full_range = not self.full_range
        self._recompute(baseline_too=True)
        self._show_title()

    # ----- command palette

    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        yield from super().get_system_commands(screen)
        for title, help_text, action in (
            ("Save", "Save the setup to its file", self.action_save),
            ("Save as", "Save the setup under another name", self.action_save_as),
            ("Open setup", "Open another setup file", self.action_open),
            ("Pin baseline", "Pin the current setup as the baseline", self.action_pin_baseline),
            ("Open baseline", "Open a setup file as the baseline", self.action_open_baseline),
            ("Clear baseline", "Stop comparing with the baseline", self.action_clear_baseline),
            ("Toggle units", "Metric or imperial display (file stays metric)", self.action_toggle_units),
            ("Toggle slope range", "Climbs only, or descents too", self.action_toggle_range),
            ("Measure", "Scale readings to front bias, CG height and mu", self.action_measure),
            ("Course view", "Walk the rig over a course (its own or a course file)", self.action_course),
            ("Plan", "Let the planner suggest a setup", self.action_plan),
            ("Headings", "Steepest face from every direction; wheel loads", self.action_headings),
            ("Help", "Keys, chart, flags and cautions", self.action_help),
        ):
            yield SystemCommand(title, help_text, action)
