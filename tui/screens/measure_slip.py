"""The measuring screen's slip-stiffness sections: the slip test (per axle) and the ramp test.

The sums are the engine's (`engine.slip_calibration`) and the command line's (`measure_slip`): the
ramp test asks the analysis for the handover at each trial c, which takes a moment, so it runs in a
worker thread and only when its own reading changes.
"""

from __future__ import annotations

import math
import re
from typing import Optional

from textual import on, work
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Button, Input, Static

from slopetune.engine import Setup
from slopetune.engine.ballast import combine_ballast
from slopetune.engine.slip_calibration import board_rolling_dia_mm, slip_test

from .measure_fields import Plain, field_row, result_row, say, show_result


STIFFNESS_DIGITS = 1
SETTLE_S = 0.12

SLIP_TEST_HOW = (
    "Take the front driveshaft out to measure the rear (the rear one for the front). Chalk a tyre "
    "of the driving axle, creep up a board at a known angle, count the turns over a taped distance. "
    "Two or three angles are better. Hands clear of the wheels."
)
RAMP_STEPS = (
    "1. Unwind the driveline: roll back a little before every run.\n"
    "2. Set the board a few degrees steeper each run and creep up it.\n"
    "3. Note the angle where the overdriven tyres first slip: the handover\n"
    "   (none if they never slipped before the rig stopped climbing).\n"
    "4. Below: the range of c that fits it (+-1 deg). One reading can fit\n"
    "   a range, or none; Apply only when the range is closed at both ends."
)

_RUN_SPLIT = re.compile(r"[,;]\s*|\s+(?=\S+\s*:)")


def parse_runs(text: str) -> list[tuple[float, float, float]]:
    """Runs from "10:8:2650, 14:8:2600" ([deg]:[turns]:[mm] triples); ValueError names the bad one."""
    runs = []
    for n, piece in enumerate((p.strip() for p in _RUN_SPLIT.split(text.strip()) if p.strip()), 1):
        parts = piece.split(":")
        try:
            values = tuple(float(p.replace(",", ".")) for p in parts)
        except ValueError:
            values = ()
        if len(values) != 3 or not all(math.isfinite(v) for v in values):
            raise ValueError(f"run {n} '{piece}': write deg:turns:mm")
        runs.append(values)
    if not runs:
        raise ValueError("give one or more deg:turns:mm runs, e.g. 10:8:2650")
    return runs


class SlipStiffnessForm(Vertical):
    """Slip test and ramp test; an Apply dismisses the screen with the slip-stiffness key to change."""

    DEFAULT_CSS = """
    SlipStiffnessForm { height: auto; }
    """

    def __init__(self, setup: Setup) -> None:
        super().__init__(id="slip-form")
        self.setup = setup
        self.values: dict[str, Optional[tuple[str, float]]] = {"slip_test": None, "ramp": None}
        self._settle = None
        self._ramp_seen: Optional[str] = None

    # ---- layout -------------------------------------------------------------------------------

    def compose(self) -> ComposeResult:
        yield Plain("Slip stiffness c, slip test: one axle drives, count tyre turns", classes="m-heading")
        yield Plain(SLIP_TEST_HOW, classes="m-note")
        yield from field_row("m-slip-axle", "Driving axle", "rear", "")
        yield from field_row("m-slip-dia", "Roll-out diameter", "", "mm")
        yield from field_row("m-slip-runs", "Runs deg:turns:mm", "", "", wide=True)
        yield from result_row("slip_test", "Apply c")
        yield Plain("Slip stiffness c, ramp test (a check): the handover on a board", classes="m-heading")
        yield Plain(RAMP_STEPS, classes="m-note")
        yield from field_row("m-ramp", "Handover seen", "", "deg")
        yield Plain("", id="ramp-check", classes="m-check")
        yield from result_row("ramp", "Apply c")

    def on_mount(self) -> None:
        self.query_one("#m-slip-runs", Input).placeholder = "e.g. 10:8:2650, 14:8:2600"
        self.query_one("#m-slip-dia", Input).placeholder = "the file's"
        self.query_one("#m-ramp", Input).placeholder = "deg, or none"
        self._slip_test()
        self._show("ramp", None, "c by ramp: needs the handover you saw")

    # ---- helpers ------------------------------------------------------------------------------

    def _show(self, stem: str, value: Optional[tuple[str, float]], line: str) -> None:
        self.values[stem] = value
        show_result(self, stem, line, value is not None)

    # ---- slip test ----------------------------------------------------------------------------

    def _slip_test(self) -> None:
        axle = self.query_one("#m-slip-axle", Input).value.strip().lower()
        if axle not in ("rear", "front"):
            say(self, "m-slip-axle", "rear or front")
            axle = None
        else:
            say(self, "m-slip-axle", "", note=f"{'front' if axle == 'rear' else 'rear'} shaft out")
        typed = self.query_one("#m-slip-dia", Input).value.strip()
        dia_ok = True
        if typed:
            try:
                dia = float(typed.replace(",", "."))
                if not 1.0 <= dia <= 1e4:
                    raise ValueError
                say(self, "m-slip-dia", "")
            except ValueError:
                say(self, "m-slip-dia", "a diameter, 1 to 10000")
                dia_ok = False
        else:
            dia = None  # the file's roll-out at the axle's load on the board, per run
            say(self, "m-slip-dia", "", note="at the board's load")
        text = self.query_one("#m-slip-runs", Input).value
        runs = None
        if text.strip():
            try:
                runs = parse_runs(text)
                bad = next((r for r in runs if not (0 < r[0] < 90 and 0 < r[1] <= 1e4 and 0 < r[2] <= 1e7)), None)
                if bad:
                    raise ValueError(f"{bad[0]:g}:{bad[1]:g}:{bad[2]:g}: angle 0-90, turns and mm above 0")
                say(self, "m-slip-runs", "")
            except ValueError as exc:
                say(self, "m-slip-runs", str(exc))
                runs = None
        else:
            say(self, "m-slip-runs", "")
        if axle is None or not dia_ok or runs is None:
            self._show("slip_test", None, "c by slip test: needs the axle, the diameter and runs")
            return
        if dia is None:
            dia = board_rolling_dia_mm(self.setup, axle, [r[0] for r in runs])
        weight, b, h = combine_ballast(self.setup.rig)
        fs, _fk, rs, _rk = self.setup.grip.axle_mu()
        found = slip_test(weight, self.setup.rig.wheelbase_mm, b, h, self.setup.grip.rolling_resistance,
                          rs if axle == "rear" else fs, dia, [r[0] for r in runs], [r[1] for r in runs],
                          [r[2] for r in runs], axle=axle)
        if found.problems:
            i, why = found.problems[0]
            say(self, "m-slip-runs", f"run {i + 1}: see below")
        if not math.isfinite(found.stiffness_fit):
            i, why = found.problems[0]
            self._show("slip_test", None, f"run {i + 1}: {why}")
            return
        value = round(found.stiffness_fit, STIFFNESS_DIGITS)
        used = len(runs) - len(found.problems)
        left = f"; run {found.problems[0][0] + 1} left out: {found.problems[0][1]}" if found.problems else ""
        self._show("slip_test", (f"grip.{axle}_slip_stiffness", value),
                   f"{axle} c = {value:g}  (slip test, {used} run{'s' if used > 1 else ''}){left}")

    # ---- ramp test ----------------------------------------------------------------------------

    def _ramp(self) -> None:
        text = self.query_one("#m-ramp", Input).value.strip().lower()
        if text == self._ramp_seen:
            return
        self._ramp_seen = text
        check = self.query_one("#ramp-check", Static)
        check.update("")
        check.display = False
        if not text:
            say(self, "m-ramp", "")
            self._show("ramp", None, "c by ramp: needs the handover you saw")
            return
        if text in ("none", "never"):
            reading = None
        else:
            try:
                reading = float(text.replace(",", "."))
                if not (math.isfinite(reading) and 0 <= reading < 90):
                    raise ValueError
            except ValueError:
                say(self, "m-ramp", "an angle 0 to 90, or none")
                self._show("ramp", None, "c by ramp: needs the handover you saw")
                return
        say(self, "m-ramp", "")
        self._show("ramp", None, "c by ramp: working it out...")
        self._work_ramp(reading, text)

    @work(thread=True, exclusive=True, group="ramp")
    def _work_ramp(self, reading, text: str) -> None:
        from slopetune.engine.slip_calibration import handover_range

        found = handover_range(self.setup, reading)
        self.app.call_from_thread(self._ramp_done, found, text)

    def _ramp_done(self, found, text: str) -> None:
        if text != self._ramp_seen:
            return  # a newer reading is on its way
        check = self.query_one("#ramp-check", Static)
        check.update(found.words + ".")
        check.set_class(not found.fits, "-bad")
        check.set_class(found.fits, "-warn")
        check.display = True
        floor = 3.0 * max(self.setup.grip.axle_mu()[0::2])
        closed = found.fits and math.isfinite(found.high) and found.exact is not None and found.low > floor * 1.001
        if closed:
            value = round(found.exact, STIFFNESS_DIGITS)
            self._show("ramp", ("grip.slip_stiffness", value), f"c = {value:g}  (handover exactly as seen)")
        else:
            self._show("ramp", None, "c by ramp: no single value to apply (see above)")

    # ---- events -------------------------------------------------------------------------------

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        if self._settle is not None:
            self._settle.stop()
        self._settle = self.set_timer(SETTLE_S, self.flush)

    def flush(self) -> None:
        if self._settle is not None:
            self._settle.stop()
        self._settle = None
        self._slip_test()
        self._ramp()

    @on(Button.Pressed, "#slip_test-apply, #ramp-apply")
    def _apply(self, event: Button.Pressed) -> None:
        event.stop()  # not the screen's other sections
        self.flush()
        value = self.values.get(event.button.id.removesuffix("-apply"))
        if value is not None:
            self.screen.dismiss({value[0]: value[1]})
