"""Structure-aware fuzz strategies and checks: the input classes the first fuzz never made.

Used by bench/fuzz_inputs.py (families) and tests/test_fuzz_structures.py (CI profile). Each
strategy builds its input from the shape that breaks things, not from random characters:
nesting depth, dotted-key length, header-like lines inside multi-line strings, thousands of
unknown keys, extreme but legal gear stages, every TOML layout the loader accepts (dotted keys,
inline tables, inline ballast arrays, out-of-order tables, byte-order marks, CRLF), control and
bidi characters in file text, special files, extreme sizes, extreme command-line numbers and
planner limits far wider than needed.
"""

from __future__ import annotations

import contextlib
import copy
import dataclasses
import io
import os
import re
import threading
import time
from pathlib import Path

import tomlkit
from hypothesis import strategies as st

from slopetune.engine import BallastItem, SetupError, load_setup

from bench import fuzz_checks as fc
from bench import fuzz_documents as fd

# A small file must never cost more than this (generous for a slow 2-core machine).
CASE_BUDGET_S = 2.0
UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u2028\u2029\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]")
STOCK = fd.SHIPPED_TEXT[0]


def timed(fn, *args):
    """Run `fn(*args)`; AssertionError when it takes longer than `CASE_BUDGET_S`."""
    t0 = time.perf_counter()
    out = fn(*args)
    took = time.perf_counter() - t0
    assert took < CASE_BUDGET_S, f"took {took:.1f} s (budget {CASE_BUDGET_S} s)"
    return out


def _splice(draw, text: str, piece: str) -> str:
    """`piece` as its own line at a drawn line boundary of `text` (top, inside a section, end)."""
    lines = text.split("\n")
    i = draw(st.integers(0, len(lines)))
    return "\n".join(lines[:i] + [piece] + lines[i:])


# ---------------------------------------------------------------------------- nesting, keys, lines

depths = st.one_of(st.integers(1, 40), st.sampled_from([31, 32, 33, 64, 200, 400, 1000, 5000]))


@st.composite
def nested_texts(draw):
    depth = draw(depths)
    opener, closer = draw(st.sampled_from([("[", "]"), ("{a = ", "}"), ("[{b = ", "}]")]))
    value = opener * depth + closer * depth
    where = draw(st.sampled_from(["value", "string", "multiline", "comment"]))
    piece = {"value": f"deep = {value}", "string": f"deep = {value!r}".replace("'", '"'),
             "multiline": f'deep = """\n{value}\n"""', "comment": f"# {value}"}[where]
    return _splice(draw, draw(st.sampled_from(fd.SHIPPED_TEXT)), piece)


@st.composite
def dotted_key_texts(draw):
    n = draw(st.one_of(st.integers(1, 40), st.sampled_from([32, 33, 100, 5000, 30000, 60000])))
    part = draw(st.sampled_from(["a", '"a"', "'q'", "a_1", '"x.y"']))
    sep = draw(st.sampled_from([".", " . ", "\t.\t"]))
    key = sep.join([part] * n)
    where = draw(st.sampled_from(["top", "header", "aot", "inline"]))
    piece = {"top": f"{key} = 1", "header": f"[{key}]", "aot": f"[[{key}]]", "inline": f"z = {{ {key} = 1 }}"}[where]
    return _splice(draw, STOCK, piece)


@st.composite
def slow_line_texts(draw):
    """Header-like long lines in multi-line strings, thousands of unknown keys, a bad value after."""
    text = draw(st.sampled_from(fd.SHIPPED_TEXT))
    n = draw(st.sampled_from([100, 2000, 20000]))
    blob = draw(st.sampled_from(["[" + " " * n + "x", "[[" + "a." * (n // 4) + " ", "[" + '"' * 2 + " " * n]))
    text = _splice(draw, text, f'blob = """\n{blob}\n"""')
    keys = draw(st.sampled_from([0, 50, 3000]))
    if keys:
        section = draw(st.sampled_from(["[rig]", "[grip]", "[terrain]"]))
        text = text.replace(section, section + "\n" + "\n".join(f"unknown_{i} = {i}" for i in range(keys)), 1)
    if draw(st.booleans()):
        text = text.replace("mu_static = 1.0", "mu_static = 9.0", 1)  # an error whose line is looked up
    return text


# ---------------------------------------------------------------------------- gear stages

teeth = st.one_of(st.integers(1, 1000), st.sampled_from([1, 2, 999, 1000]))
stage_list = st.lists(st.tuples(teeth, teeth), min_size=1, max_size=10)


@st.composite
def stage_texts(draw):
    f, r = draw(stage_list), draw(stage_list)
    fmt = lambda s: "[" + ", ".join(f"[{a}, {b}]" for a, b in s) + "]"  # noqa: E731
    return fd.SHIPPED_TEXT[1].replace("front_stages = [[13, 38]]", f"front_stages = {fmt(f)}").replace(
        "rear_stages = [[13, 40]]", f"rear_stages = {fmt(r)}")


# ---------------------------------------------------------------------------- layouts

LAYOUTS = ("tables", "dotted", "inline", "inline ballast", "out of order")


def _v(value) -> str:
    """One value on one line (tables inline, lists of tables as arrays of inline tables)."""
    if isinstance(value, dict):
        return _inline(value)
    if isinstance(value, list):
        return "[" + ", ".join(_v(v) for v in value) + "]"
    return tomlkit.item(value).as_string()


def _inline(table: dict) -> str:
    return "{ " + ", ".join(f"{k} = {_v(v)}" for k, v in table.items()) + " }"


def render_layout(doc: dict, layout: str, crlf: bool = False, bom: bool = False) -> tuple[str, list[str]]:
    """(TOML text of `doc` in `layout`, comment markers that no edit may lose)."""
    keep: list[str] = []

    def mark(name):
        keep.append(f"# keep {name}")
        return f"  # keep {name}"

    lines = ["# fuzz layout " + layout + mark("head")]
    top = {k: v for k, v in doc.items() if not isinstance(v, dict)}
    sections = {k: v for k, v in doc.items() if isinstance(v, dict)}
    for k, v in top.items():
        lines.append(f"{k} = {_v(v)}" + (mark(k) if k == "schema" else ""))
    rig = dict(sections.get("rig", {}))
    ballast = rig.pop("ballast", None)
    if layout == "dotted":
        for s, table in sections.items():
            for k, v in table.items():
                if s == "rig" and k == "ballast":
                    lines.append("rig.ballast = [" + ", ".join(_inline(b) for b in v) + "]")
                else:
                    lines.append(f"{s}.{k} = {_v(v)}" + (mark(f"{s}.{k}") if s != "driveline" else ""))
    elif layout == "inline":
        for s, table in sections.items():
            lines.append(f"{s} = {_inline(table)}" + (mark(s) if s != "driveline" else ""))
    else:
        order = list(sections)
        if layout == "out of order" and ballast:
            for b in ballast:
                lines += ["", "[[rig.ballast]]"] + [f"{k} = {_v(v)}" for k, v in b.items()]
        if layout == "out of order":
            order = order[::-1]
        for s in order:
            table = rig if s == "rig" else sections[s]
            lines += ["", f"[{s}]" + (mark(f"[{s}]") if s != "driveline" else "")]
            for k, v in table.items():
                lines.append(f"{k} = {_v(v)}" + (mark(f"{s}.{k}") if s != "driveline" else ""))
            if s == "rig" and ballast and layout == "inline ballast":
                lines.append("ballast = [" + mark("ballast array"))
                lines += [f"  {_inline(b)}," for b in ballast]
                lines.append("]")
            if s == "rig" and ballast and layout == "tables":
                for b in ballast:
                    lines += ["", "[[rig.ballast]]"] + [f"{k} = {_v(v)}" for k, v in b.items()]
    text = "\n".join(lines) + "\n"
    if crlf:
        text = text.replace("\n", "\r\n")
    return ("\ufeff" if bom else "") + text, keep


EDITS = ("mass", "add ballast", "drop ballast", "gears", "percentage", "name")


def apply_edit(setup, edit: str, evil_name: str):
    rig = setup.rig
    if edit == "mass":
        return setup.with_value("rig.mass_g", rig.mass_g + 12.5)
    if edit == "add ballast":
        item = BallastItem(evil_name or "lead", 25.0, rig.wheelbase_mm / 2, 30.0)
        return dataclasses.replace(setup, rig=dataclasses.replace(rig, ballast=rig.ballast + (item,)))
    if edit == "drop ballast":
        return dataclasses.replace(setup, rig=dataclasses.replace(rig, ballast=rig.ballast[:-1]))
    if edit == "gears":
        return dataclasses.replace(setup, driveline=dataclasses.replace(
            setup.driveline, overdrive_pct=None, front_stages=((13, 38),), rear_stages=((13, 40),)))
    if edit == "percentage":
        return dataclasses.replace(setup, driveline=dataclasses.replace(
            setup.driveline, overdrive_pct=4.5, front_stages=None, rear_stages=None))
    return dataclasses.replace(setup, name=evil_name or "renamed")


evil_text = st.one_of(st.just(""), st.text(alphabet=st.sampled_from(
    list("ab #[]{}\"'\\=.") + ["\x1b", "\x07", "\x9b", "\u202e", "\u2066", "\n", "\t", "\u2028", "\x00"]),
    min_size=1, max_size=12))


def check_layout_save(doc: dict, layout: str, crlf: bool, bom: bool, edit: str, evil: str, folder: Path) -> str:
    """Load the layout, edit, save: saved and read back equal with every kept comment, or a clean
    SaveError with the file untouched. Returns the outcome."""
    from slopetune.tui.setup_writer import SaveError, save_setup, setup_difference

    text, keep = render_layout(doc, layout, crlf, bom)
    path = folder / "layout.toml"
    path.write_bytes(text.encode("utf-8"))
    try:
        loaded = load_setup(path)
    except SetupError as exc:
        fc.check_error(exc, str(path))
        return "refused on load"
    new = apply_edit(loaded.setup, edit, evil)
    before = path.read_bytes()
    try:
        save_setup(loaded, new)
    except SaveError as exc:
        assert "\n" not in str(exc), f"save error not one line: {exc!r}"
        assert path.read_bytes() == before, "a refused save changed the file"
        return "refused on save"
    back = load_setup(path)
    diff = setup_difference(new, back.setup)
    assert diff is None, f"{layout}/{edit}: reads back different at {diff}"
    saved = path.read_text(encoding="utf-8-sig")
    lost = [k for k in keep if k not in saved]
    assert not lost, f"{layout}/{edit}: comments lost {lost}"
    assert back.bom == bom, "byte-order mark not kept"
    return "saved"


layout_cases = st.tuples(st.sampled_from(fd.BASE_DOCS), st.sampled_from(LAYOUTS), st.booleans(), st.booleans(),
                         st.sampled_from(EDITS), evil_text)


# ---------------------------------------------------------------------------- escapes in printed text

@st.composite
def escape_texts(draw):
    doc = copy.deepcopy(draw(st.sampled_from(fd.BASE_DOCS)))
    bad = draw(st.text(alphabet=st.sampled_from(
        ["\x1b", "]", "2", ";", "\x07", "[", "J", "\x9b", "\u202e", "\u2066", "\u200f", "\x7f", "a"]), min_size=1,
        max_size=16))
    where = draw(st.sampled_from(["name", "notes", "ballast", "course"]))
    if where in ("name", "notes"):
        doc[where] = bad
    elif where == "ballast" and doc["rig"].get("ballast"):
        doc["rig"]["ballast"][0]["name"] = bad
    elif where == "course" and "course" in doc:
        doc["course"]["name"] = bad
    else:
        doc["name"] = bad
    return tomlkit.dumps(doc)


def check_printed_text(text: str, folder: Path) -> None:
    """`slopetune report` (text and JSON) never writes a raw control or bidi character."""
    from slopetune.tui.cli import main

    path = folder / "escape.toml"
    path.write_text(text, encoding="utf-8")
    for extra in ([], ["--json"]):
        out, err = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main(["report", str(path), *extra])
        assert code in (0, 1, 2)
        bad = UNSAFE.search(out.getvalue()) or UNSAFE.search(err.getvalue())
        assert not bad, f"raw {bad.group()!r} printed"


# ---------------------------------------------------------------------------- command-line numbers

cli_numbers = st.one_of(st.sampled_from([str(x) for x in fd.SPECIAL_NUMBERS] + ["5e-324", "1e308", "-1e308", "nan",
                                                                              "inf", "1e-320", "0"]),
                        st.floats().map(repr))


@st.composite
def cli_argvs(draw):
    """Options spelled --name=VALUE, so a negative number reaches the command, not argparse."""
    n = cli_numbers
    kind = draw(st.sampled_from(["report", "bias", "cg", "mu", "plan"]))
    stock = str(fd.SHIPPED[0])
    if kind == "report":
        return ["report", stock, f"--from={draw(n)}", f"--to={draw(n)}", f"--step={draw(n)}"]
    if kind == "bias":
        return ["measure", "bias", f"--front={draw(n)}", f"--total={draw(n)}"]
    if kind == "cg":
        return ["measure", "cg-height", f"--level-front={draw(n)}", f"--lift={draw(n)}:{draw(n)}",
                f"--total={draw(n)}", f"--wheelbase={draw(n)}", f"--axle-height={draw(n)}"]
    if kind == "mu":
        return ["measure", "mu", f"--angle={draw(n)}"]
    lever = draw(st.sampled_from(["cg-height:min={},max={}", "ballast:x=250,z=40,min={},max={}",
                                  "overdrive:min={},max={}", "mu:min={},max={}"]))
    return ["plan", stock, "--target", f"balance:min={draw(n)}", "--lever", lever.format(draw(n), draw(n))]


def check_cli_numbers(argv) -> None:
    from slopetune.tui.cli import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = timed(main, argv)
        except SystemExit as exc:  # argparse refusing a malformed number: its own usage line
            code = exc.code
    text = out.getvalue() + err.getvalue()
    assert code in (0, 1, 2), f"exit {code}"
    assert "Traceback" not in text and "Warning" not in err.getvalue(), err.getvalue()
    assert not re.search(r"\binf\b|\bnan\b", out.getvalue()), f"inf/nan printed: {out.getvalue()[:200]!r}"
    assert not re.search(r"\d{25}", text), "an absurdly long number printed"
    if code == 2 and argv[0] != "plan":
        # "slopetune: ..." or, naming the command whose argument it is, "slopetune measure bias: ..."
        lines = [line for line in err.getvalue().splitlines() if re.match(r"slopetune( [a-z-]+)*: ", line)]
        assert len(lines) == 1 and err.getvalue().count("\n") == 1, err.getvalue()


# ---------------------------------------------------------------------------- special files, sizes

SPECIAL_KINDS = ("fifo", "/dev/zero", "/dev/urandom", "/dev/null", "folder", "link loop", "dangling link",
                 "link to device", "sparse 2 GiB", "exactly 1 MiB", "one byte over")


def make_special(kind: str, folder: Path) -> Path:
    path = folder / f"special-{abs(hash(kind)) % 10**6}-{time.perf_counter_ns()}.toml"
    if kind == "fifo":
        os.mkfifo(path)
    elif kind.startswith("/dev/"):
        return Path(kind)
    elif kind == "folder":
        path.mkdir()
    elif kind == "link loop":
        path.symlink_to(path)
    elif kind == "dangling link":
        path.symlink_to(folder / "nowhere" / "x.toml")
    elif kind == "link to device":
        path.symlink_to("/dev/zero")
    elif kind == "sparse 2 GiB":
        with open(path, "wb") as f:
            f.truncate(2 << 30)
    else:
        size = (1 << 20) + (1 if kind == "one byte over" else 0)
        path.write_bytes(STOCK.encode() + b"#" * (size - len(STOCK.encode()) - 1) + b"\n")
    return path


def check_special(kind: str, folder: Path) -> None:
    path = make_special(kind, folder)
    box: dict = {}

    def run():
        try:
            box["ok"] = load_setup(path)
        except SetupError as exc:
            box["err"] = exc
        except BaseException as exc:  # noqa: BLE001 - reported below
            box["crash"] = exc

    th = threading.Thread(target=run, daemon=True)
    th.start()
    th.join(CASE_BUDGET_S)
    assert not th.is_alive(), f"{kind}: still reading after {CASE_BUDGET_S} s"
    assert "crash" not in box, f"{kind}: {box.get('crash')!r}"
    if "err" in box:
        fc.check_error(box["err"], str(path))
    else:
        assert kind == "exactly 1 MiB", f"{kind} loaded"


@st.composite
def extreme_size_texts(draw):
    kind = draw(st.sampled_from(["ballast items", "long name", "course points", "long comment", "many tables"]))
    n = draw(st.sampled_from([10, 1000, 20000]))
    if kind == "ballast items":
        item = '\n[[rig.ballast]]\nname = "x"\nmass_g = 0.001\nx_mm = 150\nz_mm = 40\n'
        return STOCK + item * n
    if kind == "long name":
        return STOCK.replace('name = "', 'name = "' + "n" * (n * 40), 1)
    if kind == "course points":
        pts = ", ".join(f"[{i}, {i % 7}]" for i in range(n))
        return STOCK + f'\n[course]\nname = "long"\nbelly_clearance_mm = 40\npoints_mm = [{pts}]\n'
    if kind == "long comment":
        return STOCK + "#" + "c" * (n * 40) + "\n"
    return STOCK + "".join(f"\n[t{i}]\nk = 1\n" for i in range(n))


# ---------------------------------------------------------------------------- planner limits

wide = st.sampled_from([1e3, 1e6, 1e9, 1e300])


@st.composite
def planner_cases(draw):
    return (draw(st.integers(0, 1)), draw(st.sampled_from(["balance", "front_lift", "max_grade", "handover_weight_only"])),
            draw(st.floats(-5.0, 5.0)), draw(st.sampled_from(["ballast", "cg", "overdrive", "mu"])), draw(wide))


def check_planner_limits(case) -> None:
    """An answer inside the default limits is the same answer when the limits are far wider."""
    import math

    from slopetune.engine import analyse
    from slopetune.engine.goal_seek import AddBallast, CgHeight, Compound, Overdrive, Target, angle_value_deg, plan

    which, angle, delta, kind, w = case
    setup = fd.BASE_SETUPS[which]
    now = angle_value_deg(analyse(setup), angle)
    target = Target(angle, ">=" if delta >= 0 else "<=", (now if math.isfinite(now) else 20.0) + delta)
    narrow, broad = {
        "ballast": (AddBallast(250.0, 40.0), AddBallast(250.0, 40.0, -w, w)),
        "cg": (CgHeight(), CgHeight(-w, w)),
        "overdrive": (Overdrive(), Overdrive(-w, w)),
        "mu": (Compound(), Compound(1.0 / w, w)),
    }[kind]
    pw = timed(plan, setup, target, broad)
    pn = plan(setup, target, narrow)
    lo, hi = narrow.limits(setup)
    if pw.reached and lo <= pw.value <= hi:
        assert pn.reached and abs(pn.value - pw.value) <= 2 * narrow.step, \
            f"{angle}{target.op}{target.value_deg:.2f} {kind}: default limits {pn.value} vs wide {pw.value}"
    if pn.reached:
        assert pw.reached, f"{angle} {kind}: reached within the default limits, not within wider ones"


def families(folder: Path):
    """name -> (strategy, check) for bench/fuzz_inputs.py."""
    text_check = lambda t: timed(fc.check_text, t)  # noqa: E731
    return {
        "deep nesting": (nested_texts(), text_check),
        "long dotted keys": (dotted_key_texts(), text_check),
        "slow line finding": (slow_line_texts(), text_check),
        "legal gear stages": (stage_texts(), lambda t: fc.check_text(t, slopes=(0.0, 45.0, 90.0))),
        "gear teeth in the form": (st.tuples(st.sampled_from(["front", "rear"]), st.integers(0, 1), teeth),
                                   lambda d: fc.check_value_case(1, f"driveline.{d[0]}_stages.0.{d[1]}", d[2])),
        "layouts saved": (layout_cases, lambda d: check_layout_save(*d, folder)),
        "escapes in file text": (escape_texts(), lambda t: check_printed_text(t, folder)),
        "command-line numbers": (cli_argvs(), check_cli_numbers),
        "special files": (st.sampled_from(SPECIAL_KINDS), lambda k: check_special(k, folder)),
        "extreme sizes": (extreme_size_texts(), text_check),
        "planner limits": (planner_cases(), check_planner_limits),
    }


SHARES = {  # fraction of the total cases for each structure family
    "deep nesting": 0.02, "long dotted keys": 0.02, "slow line finding": 0.01, "legal gear stages": 0.02,
    "gear teeth in the form": 0.02, "layouts saved": 0.03, "escapes in file text": 0.01,
    "command-line numbers": 0.02, "special files": 0.005, "extreme sizes": 0.005, "planner limits": 0.003,
}

__all__ = ["families", "SHARES", "render_layout", "check_layout_save", "check_special", "check_cli_numbers",
           "check_planner_limits", "check_printed_text"]
