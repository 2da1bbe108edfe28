"""The README's set-up lines are the ones CI and users run."""

from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _readme_lines():
    return [l.strip() for l in (ROOT / "README.md").read_text().splitlines() if l.startswith("python3 -m venv")]


def test_ci_runs_the_readme_test_line():
    test_line = [l for l in _readme_lines() if "pytest" in l]
    assert len(test_line) == 1
    assert test_line[0] in (ROOT / ".ci" / "run").read_text().splitlines()


def test_readme_run_line_opens_a_shipped_demo():
    run_line = [l for l in _readme_lines() if "pytest" not in l]
    assert len(run_line) == 1
    demo = run_line[0].split()[-1]
    assert (ROOT / demo).is_file()
