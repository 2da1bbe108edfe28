"""Pick a course to walk: the setup's own [course] and the course files of a few folders."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Optional

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.content import Content
from textual.screen import ModalScreen
from textual.widgets import OptionList, Static
from textual.widgets.option_list import Option

from slopetune.engine.safe_text import one_line

from .open_file import LINE_CHARS, Plain, _clip, _clip_left, _folder_words, _shown

KEYS = "Up/Down: choose   Enter: walk it   Esc: back"
MAX_BYTES = 1 << 20  # as the loader: a course file is small


@dataclass(frozen=True)
class CourseEntry:
    """One course on offer: the setup's own (path None) or a course file, or a file's problem."""

    path: Optional[Path]
    shown: str
    name: Optional[str]
    problem: Optional[str]
    course: object = None  # engine Course when it loaded


def scan_course_files(folders: list[Path]) -> tuple[list[CourseEntry], list[str]]:
    """Course files (schema and [course] only) directly in `folders`; problems as one line each.

    Setup files are skipped, not listed as problems: a folder of setups is the normal case.
    """
    from slopetune.engine import SetupError
    from slopetune.engine.course_file import load_course, looks_like_course

    seen: set[Path] = set()
    entries: list[CourseEntry] = []
    problems: list[str] = []
    for folder in folders:
        try:
            children = sorted(Path(folder).iterdir())
        except OSError as exc:
            problems.append(f"{_shown(Path(folder))}: {exc.strerror or exc}")
            continue
        for child in children:
            try:
                if child.suffix.lower() != ".toml" or not child.is_file() or child.stat().st_size > MAX_BYTES:
                    continue
                key = child.resolve()
                if key in seen:
                    continue
                seen.add(key)
                if not looks_like_course(child.read_text(encoding="utf-8", errors="replace")):
                    continue
            except OSError:
                continue
            try:
                loaded = load_course(child)
            except SetupError as exc:
                where = f"line {exc.line}: " if exc.line is not None else ""
                entries.append(CourseEntry(child, _shown(child), None, where + exc.reason))
                continue
            except Exception as exc:  # a list of files must never take the tuner down
                entries.append(CourseEntry(child, _shown(child), None, f"cannot read: {type(exc).__name__}"))
                continue
            name = " ".join(str(loaded.course.name).split()) or child.stem
            entries.append(CourseEntry(child, _shown(child), name, None, loaded.course))
    entries.sort(key=lambda e: (e.problem is not None, e.shown))
    return entries, problems


def entry_prompt(entry: CourseEntry) -> Content:
    """One line: the course's name and where it comes from, or the path and its problem greyed."""
    words = one_line(entry.name if entry.problem is None else entry.problem)
    where = _clip_left(entry.shown, max(LINE_CHARS - 2 - len(words or ""), 32))
    words = _clip(words or "", max(LINE_CHARS - 2 - len(where), 12))
    if entry.problem is None:
        return Content.assemble((words, "bold"), "  ", (where, "$text-muted"))
    return Content.assemble(where, "  ", (words, "$text-muted"))


class CoursePickScreen(ModalScreen[Optional[CourseEntry]]):
    """Offer the setup's own course (if any) and the course files of `folders`."""

    CSS_PATH = "course_pick.tcss"
    BINDINGS = [Binding("escape", "cancel", "Back", id="course_pick.cancel")]

    def __init__(self, folders: list[Path], own=None) -> None:
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.own = own
        self.entries: list[CourseEntry] = []

    def compose(self) -> ComposeResult:
        with Vertical(id="pick-box"):
            yield Plain("Walk the rig over which course?", id="pick-title")
            yield Plain("Looking for course files...", id="pick-status")
            yield OptionList(id="pick-list", compact=True)
            yield Plain(KEYS, id="pick-keys")

    def on_mount(self) -> None:
        self.set_class(bool(getattr(self.app, "ascii_only", False)), "-ascii")
        self.query_one("#pick-list", OptionList).focus()
        self._scan()

    @work(thread=True, exclusive=True, group="course-pick-scan", exit_on_error=False)
    def _scan(self) -> None:
        entries, problems = scan_course_files(self.folders)
        try:
            self.app.call_from_thread(self._show, entries, problems)
        except RuntimeError:  # the app closed while the files were read
            pass

    def _show(self, entries: list[CourseEntry], problems: list[str]) -> None:
        if not self.is_attached:
            return
        if self.own is not None:
            name = " ".join(str(self.own.name).split()) or "course"
            entries = [CourseEntry(None, "this setup's own [course]", name, None, self.own), *entries]
        self.entries = entries
        listing = self.query_one("#pick-list", OptionList)
        listing.set_options(Option(entry_prompt(e), id=str(i), disabled=e.problem is not None)
                            for i, e in enumerate(entries))
        if any(e.problem is None for e in entries):
            listing.highlighted = next(i for i, e in enumerate(entries) if e.problem is None)
        where = ", ".join(_folder_words(f) for f in self.folders) or "no folders"
        count = sum(e.path is not None for e in entries)
        status = (f"{count} course file(s) in {where}" if count else
                  f"No course files in {where}: a course file holds schema = 1 and [course] only")
        if problems:
            status += "; could not read " + "; ".join(problems)
        self.query_one("#pick-status", Static).update(status)

    @on(OptionList.OptionSelected, "#pick-list")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        entry = self.entries[event.option_index]
        if entry.problem is None:
            self.dismiss(entry)

    def action_cancel(self) -> None:
        self.dismiss(None)
