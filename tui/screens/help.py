"""What the keys do, what the chart and flags mean, and the cautions; scrollable, fits 80x24."""

from __future__ import annotations

from typing import Optional

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.keys import key_to_character
from textual.screen import ModalScreen, Screen
from textual.widgets import Static

KEYS_CLOSE = "Up/Down, PgUp/PgDn: scroll   Esc or q: close"

FORM_TEXT = (
    "In the form: Up/Down move between fields, PgUp/PgDn from section to section (Terrain, Rig, "
    "Ballast, Driveline, Grip); Left/Right step the value (with Shift, or [ and ], a coarse step). "
    "Type a number and press Enter to set it exactly; Enter on a field offers its value, which the "
    "first key typed replaces (Right keeps it to edit); Esc cancels the typing. A value that is out "
    "of range or not a number is refused with the reason beside the field, and the last good value "
    "stays. The Rig section also shows the rig with its ballast (mass, front bias, CG height, CG "
    "from the rear axle): every figure is worked out for that rig.\n"
    "Ctrl+Z or z undoes the last change (steps, typed values, ballast, an accepted plan, a "
    "measurement); Ctrl+Y or Z does it again. The title's UNSAVED follows.\n"
    "When the flag is up, a Fix line under the status names the smallest change of each lever that "
    "clears it (the planner's answers); f opens the planner with that target.\n"
    "Ctrl+P opens the command palette: every action by name (shown in the footer from 90 columns)."
)

CHART_TEXT = (
    "The chart shows the normal force on the front axle and on the rear axle (grams-force, or "
    "ounces in imperial display) against the slope in degrees; nose up is positive. Marks: the "
    "setup's slope, B balance (front and rear carry the same), H handover, M max grade, and L front "
    "lift (the front axle carries nothing: past it the rig flips over backwards). A pinned baseline is drawn dimmed "
    "behind the current curves."
)

STATES_TEXT = (
    "Which axle lets go on a steady climb, slope by slope:\n"
    "  none    both axles grip\n"
    "  front   the front tyres slip first\n"
    "  rear    the rear tyres slip first\n"
    "  both    neither axle can carry the climb: the rig cannot hold the grade\n"
    "  lifted  an axle has left the ground (this outranks any slip)\n"
    "Handover: the smallest climbing slope where the overdriven axle is the first to slip under "
    "wind-up. Below it the other axle lets go first.\n"
    "Max grade: the steepest climb, counting up from 0°, that the rig holds with no axle slipping "
    "out and none lifted; the status says whether slip or lift ends it.\n"
    "The flag lights when the overdriven axle is, or is within a few degrees of becoming, the one "
    "likely to slip; a stronger flag when the rig cannot hold the grade or an axle lifts. The "
    "words always say it too, not only the colour."
)

CAUTIONS_TEXT = (
    "Driveline wind-up loads gears, shafts and motors: an overdriven axle fights the other one on "
    "every high-grip climb.\n"
    "The model is static: no bounce, no suspension travel, no motor torque limit. Check on the bench "
    "with hands clear of the driveline before trusting a number.\n"
    "Follow the local rules of the venue."
)

# Characters the texts above may hold, folded for terminals without Unicode.
_ASCII_FOLD = {
    "°": " deg", "μ": "mu", "—": "-", "–": "-", "≤": "<=", "≥": ">=", "×": "x", "→": "->",
    "←": "<-", "↑": "Up", "↓": "Down", "·": "*", "‘": "'", "’": "'", "“": '"', "”": '"', "…": "...",
    "⏎": "Enter",
}

_KEY_NAMES = {
    "up": "Up", "down": "Down", "left": "Left", "right": "Right", "escape": "Esc", "enter": "Enter",
    "tab": "Tab", "space": "Space", "pageup": "PgUp", "pagedown": "PgDn", "home": "Home",
    "end": "End", "delete": "Del", "backspace": "Backspace", "insert": "Ins", "ctrl": "Ctrl",
    "shift": "Shift", "alt": "Alt", "meta": "Meta", "super": "Super",
}


def ascii_fold(text: str) -> str:
    """`text` with every character outside ASCII replaced by an ASCII spelling (or `?`)."""
    out = []
    for ch in text:
        if ord(ch) < 128:
            out.append(ch)
        else:
            out.append(_ASCII_FOLD.get(ch, "?"))
    return "".join(out)


def key_label(key: str) -> str:
    """A key as people write it: "ctrl+s" -> "Ctrl+S", "question_mark" -> "?"."""
    parts = key.split("+")
    words = [_KEY_NAMES.get(p, p.title()) for p in parts[:-1]]
    last = parts[-1]
    if last in _KEY_NAMES:
        words.append(_KEY_NAMES[last])
    elif len(last) == 1:
        words.append(last.upper() if len(parts) > 1 else last)
    elif last.startswith("f") and last[1:].isdigit():
        words.append(last.upper())
    else:
        char = key_to_character(last)
        words.append(char if char and char.isprintable() else last.replace("_", " ").title())
    return "+".join(words)


def binding_rows(screen: Screen) -> list[tuple[str, str]]:
    """(keys, description) for every described binding active on `screen`, keys of one action merged.

    Falls back to the app's declared `BINDINGS` when the screen cannot tell (not mounted).
    """
    try:
        pairs = [(key, item.binding) for key, item in screen.active_bindings.items()]
    except Exception:
        pairs = [(b.key, b) for b in Binding.make_bindings(getattr(screen.app, "BINDINGS", []))]
    rows: dict[tuple[str, str], list[str]] = {}
    for key, binding in pairs:
        if not binding.description or not binding.id:
            continue  # the tuner's keys all have ids; the framework's own (Tab, Ctrl+C copy) do not
        keys = rows.setdefault((binding.action, binding.description), [])
        shown = binding.key_display or key_label(key)
        if shown not in keys:
            keys.append(shown)
    return [("/".join(keys), description) for (_, description), keys in rows.items()]


class HelpScreen(ModalScreen[None]):
    """Keys of the screen underneath, read at run time, then the fixed explanations."""

    CSS_PATH = "help.tcss"
    BINDINGS = [
        Binding("escape,q,f1,question_mark", "close", "Close help", id="help.close"),
        Binding("down,j", "scroll('down')", "Scroll down", show=False, id="help.down"),
        Binding("up,k", "scroll('up')", "Scroll up", show=False, id="help.up"),
        Binding("pagedown,space", "scroll('page_down')", "Page down", show=False, id="help.page_down"),
        Binding("pageup", "scroll('page_up')", "Page up", show=False, id="help.page_up"),
        Binding("home", "scroll('home')", "Top", show=False, id="help.home"),
        Binding("end", "scroll('end')", "Bottom", show=False, id="help.end"),
    ]

    def __init__(self, ascii_only: bool = False, rows: Optional[list[tuple[str, str]]] = None) -> None:
        """`rows`: the keys to list, read before this screen covers the one they belong to (once it
        is up, keys that only work on that screen, such as undo, no longer count as active)."""
        super().__init__()
        self.ascii_only = ascii_only
        self._rows = rows

    def _text(self, text: str) -> str:
        return ascii_fold(text) if self.ascii_only else text

    def compose(self) -> ComposeResult:
        with Vertical(id="help-box"):
            yield Static(self._text("slopetune — help"), id="help-title", markup=False)
            with VerticalScroll(id="help-body", can_focus=True):
                yield Static("Keys", classes="help-heading", markup=False)
                yield Static("", id="help-keys", markup=False)
                yield Static(self._text(FORM_TEXT), classes="help-text", markup=False)
                yield Static("The chart", classes="help-heading", markup=False)
                yield Static(self._text(CHART_TEXT), classes="help-text", markup=False)
                yield Static("States and flags", classes="help-heading", markup=False)
                yield Static(self._text(STATES_TEXT), classes="help-text", markup=False)
                yield Static("Cautions", classes="help-heading", markup=False)
                yield Static(self._text(CAUTIONS_TEXT), classes="help-text", markup=False)
            yield Static(self._text(KEYS_CLOSE), id="help-close", markup=False)

    def on_mount(self) -> None:
        self.set_class(self.ascii_only, "-ascii")
        rows = self._rows
        if rows is None:
            stack = self.app.screen_stack
            below = stack[-2] if len(stack) > 1 and stack[-1] is self else None
            rows = binding_rows(below) if below is not None else []
        if rows:
            width = min(max(len(k) for k, _ in rows), 24)
            lines = [f"  {keys:<{width}}  {description}" for keys, description in rows]
        else:
            lines = ["  (no keys are bound on the screen underneath)"]
        self.query_one("#help-keys", Static).update(self._text("\n".join(lines)))
        self.query_one("#help-body", VerticalScroll).focus()

    def action_scroll(self, how: str) -> None:
        body = self.query_one("#help-body", VerticalScroll)
        {
            "down": body.scroll_down, "up": body.scroll_up, "page_down": body.scroll_page_down,
            "page_up": body.scroll_page_up, "home": body.scroll_home, "end": body.scroll_end,
        }[how](animate=False)

    def action_close(self) -> None:
        self.dismiss(None)
