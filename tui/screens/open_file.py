"""Pick a setup file from a keyboard list of the `.toml` files in a few folders."""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from functools import partial
from pathlib import Path
from typing import Optional

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.content import Content
from textual.screen import ModalScreen
from textual.widgets import OptionList, Static
from slopetune.engine.safe_text import one_line
from textual.widgets.option_list import Option

# Words from files and setups may hold brackets: never read them as markup.
Plain = partial(Static, markup=False)

KEYS = "Up/Down: choose   Enter: open   Esc: cancel"
LINE_CHARS = 74  # inside the 78-column box: one file per line at 80x24


@dataclass(frozen=True)
class SetupFileEntry:
    """One `.toml` file found: its setup name when it loads, else the one-line problem."""

    path: Path
    shown_path: str
    name: Optional[str]
    problem: Optional[str]
    course: bool = False  # a course file: opening it walks the open rig over it


def _shown(path: Path) -> str:
    """The path as the user would type it: relative to the current folder when inside it."""
    try:
        return os.path.relpath(path)
    except ValueError:  # another drive on Windows
        return str(path)


def _folder_words(folder: Path) -> str:
    shown = _shown(folder)
    return "the current folder" if shown == "." else shown


def _describe(path: Path) -> tuple[Optional[str], Optional[str], bool]:
    """(setup name, None, False) when the file loads as a setup, (course name + " (course)", None,
    True) for a good course file, else (None, one-line problem, False)."""
    # Imported here: the engine pulls in numpy, which the list must not wait for at push time.
    from slopetune.engine import SetupError, load_setup

    try:
        loaded = load_setup(path)
    except SetupError as exc:
        course = _course_name(path)
        if course is not None:
            return f"{course} (course)", None, True
        where = f"line {exc.line}: " if exc.line is not None else ""
        return None, where + exc.reason, False
    except (OSError, UnicodeError, ValueError) as exc:
        return None, " ".join(str(exc).split()) or type(exc).__name__, False
    except Exception as exc:  # a list of files must never take the tuner down
        return None, f"cannot read: {type(exc).__name__}", False
    name = " ".join(str(loaded.setup.name).split())
    return (name or path.stem), None, False


def _course_name(path: Path) -> Optional[str]:
    """The course's name when `path` is a good course file (schema and [course] only), else None."""
    from slopetune.engine import SetupError
    from slopetune.engine.course_file import load_course

    try:
        return " ".join(str(load_course(path).course.name).split()) or path.stem
    except (SetupError, OSError, UnicodeError, ValueError):
        return None


_SETUP_MARK = re.compile(r"^\s*(\[\s*(rig|course)\s*\]|schema\s*=)", re.MULTILINE)
PEEK_BYTES = 64 * 1024


def looks_like_setup(path: Path) -> bool:
    """A `.toml` file worth listing: it has `schema =`, `[rig]` or `[course]` near its top (so
    `pyproject.toml` and other programs' files stay out; a broken setup still shows, with its
    problem)."""
    try:
        with open(path, "rb") as f:
            head = f.read(PEEK_BYTES).decode("utf-8", "replace")
    except OSError:
        return False
    return _SETUP_MARK.search(head) is not None


def scan_setup_files(folders: list[Path]) -> tuple[list[SetupFileEntry], list[str]]:
    """The `.toml` files directly in `folders`, de-duplicated; setups that load first, by path.

    Returns the entries and one line per folder that could not be listed. Never raises for an
    unreadable folder or file.
    """
    seen: set[Path] = set()
    found: list[Path] = []
    problems: list[str] = []
    for folder in folders:
        folder = Path(folder)
        try:
            children = sorted(folder.iterdir())
        except OSError as exc:
            problems.append(f"{_shown(folder)}: {exc.strerror or exc}")
            continue
        for child in children:
            try:
                if child.suffix.lower() != ".toml" or not child.is_file():
                    continue
                key = child.resolve()
            except OSError:
                continue
            if key not in seen and looks_like_setup(child):
                seen.add(key)
                found.append(child)
    entries = []
    for path in found:
        entries.append(SetupFileEntry(path, _shown(path), *_describe(path)))
    entries.sort(key=lambda e: (e.problem is not None, e.course, e.shown_path))  # setups, courses, then the rest
    return entries, problems


def _clip(text: str, room: int) -> str:
    return text if len(text) <= room else text[: max(room - 3, 0)] + "..."


def _clip_left(text: str, room: int) -> str:
    return text if len(text) <= room else "..." + text[-max(room - 3, 0):]


def entry_prompt(entry: SetupFileEntry) -> Content:
    """One line of the list: the setup's name and its path, or the path and the problem greyed.

    Long paths lose their start (the file name matters most), then the name or problem is cut.
    """
    words = one_line(entry.name if entry.problem is None else entry.problem)
    path = _clip_left(one_line(entry.shown_path), max(LINE_CHARS - 2 - len(words or ""), 32))
    words = _clip(words or "", max(LINE_CHARS - 2 - len(path), 12))
    if entry.problem is None:
        return Content.assemble((words, "bold"), "  ", (path, "$text-muted"))
    return Content.assemble(path, "  ", (words, "$text-muted"))


class OpenFileScreen(ModalScreen[Path | None]):
    """List the setups in `folders`; dismiss with the chosen path, or None on Esc."""

    CSS_PATH = "open_file.tcss"
    BINDINGS = [Binding("escape", "cancel", "Cancel", id="open_file.cancel")]

    def __init__(self, folders: list[Path]) -> None:
        super().__init__()
        self.folders = [Path(f) for f in folders]
        self.entries: list[SetupFileEntry] = []

    def compose(self) -> ComposeResult:
        with Vertical(id="open-box"):
            yield Plain("Open a setup, or a course to walk the rig over", id="open-title")
            yield Plain("Looking for .toml files...", id="open-status")
            yield OptionList(id="open-list", compact=True)
            yield Plain(KEYS, id="open-keys")

    def on_mount(self) -> None:
        self.set_class(bool(getattr(self.app, "ascii_only", False)), "-ascii")
        self.query_one("#open-list", OptionList).focus()
        self._scan()

    @work(thread=True, exclusive=True, group="open-file-scan", exit_on_error=False)
    def _scan(self) -> None:
        # Reading and checking every file is slow on a Pi with many setups: not in a handler.
        entries, problems = scan_setup_files(self.folders)
        try:
            self.app.call_from_thread(self._show, entries, problems)
        except RuntimeError:  # the app closed while the files were read
            pass

    def _show(self, entries: list[SetupFileEntry], problems: list[str]) -> None:
        if not self.is_attached:  # dismissed before the list was ready
            return
        self.entries = entries
        listing = self.query_one("#open-list", OptionList)
        listing.set_options(Option(entry_prompt(e), id=str(i)) for i, e in enumerate(entries))
        if entries:
            listing.highlighted = 0
        where = ", ".join(_folder_words(f) for f in self.folders) or "no folders"
        status = f"{len(entries)} file(s) in {where}" if entries else f"No .toml files in {where}"
        if problems:
            status += "; could not read " + "; ".join(problems)
        self.query_one("#open-status", Static).update(status)

    @on(OptionList.OptionSelected, "#open-list")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        """Enter on a file: hand back its path."""
        self.dismiss(self.entries[event.option_index].path)

    def action_cancel(self) -> None:
        self.dismiss(None)
