"""The structure-aware fuzz families (bench/fuzz_structures.py) in a CI profile: a few cases each.

The bench runs them inside `python bench/fuzz_inputs.py` (10,000 cases in all). The contracts
checked are the loader's and writer's own: one-line refusals within a time bound, every layout
saved back equal with its comments or refused with the file untouched, no raw control or bidi
character printed, no traceback or `inf` from extreme numbers, special files refused without
hanging, planner answers independent of limits wider than needed.
"""

from __future__ import annotations

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
from bench import fuzz_structures as fs  # noqa: E402


def ci(n):
    return settings(max_examples=n, deadline=None, database=None, derandomize=True,
                    suppress_health_check=list(HealthCheck))


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz-structures")


@ci(25)
@given(st.one_of(fs.nested_texts(), fs.dotted_key_texts(), fs.slow_line_texts()))
def test_nesting_keys_and_line_finding_are_refused_or_loaded_fast(text):
    fs.timed(fc.check_text, text)


@ci(25)
@given(fs.stage_texts())
def test_legal_gear_stages_load_or_are_refused_in_one_line(text):
    fc.check_text(text, slopes=(0.0, 45.0, 90.0))


@ci(40)
@given(fs.layout_cases)
def test_every_layout_saves_or_refuses_cleanly(folder, case):
    fs.check_layout_save(*case, folder)


@pytest.mark.parametrize("layout", fs.LAYOUTS)
@pytest.mark.parametrize("edit", fs.EDITS)
def test_each_layout_takes_each_edit(folder, layout, edit):
    # the stock-with-extras document (ballast, course) in every layout, every edit: all must save
    assert fs.check_layout_save(fd.BASE_DOCS[1], layout, False, False, edit, "", folder) == "saved"


@ci(15)
@given(fs.escape_texts())
def test_printed_file_text_holds_no_raw_control_characters(folder, text):
    fs.check_printed_text(text, folder)


@ci(30)
@given(fs.cli_argvs())
def test_extreme_command_line_numbers_exit_cleanly(argv):
    fs.check_cli_numbers(argv)


@pytest.mark.parametrize("kind", fs.SPECIAL_KINDS)
def test_special_files_are_refused_without_hanging(folder, kind):
    fs.check_special(kind, folder)


@ci(10)
@given(fs.extreme_size_texts())
def test_extreme_sizes_stay_within_the_time_budget(text):
    fs.timed(fc.check_text, text)


@ci(4)
@given(fs.planner_cases())
def test_planner_answer_ignores_wide_limits(case):
    fs.check_planner_limits(case)
