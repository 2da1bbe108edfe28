"""Random key storms against the tuner: no exception, and the screen always shows what was analysed.

Run: python bench/keystroke_storm.py [--storms 200] [--seed 313]
Goal: every storm ends with the tuner running and, at every check, the setup on screen (each form
row's value, the title) equal to the setup the engine analysed, and the status words, flag and
chart equal to what that analysis gives. A failure prints the seed, the storm number and its keys.
The tuner throttles a held key by design (the words follow at most 12 times and the chart 5 times a
second, each with a trailing update, the chart a frame after the words): a check first waits, at
most 2 s, until no update is owed, and an update still owed after 2 s is a failure too.

A storm is 10 to 40 keys drawn from arrows, digits, letters, Enter, Esc, Tab, editing keys and the
app's own bindings (read from its BINDINGS), with terminal resizes between 40x12 and 160x50 mixed
in. Storms run ten to a tuner (`--per-app`), each tuner fresh on a temporary copy of
setups/marmot-overdrive.toml; a failure prints the command that replays its tuner's storms. Left out: the bindings that quit or open file dialogs
(quit, save as, open, open as baseline); Ctrl+S is in (it saves the temporary copy).
"""

from __future__ import annotations

import argparse
import asyncio
import random
import shutil
import string
import sys
import tempfile
import time
import traceback
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from slopetune.engine import load_setup  # noqa: E402
from slopetune.tui.app import SlopeTuneApp  # noqa: E402
from slopetune.tui.widgets import form_fields as ff  # noqa: E402
from slopetune.tui.widgets.load_chart import chart_data  # noqa: E402
from slopetune.tui.widgets.setup_form import SetupForm  # noqa: E402
from slopetune.tui.status_words import status_view  # noqa: E402

SOURCE = ROOT / "setups" / "marmot-overdrive.toml"
LEFT_OUT = {"quit", "save_as", "open", "open_baseline"}  # quit, or a dialog that writes or opens files


def binding_keys() -> list[str]:
    """Every key the tuner and its form bind, minus the left-out actions."""
    keys, banned = [], []
    for cls in (SlopeTuneApp, SetupForm):
        for b in cls.BINDINGS:
            names = [k.strip() for k in b.key.split(",")]
            (banned if b.action.split("(")[0] in LEFT_OUT else keys).extend(names)
    return sorted(set(keys) - set(banned)), sorted(set(banned))


BOUND, BANNED = binding_keys()
ARROWS = ["up", "down", "left", "right", "shift+left", "shift+right"]
DIGITS = list(string.digits) + ["full_stop", "minus", "plus"]
LETTERS = [c for c in string.ascii_letters if c not in BANNED]
CONTROL = ["enter", "escape", "tab", "shift+tab", "backspace", "delete", "home", "end", "pageup", "pagedown",
           "space"]
POOLS = [(ARROWS, 35), (DIGITS, 15), (LETTERS, 10), (CONTROL, 20), (BOUND, 20)]


def storm_keys(seed: int, number: int, lengths=(10, 40)) -> list:
    """The keys (str) and resizes ((w, h)) of storm `number`; the same for the same seed."""
    rng = random.Random(f"{seed}:{number}")
    out = []
    for _ in range(rng.randint(*lengths)):
        if rng.random() < 0.08:
            out.append((rng.randint(40, 160), rng.randint(12, 50)))
            continue
        pool = rng.choices([p for p, _ in POOLS], weights=[w for _, w in POOLS])[0]
        out.append(rng.choice(pool))
    return out


def screen_problems(app) -> list[str]:
    """Where the screen and the analysis disagree ([] when they agree)."""
    a = app.analysis
    if a is None:
        return ["no analysis"]
    out = []
    if a.setup != app.setup:
        out.append("the engine analysed another setup than the app holds")
    form = app.form
    if form.setup != a.setup:
        out.append("the form shows another setup than the analysed one")
    rows = ff.build_rows(a.setup)
    if form.rows != rows:
        out.append(f"form has {len(form.rows)} rows, the analysed setup {len(rows)}")
    drawn = form._views  # what each row line was last drawn from (the form draws them itself)
    if len(drawn) != len(form.rows):
        out.append(f"{len(drawn)} rows drawn of {len(form.rows)}")
    for row, view in zip(form.rows, drawn):
        if view.editing is not None or row.kind == "heading":
            continue
        value, unit, inherited = ff.shown_value(a.setup, row, app.units)
        if (view.value, view.unit, view.inherited) != (value, unit, inherited):
            out.append(f"row {row.key or row.label!r} shows {view.value!r}, analysed {value!r}")
    base = app._baseline_analysis
    if (app.baseline is None) != (base is None) or (base is not None and base.setup != app.baseline.setup):
        out.append("baseline analysis does not match the baseline")
    view = status_view(a, app.units, base)
    if app.status.view != view:
        out.append("status words are not the analysis's")
    if (app.flag.level, app.flag.words) != (view.level, view.flag):
        out.append(f"flag shows {app.flag.words!r}, analysis says {view.flag!r}")
    if app.chart.data != chart_data(a, app.units, base):
        out.append("chart data are not the analysis's")
    if app.title_bar.setup_name != a.setup.name or app.title_bar.unsaved != app.unsaved:
        out.append("title does not match")
    return out


def _updates_pending(app) -> bool:
    """Whether the tuner still owes the screen an update: the words and the chart follow a held key
    at their own rates (12 and 5 a second) with one trailing update each, and the chart comes a
    frame after the words."""
    throttles = [getattr(app, name, None) for name in ("word_updates", "chart_updates")]
    return getattr(app, "_chart_pending", False) or any(t is not None and t.pending for t in throttles)


async def settle(app, pilot, limit_s: float = 2.0) -> list[str]:
    """Let the tuner finish the updates it owes; a problem when they are still owed after `limit_s`."""
    await pilot.pause()
    waited = 0.0
    while _updates_pending(app) and waited < limit_s:
        await pilot.pause(0.02)
        waited += 0.02
    return [f"screen update still owed after {limit_s:g} s"] if _updates_pending(app) else []


@dataclass
class StormResult:
    number: int
    keys: list
    checks: int = 0
    changed: bool = False  # the storm left the tuner on another setup than it found
    problems: list = field(default_factory=list)


async def _back_to_main(app, pilot) -> None:
    for _ in range(6):
        if app.screen is app.main_screen:
            return
        await pilot.press("escape")
        await pilot.pause()


async def _storm(app, pilot, res: StormResult, check_at: set) -> bool:
    """Press one storm's keys into a running tuner; False when the tuner stopped."""
    before = app.setup
    for i, key in enumerate(res.keys):
        if isinstance(key, tuple):
            await pilot.resize_terminal(*key)
        else:
            await pilot.press(key)
        if not app.is_running:
            res.problems.append(f"the tuner stopped after key {i} ({key!r})")
            return False
        if i in check_at and app.screen is app.main_screen:
            res.checks += 1
            found = await settle(app, pilot) + screen_problems(app)
            res.problems += [f"after key {i} ({key!r}): {p}" for p in found]
    await _back_to_main(app, pilot)
    if app.screen is not app.main_screen:
        res.problems.append(f"a {type(app.screen).__name__} would not close with Esc")
        return False
    res.checks += 1
    found = await settle(app, pilot) + screen_problems(app)
    res.problems += [f"at the end: {p}" for p in found]
    res.changed = app.setup != before
    return app.is_running


async def run_batch(seed: int, numbers: list, folder: Path, lengths=(10, 40)) -> list[StormResult]:
    """Storms `numbers` one after another in one tuner (a fresh one after any failure)."""
    results = [StormResult(n, storm_keys(seed, n, lengths)) for n in numbers]
    todo = list(results)
    while todo:
        path = folder / f"storm-{todo[0].number}.toml"
        shutil.copyfile(SOURCE, path)
        app = SlopeTuneApp(load_setup(path))
        current = None
        try:
            async with app.run_test(size=(100, 32)) as pilot:
                await pilot.pause()
                while todo:
                    current = todo.pop(0)
                    rng = random.Random(f"check:{seed}:{current.number}")
                    check_at = {rng.randrange(len(current.keys)) for _ in range(2)}
                    if not await _storm(app, pilot, current, check_at) or current.problems:
                        break
        except Exception:  # noqa: BLE001 - the exception is the finding
            if current is not None:
                current.problems.append("exception: " + traceback.format_exc(limit=6).strip())
    return results


def describe(seed: int, res: StormResult, first: int, count: int, per_app: int) -> str:
    batch0 = first + (res.number - first) // per_app * per_app
    n = min(per_app, first + count - batch0)
    return (f"storm {res.number}, seed {seed} (replay its tuner's storms: python bench/keystroke_storm.py "
            f"--seed {seed} --first {batch0} --storms {n} --per-app {per_app})\n"
            f"  keys: {res.keys}\n  " + "\n  ".join(res.problems[:5]))


async def run_storms(seed: int, first: int, count: int, per_app: int, folder: Path, lengths=(10, 40),
                     log=print) -> list[StormResult]:
    results = []
    numbers = list(range(first, first + count))
    for i in range(0, len(numbers), per_app):
        batch = await run_batch(seed, numbers[i:i + per_app], folder, lengths)
        results += batch
        for res in batch:
            if res.problems:
                log(describe(seed, res, first, count, per_app))
    return results


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--storms", type=int, default=200)
    ap.add_argument("--seed", type=int, default=313)
    ap.add_argument("--first", type=int, default=0, help="number of the first storm (to replay a batch)")
    ap.add_argument("--per-app", type=int, default=10, help="storms run one after another in one tuner (10)")
    args = ap.parse_args(argv)
    print(f"storm seed {args.seed}; keys drawn from {len(BOUND)} bound keys {BOUND} and arrows, digits, "
          f"letters, Enter, Esc, Tab; left out: {BANNED}")
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        results = asyncio.run(run_storms(args.seed, args.first, args.storms, args.per_app, Path(tmp)))
    keys = sum(sum(not isinstance(k, tuple) for k in r.keys) for r in results)
    resizes = sum(sum(isinstance(k, tuple) for k in r.keys) for r in results)
    failed = [r for r in results if r.problems]
    print(f"storms: {len(results)}, keys: {keys}, resizes: {resizes}, screen-vs-analysis checks: "
          f"{sum(r.checks for r in results)}, storms that changed the setup: {sum(r.changed for r in results)}, "
          f"failed storms: {len(failed)} ({time.perf_counter() - t0:.0f} s)")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
