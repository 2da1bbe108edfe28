"""The tuner's file actions: save, save as, open and quit (which asks about unsaved changes).

A mixin of `SlopeTuneApp`; the state it reads and writes (`loaded`, `path`, `setup`,
`saved_setup`) lives on the app.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable, Optional

from slopetune.engine import SetupError, load_setup


class FileActions:
    """Save, save as, open and quit for `SlopeTuneApp`."""

    def action_save(self) -> None:
        """Save the setup to its file (asks for a name the first time)."""
        if self.path is None:
            self.action_save_as()
        else:
            self._save_to(self.path, force=False)

    def action_save_as(self, then: Optional[Callable[[], None]] = None) -> None:
        """Save the setup under another name (`then` runs once it is saved)."""
        # the bundled demo has no folder of the user's: offer the current one
        initial = str(self.path) if self.path else "my-setup.toml"

        def chosen(answer: Optional[str]) -> None:
            if not answer:
                return
            target = Path(answer).expanduser()
            if target.suffix != ".toml":
                target = target.with_name(target.name + ".toml")
            same = self.path is not None and _same_file(target, self.path)
            if target.exists() and not same:
                self._ask(f"{target} exists. Replace it?", "Replace", "Keep it",
                          lambda: self._save_to(target, force=True, then=then))
            else:
                self._save_to(target, force=False, then=then)

        self._push("slopetune.tui.screens.path_prompt", "PathPromptScreen",
                   lambda cls: cls("Save setup as", initial=initial), chosen, "save-as")

    def _save_to(self, target: Path, force: bool, then: Optional[Callable[[], None]] = None) -> None:
        from slopetune.engine.safe_text import one_line

        from .setup_writer import SaveError, SaveNeedsConfirmation, save_setup

        loaded = self.loaded
        try:
            saved = save_setup(loaded, self.setup, target, force=force)
        except SaveNeedsConfirmation as exc:  # changed on disk, or a link to nowhere
            self._ask(exc.question, exc.confirm, "Cancel", lambda: self._save_to(target, force=True, then=then))
            return
        except SaveError as exc:
            self._note(f"Not saved: {exc}", "error")
            self.notify(one_line(str(exc)), title="Not saved", severity="error")
            return
        self.loaded = saved
        self.path = saved.path
        self.saved_setup = self.setup
        self._show_title()
        self._note(f"Saved {saved.path}")
        if then is not None:
            then()

    def action_open(self) -> None:
        """Open another setup file."""
        def chosen(path: Optional[Path]) -> None:
            if path is None:
                return
            if self._walk_course_file(path):
                return  # a course file: the open rig walks over it, the setup stays
            if self.setup != self.saved_setup:
                self._ask("Discard the unsaved changes and open another file?", "Discard", "Keep editing",
                          lambda: self._open(path))
            else:
                self._open(path)

        self._push("slopetune.tui.screens.open_file", "OpenFileScreen", lambda cls: cls(self._folders()), chosen, "open")

    def _walk_course_file(self, path: Path) -> bool:
        """Open the course view on `path` with the open rig when it is a course file; False if not."""
        from slopetune.engine.course_file import looks_like_course, parse_course
        from slopetune.engine.setup_file import read_setup_text

        try:
            text = read_setup_text(path)[0]  # read once: the test and the parse share it
            if not looks_like_course(text):
                return False
            course = parse_course(text, str(path))[0]
        except SetupError as exc:
            self._note(str(exc), "error")
            return True
        self._push("slopetune.tui.course_screen", "CourseScreen",
                   lambda cls: cls(self.setup, setup_path=self.path, course=course), None, "the course view")
        return True

    def _open(self, path: Path) -> None:
        try:
            loaded = load_setup(path)
        except SetupError as exc:
            self._note(str(exc), "error")
            return
        self.loaded, self.path = loaded, loaded.path
        self.saved_setup = loaded.setup
        self._replace_setup(loaded.setup, "\n".join(loaded.warnings) if loaded.warnings else f"Opened {path}")

    def _folders(self) -> list[Path]:
        out: list[Path] = []
        for folder in (self.path.parent if self.path else None, Path.cwd() / "setups", Path.cwd()):
            if folder is not None and folder.is_dir() and all(not _same_file(folder, f) for f in out):
                out.append(folder)
        return out

    def action_quit(self) -> None:
        """Quit; asks first when there are unsaved changes."""
        if self.setup != self.saved_setup:
            where = self.path.name if self.path else "the demo copy"
            self._ask(f"Quit without saving the changes to {where}?", "Quit", "Keep editing",
                      lambda: self.exit(0), other=("Save and quit", self._save_and_quit))
        else:
            self.exit(0)


    def _save_and_quit(self) -> None:
        """Save (asking for a name if the setup has no file yet), then quit once it is saved."""
        if self.path is None:
            self.action_save_as(then=lambda: self.exit(0))
        else:
            self._save_to(self.path, force=False, then=lambda: self.exit(0))


def _same_file(a: Path, b: Path) -> bool:
    try:
        return Path(a).resolve() == Path(b).resolve()
    except OSError:
        return False
