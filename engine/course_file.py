"""Read a course file: ``schema = 1`` and one ``[course]`` table, nothing of the rig.

A course is terrain, not rig: one file per obstacle, walked with any setup. The ``[course]`` keys
and their checks are exactly those of a ``[course]`` inside a setup file (`engine.setup_file`),
so a course can move between the two without an edit. Problems are one `SetupError` line naming
the file, the line, the key and what is allowed.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional

from .safe_text import one_line
from .setup_file import BOM, SECTIONS, SetupError, _Reader, parse_toml, read_setup_text
from .setup_model import Course

COURSE_KEYS = ("schema", "course")


@dataclass
class LoadedCourse:
    """A course as read from disk."""

    path: Optional[Path]
    course: Course
    text: str = ""
    warnings: list = field(default_factory=list)


def parse_course(text: str, path: str = "<course>") -> tuple[Course, list]:
    """Check the TOML text of a course file; return (course, warnings) or raise `SetupError`."""
    if text.startswith(BOM):
        text = text[1:]
    if not text.strip():
        raise SetupError("file is empty; a course file needs schema = 1 and a [course] table", path)
    data, index = parse_toml(text, path)
    reader = _Reader(path, text, data, index)
    rig_parts = [k for k in data if k in SECTIONS and k != "course"]
    if rig_parts:
        raise SetupError(f"[{rig_parts[0]}] found: this is a setup file, not a course file (schema and [course] "
                         "only); walk its own course with slopetune walk FILE", path,
                         index.find(rig_parts[0]), rig_parts[0])
    for k, v in data.items():
        if k in COURSE_KEYS:
            continue
        if isinstance(v, dict):
            reader.fail(k, f"[{k}]: unknown section; a course file holds schema and [course] only")
        reader.unknown(k, k)
    reader.schema()  # the setup file's rule, word for word
    if "course" not in data:
        raise SetupError("[course]: missing section; required (name, points_mm, belly_clearance_mm)", path, None,
                         "course")
    course = reader.course()
    return course, [one_line(w) for w in reader.finish_warnings()]


def load_course(path) -> LoadedCourse:
    """Read, parse and check one course file.

    Raises
    ------
    SetupError
        For any file or value that cannot be used; its message is one line.
    """
    text, _mtime = read_setup_text(path)
    course, warnings = parse_course(text, str(path))
    return LoadedCourse(Path(path), course, text, warnings)


def looks_like_course(text: str) -> bool:
    """Cheap test for the tuner's file list: a ``[course]`` header and no rig section."""
    heads = {line.strip() for line in text.splitlines() if line.lstrip().startswith("[")}
    return "[course]" in heads and not any(h.startswith(f"[{s}") for h in heads for s in SECTIONS if s != "course")
