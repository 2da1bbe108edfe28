"""Round two of hostile input: special files, nesting, huge keys, slow line finding, stage ratios,
overflowing options, stray warnings, byte-order marks, terminal escapes and absurd readings.

Each case is one class the first fuzz never produced (issue 12, items 1-6, 8, 9 and `measure`).
Expected behaviour comes from outside the code: POSIX file types (stat(2), S_ISREG), the TOML 1.0
grammar (https://toml.io/en/v1.0.0), the UTF-8 byte-order mark EF BB BF (Unicode 15.0, section
23.8), the terminal control sequences of ECMA-48 (ESC, CSI) and the bidi controls of Unicode
UAX #9; time bounds are generous budgets, not speed goals (those live in bench/).
"""

from __future__ import annotations

import os
import re
import sys
import threading
import time
import warnings
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench import fuzz_documents as fd  # noqa: E402
from slopetune.engine import SetupError, check_value, load_setup, parse_setup  # noqa: E402
from slopetune.engine.safe_text import one_line, safe_lines  # noqa: E402
from slopetune.engine.setup_file import find_line  # noqa: E402
from slopetune.tui.cli import main  # noqa: E402

STOCK = fd.SHIPPED_TEXT[0]
GEARS = fd.SHIPPED_TEXT[1]


def _run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def _one_clean_line(err: str) -> str:
    lines = err.strip().splitlines()
    # "slopetune: ..." or, for a command's argument, "slopetune measure mu: ..."
    assert len(lines) == 1 and re.match(r"slopetune( [a-z-]+)*: ", lines[0]) and "Traceback" not in err, err
    return lines[0]


# ---------------------------------------------------------------- 1: special files, capped read

def _with_timeout(fn, seconds=5.0):
    box = {}
    t = threading.Thread(target=lambda: box.setdefault("r", _catch(fn)), daemon=True)
    t.start()
    t.join(seconds)
    assert not t.is_alive(), "hung on a special file"
    return box["r"]


def _catch(fn):
    try:
        return fn()
    except SetupError as exc:
        return exc


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom", "/dev/null"])
def test_a_device_is_refused_before_it_is_read(device):
    if not os.path.exists(device):
        pytest.skip(f"{device} missing")
    err = _with_timeout(lambda: load_setup(device))
    assert isinstance(err, SetupError) and "device" in str(err) and "regular file" in str(err)


def test_a_fifo_is_refused_without_waiting_for_a_writer(tmp_path):
    # POSIX: opening a FIFO for reading blocks until a writer opens it, unless O_NONBLOCK.
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    err = _with_timeout(lambda: load_setup(fifo))
    assert isinstance(err, SetupError) and "FIFO" in str(err)


def test_a_fifo_on_the_command_line_is_one_line_and_exit_2(tmp_path, capsys):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    code, _, err = _run(["report", str(fifo)], capsys)
    assert code == 2 and "FIFO" in _one_clean_line(err)


def test_a_file_over_the_cap_is_refused_by_size(tmp_path):
    big = tmp_path / "big.toml"
    big.write_bytes(b"# " + b"x" * (1 << 20) + b"\n")
    with pytest.raises(SetupError, match="under 1 MiB"):
        load_setup(big)


# ---------------------------------------------------------------- 2, 3: nesting and dotted keys

@pytest.mark.parametrize("depth", [33, 400, 5000])
def test_deep_nesting_is_one_line_not_a_recursion_error(depth):
    # TOML 1.0 allows arrays of arrays to any depth; a setup nests 2 deep ([x, z] points).
    for opener, closer in (("[", "]"), ("{a = ", "}")):
        text = STOCK + "\nx = " + opener * depth + closer * depth + "\n"
        t0 = time.perf_counter()
        with pytest.raises(SetupError, match="nested more than 32"):
            parse_setup(text, "deep.toml")
        assert time.perf_counter() - t0 < 1.0


def test_nesting_at_the_bound_still_loads():
    text = STOCK.replace("[rig]", "extra = " + "[" * 32 + "]" * 32 + "\n[rig]")
    setup, _, warnings_ = parse_setup(text, "ok.toml")
    assert setup.rig.mass_g == 2380 and any("extra" in w for w in warnings_)


@pytest.mark.parametrize("where", ["top", "header", "inline"])
def test_a_dotted_key_of_tens_of_thousands_of_parts_is_refused_fast(where):
    key = ".".join(["a"] * 30000)  # about 60 KB: the parser alone would take gigabytes
    text = {"top": STOCK.replace("[rig]", f"{key} = 1\n[rig]"),
            "header": STOCK + f"\n[{key}]\n",
            "inline": STOCK.replace("[rig]", f"z = {{ {key} = 1 }}\n[rig]")}[where]
    t0 = time.perf_counter()
    with pytest.raises(SetupError, match="more than 32 dotted parts"):
        parse_setup(text, "dots.toml")
    assert time.perf_counter() - t0 < 1.0


def test_quoted_and_spaced_dotted_keys_count_alike():
    key = " . ".join(['"a"'] * 40)  # TOML 1.0: whitespace around the dot is ignored
    with pytest.raises(SetupError, match="dotted parts"):
        parse_setup(STOCK.replace("[rig]", f"{key} = 1\n[rig]"), "dots.toml")


def test_brackets_inside_strings_do_not_count_as_nesting():
    text = STOCK.replace('notes = ', 'extra = "' + "[" * 200 + '"\nmore = """\n' + "{" * 200 + '\n"""\nnotes = ', 1)
    setup, _, _ = parse_setup(text, "ok.toml")
    assert setup.rig.mass_g == 2380


@pytest.mark.parametrize("what, text, words", [
    ("tables", STOCK + "".join(f"\n[t{i}]\nk = 1\n" for i in range(1001)), r"1000 \[table\] headers"),
    ("array", STOCK + "x = [" + ",".join(["1"] * 100_001) + "]\n", "100000 array elements"),
    ("keys", STOCK + "\n".join(f"k{i} = 1" for i in range(10_001)), "10000 keys"),
    ("ballast", STOCK + '\n[[rig.ballast]]\nname = "x"\nmass_g = 1\nx_mm = 150\nz_mm = 40\n' * 101, "at most 100"),
])
def test_a_small_file_costs_a_small_bound(what, text, words):
    # each shape is far beyond any real setup (about 40 keys, 6 tables, a few ballast items)
    t0 = time.perf_counter()
    with pytest.raises(SetupError, match=words):
        parse_setup(text, "big.toml")
    assert time.perf_counter() - t0 < 1.0


# ---------------------------------------------------------------- 4: linear line finding

def test_a_long_header_like_line_in_a_multiline_string_is_found_fast():
    text = STOCK.replace("[rig]", 'blob = """\n[' + " " * 20000 + 'x\n"""\n[rig]') + "\n[grip]\nmu_static = 9\n"
    t0 = time.perf_counter()
    with pytest.raises(SetupError):
        parse_setup(text, "slow.toml")
    assert find_line(text, "rig.mass_g") is not None
    assert time.perf_counter() - t0 < 1.0


def test_thousands_of_unknown_keys_warn_in_linear_time_and_briefly():
    n = 5000
    text = STOCK.replace("[rig]", "[rig]\n" + "\n".join(f"k{i} = {i}" for i in range(n)))
    t0 = time.perf_counter()
    _, _, warns = parse_setup(text, "many.toml")
    assert time.perf_counter() - t0 < 2.0
    assert len(warns) <= 21 and f"{n - 20} more unknown keys" in warns[-1]
    # the line numbers are those of the keys themselves (counted by hand: [rig] is line 8 of the stock file)
    rig_line = STOCK.splitlines().index("[rig]") + 1
    assert warns[0].startswith(f"many.toml:{rig_line + 1}: unknown key rig.k0")


def test_line_finder_knows_dotted_and_inline_layouts():
    text = 'schema = 1\nrig.mass_g = 5\n[grip]\nmu_static = 1\n[[rig.ballast]]\nx_mm = 1\n[[rig.ballast]]\nx_mm = 2\n'
    assert find_line(text, "rig.mass_g") == 2
    assert find_line(text, "grip.mu_static") == 4
    assert find_line(text, "rig.ballast.1.x_mm") == 8
    assert find_line(text, "rig.ballast") == 5
    assert find_line('a = """\n[rig]\nmass_g = 1\n"""\n[rig]\nmass_g = 2\n', "rig.mass_g") == 6


# ---------------------------------------------------------------- 5: gear-stage ratio range

UNDERFLOW = (GEARS.replace("front_stages = [[13, 38]]", "front_stages = " + str([[1, 1000]] * 10))
             .replace("rear_stages = [[13, 40]]", "rear_stages = " + str([[1000, 1]] * 10)))


def test_stages_whose_ratio_leaves_the_range_are_refused_by_the_loader():
    # front reduction 1000**10, rear 1000**-10: front turns 1e-60 per rear turn, i.e. -100 % (hand-worked)
    with pytest.raises(SetupError) as err:
        parse_setup(UNDERFLOW, "gears.toml")
    assert err.value.key == "driveline.front_stages" and "overdrive of -100 %" in str(err.value)


def test_the_form_refuses_the_same_stage_change():
    setup = fd.BASE_SETUPS[1]  # [[13, 38]] front, [[13, 40]] rear
    # driven 38 -> 1000 on the front: 40/1000*... front turns 13/1000 / (13/40) = 0.04 per rear turn: -96 %
    problem = check_value(setup, "driveline.front_stages.0.1", 1000)
    assert problem and "overdrive" in problem
    assert check_value(setup, "driveline.front_stages.0.1", 39) is None  # 40/39 - 1 = +2.6 %


def test_underflowing_stages_on_the_command_line_are_one_line(tmp_path, capsys):
    path = tmp_path / "gears.toml"
    path.write_text(UNDERFLOW, encoding="utf-8")
    code, _, err = _run(["report", str(path)], capsys)
    assert code == 2 and "driveline" in _one_clean_line(err)


# ---------------------------------------------------------------- 6: report --step overflow

@pytest.mark.parametrize("step", ["5e-324", "1e-300", "1e-10"])
def test_a_tiny_report_step_is_one_line(tmp_path, capsys, step):
    code, _, err = _run(["report", str(ROOT / "setups" / "marmot-stock.toml"), "--step", step], capsys)
    assert code == 2 and "--step" in _one_clean_line(err)


# ---------------------------------------------------------------- 8: warnings, byte-order mark

def _overflow_warnings(quiet: bool) -> list:
    import numpy as np

    import slopetune.tui.cli as cli

    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        if quiet:
            cli.quiet_float_warnings()  # what main() installs first
        with np.errstate(all="warn"):
            np.float64(1e308) * 10  # IEEE 754 overflow; numpy warns under errstate "warn"
    return [w for w in seen if issubclass(w.category, RuntimeWarning)]


def test_numpy_float_warnings_never_reach_stderr():
    assert _overflow_warnings(quiet=False), "control: the overflow does warn without the filter"
    assert not _overflow_warnings(quiet=True)


def test_a_byte_order_mark_is_accepted_and_kept(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + STOCK.encode())
    loaded = load_setup(path)
    assert loaded.bom and loaded.setup.rig.mass_g == 2380
    from slopetune.tui.setup_writer import save_setup

    save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    raw = path.read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf") and raw.count(b"\xef\xbb\xbf") == 1 and b"mass_g = 2400" in raw


def test_a_utf16_file_is_refused_saying_so(tmp_path):
    path = tmp_path / "u16.toml"
    path.write_bytes(STOCK.encode("utf-16"))  # starts FF FE (little-endian BOM)
    with pytest.raises(SetupError, match="UTF-16"):
        load_setup(path)


# ---------------------------------------------------------------- 9: escapes and bidi

EVIL = "evil\x1b]2;PWNED\x07\x1b[2J\u202eabc\x9b31m\u2066"


def test_the_shared_rule_spells_out_every_control_and_bidi_character():
    for text in (EVIL, "\x00\x1f\x7f\x85\u2028\u200e\u061c"):
        shown = one_line(text)
        assert not re.search("[\x00-\x1f\x7f-\x9f\u2028\u2029\u200e\u200f\u061c\u202a-\u202e\u2066-\u2069]", shown)
    assert one_line(EVIL) == "evil\\x1b]2;PWNED\\x07\\x1b[2J\\u202eabc\\x9b31m\\u2066"
    assert safe_lines("a\n\tb\x1b") == "a\n\tb\\x1b"  # line breaks and tabs kept for reports
    assert one_line("Marmot 313 — Grey Hollow, Ümlaut, 日本") == "Marmot 313 — Grey Hollow, Ümlaut, 日本"


def test_report_prints_file_text_escaped(tmp_path, capsys):
    path = tmp_path / "evil.toml"
    path.write_text(STOCK.replace('name = "', 'name = "\\u001b]2;PWNED\\u0007\\u202e', 1), encoding="utf-8")
    code, out, _ = _run(["report", str(path)], capsys)
    assert code in (0, 1) and "\x1b" not in out and "\u202e" not in out and "\\x1b]2;PWNED" in out
    code, out, _ = _run(["report", str(path), "--json"], capsys)
    import json

    assert json.loads(out)["name"].startswith("\x1b]2;PWNED")  # JSON keeps the exact text, escaped


# ---------------------------------------------------------------- measure: absurd readings

@pytest.mark.parametrize("argv", [
    ["bias", "--front", "1e307", "--total", "1e308"],
    ["bias", "--front", "5e-324", "--total", "2000"],
    ["cg-height", "--level-front", "1000", "--lift", "100:1e300", "--total", "2000", "--wheelbase", "300",
     "--axle-height", "50"],
    ["cg-height", "--level-front", "1000", "--lift", "5e-324:1100", "--total", "2000", "--wheelbase", "300",
     "--axle-height", "50"],
    ["mu", "--angle", "79"],  # tan 79 deg = 5.14 (table value), above the file's mu limit of 5
])
def test_measure_refuses_absurd_readings(capsys, argv):
    code, out, err = _run(["measure", *argv], capsys)
    line = _one_clean_line(err)
    assert code == 2 and "inf" not in out + line and not re.search(r"\d{20}", out + line)


def test_measure_still_takes_a_sane_reading(capsys):
    code, out, _ = _run(["measure", "bias", "--front", "1300", "--total", "2000"], capsys)
    assert code == 0 and "65.0 %" in out  # 1300 / 2000 = 65 % (hand-worked), shown as stored (0.1 %)


def test_the_tuner_draws_file_text_escaped(tmp_path):
    """Title line and form rows of a setup whose name and notes hold ESC, BEL, C1 and RLO (ECMA-48,
    UAX #9): every drawn line is free of them, and the spelled-out form is there to read."""
    import asyncio

    from slopetune.tui.app import SlopeTuneApp

    path = tmp_path / "evil.toml"
    path.write_text(STOCK.replace('name = "', 'name = "\\u001b]2;PWNED\\u0007\\u009b\\u202e', 1)
                    .replace('notes = "', 'notes = "\\u001b[2J', 1), encoding="utf-8")

    async def go():
        app = SlopeTuneApp(load_setup(path))
        async with app.run_test(size=(100, 40)) as pilot:
            await pilot.pause()
            app.form.focus_key("notes")  # the last row: the form scrolls to it, "name" just above
            await pilot.pause()
            title = app.title_bar.render().plain
            form = [app.form.render_line(y).text for y in range(app.form.size.height)]
            return title, form

    title, form = asyncio.run(go())
    shown = title + "\n".join(form)
    assert not re.search("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]", shown)
    assert "\\x1b]2;PWNED" in title
    assert any("\\x1b[2J" in line for line in form)


def test_the_tuner_refuses_a_stage_that_leaves_the_range_and_keeps_running():
    """Typing 1000 teeth on the front driven gear: 40/1000 - 1 = -96 % overdrive (hand-worked),
    outside -50..100 %: the form says so, the setup keeps 38 teeth, the tuner runs on."""
    import asyncio

    from slopetune.tui.app import SlopeTuneApp

    async def go():
        app = SlopeTuneApp(load_setup(ROOT / "setups" / "marmot-overdrive.toml"))
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            assert app.form.focus_key("driveline.front_stages.0.1")
            await pilot.press("enter", "1", "0", "0", "0", "enter")
            await pilot.pause()
            return app.is_running, app.setup.driveline.front_stages, app.form.error_for("driveline.front_stages.0.1")

    running, stages, error = asyncio.run(go())
    assert running and stages == ((13, 38),) and "overdrive of -96 %" in error
