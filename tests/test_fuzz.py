"""Hostile input never crashes the loader, the value checker or the analysis (CI profile).

The strategies and checks are the bench's (bench/fuzz_documents.py, bench/fuzz_checks.py); this
runs a few hundred cases of each part of the input space (bench/fuzz_inputs.py runs 10,000). The
contract checked is the loader's own documented one: every refusal is one `SetupError` line naming
the file and the key, every setup that loads analyses to finite forces, and `check_value` accepts
exactly what the file accepts.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # bench/ is not installed: import it from the checkout
    sys.path.insert(0, str(ROOT))

from bench import fuzz_checks as fc  # noqa: E402
from bench import fuzz_documents as fd  # noqa: E402
from slopetune.engine import SetupError, check_value, parse_setup  # noqa: E402
from slopetune.engine.setup_model import rule_for  # noqa: E402

CI = settings(max_examples=80, deadline=None, database=None, derandomize=True,
              suppress_health_check=list(HealthCheck))


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


@CI
@given(fd.mutated_documents(), fd.slope_arrays, fd.analyse_options)
def test_mutated_documents_load_or_name_the_key(drawn, slopes, opts):
    text, ops = drawn
    fc.check_text(text, slopes=slopes, opts=opts)
    fc.check_single_refusal(text, ops)


@CI
@given(fd.edge_documents(), fd.slope_arrays, fd.analyse_options)
def test_legal_values_at_their_edges_analyse_to_finite_forces(text, slopes, opts):
    fc.check_text(text, slopes=slopes, opts=opts)


@CI
@given(st.one_of(fd.cut_texts(), st.text(max_size=300)))
def test_cut_and_random_text_is_refused_in_one_line(text):
    fc.check_text(text)


@CI
@given(fd.raw_bytes())
def test_random_bytes_on_disk_are_refused_in_one_line(folder, data):
    fc.check_bytes(data, folder)


@CI
@given(st.integers(0, len(fd.BASE_SETUPS) - 1), fd.KEYS, fd.values)
def test_check_value_never_raises_and_agrees_with_the_file(base, key, value):
    fc.check_value_case(base, key, value)


@CI
@given(st.integers(0, len(fd.BASE_SETUPS) - 1), st.sampled_from(fd.RANGED_KEYS), st.data())
def test_check_value_in_range_agrees_with_the_file(base, key, data):
    fc.check_value_case(base, key, data.draw(fd.in_range(rule_for(key))))


@settings(max_examples=20, deadline=None, database=None, derandomize=True,
          suppress_health_check=list(HealthCheck))
@given(fd.mutated_documents(max_ops=2))
def test_report_command_exits_cleanly(folder, drawn):
    fc.check_cli_report(drawn[0], folder)


# Cases the fuzz found once; kept as plain examples so they stay fixed.

def _stock_with(old: str, new: str) -> str:
    text = fd.SHIPPED_TEXT[0]
    assert old in text
    return text.replace(old, new, 1)


@pytest.mark.parametrize("key", ["wheelbase_mm", "tire_dia_front_mm", "tire_dia_rear_mm"])
def test_subnormal_divisor_is_refused_not_overflowed(key):
    # 5e-324 is the smallest IEEE 754 double; dividing a force by it overflows to inf.
    line = next(l for l in fd.SHIPPED_TEXT[0].splitlines() if l.startswith(key))
    with pytest.raises(SetupError) as err:
        parse_setup(_stock_with(line, f"{key} = 5e-324"), "x.toml")
    assert err.value.key == f"rig.{key}" and f"rig.{key}" in str(err.value)


def test_hundreds_of_gear_stages_are_refused():
    # 1000**103 > 1.8e308 (the largest double): the reduction would overflow to inf.
    text = fd.SHIPPED_TEXT[1].replace("front_stages = [[13, 38]]", "front_stages = [" + ", ".join(["[1, 1000]"] * 110) + "]")
    with pytest.raises(SetupError) as err:
        parse_setup(text, "x.toml")
    assert err.value.key == "driveline.front_stages"


def test_a_line_break_in_a_key_stays_one_line():
    text = fd.SHIPPED_TEXT[0] + '\n["evil\\nsection\\u001b[2J"]\nx = 1\n'
    with pytest.raises(SetupError) as err:
        parse_setup(text, "x.toml")
    msg = str(err.value)
    assert "\n" not in msg and "\x1b" not in msg and "evil\\nsection" in msg
    _, _, warnings = parse_setup(fd.SHIPPED_TEXT[0].replace("[grip]", '[grip]\n"odd\\nkey" = 1'), "x.toml")
    assert warnings and all("\n" not in w for w in warnings)


@pytest.mark.parametrize("key, value", [
    ("a.b.c.d", 1.0), ("grip", 1.0), ("rig", "x"), ("", 1.0), (".", 1.0), ("terrain.load", "uphill"),
    ("terrain.load", math.nan), ("name", 3), ("driveline.front_stages", 13), ("driveline.front_stages.5.0", 13),
    ("rig.ballast.-1.x_mm", 10.0), ("rig.ballast.x.mass_g", 10.0),
])
def test_check_value_refuses_what_is_no_value_of_the_setup(key, value):
    assert isinstance(check_value(fd.BASE_SETUPS[1], key, value), str)


def test_check_value_still_takes_one_tooth_count():
    assert check_value(fd.BASE_SETUPS[1], "driveline.front_stages.0.1", 40) is None
    assert check_value(fd.BASE_SETUPS[1], "driveline.front_stages.0.1", 0) is not None
