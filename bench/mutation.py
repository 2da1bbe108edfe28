"""Mutation score of the physics tests: can they fail when the engine is wrong?

Run: python bench/mutation.py [--jobs 2] [--only S01,T03] [--list]
Goal: every mutant killed, or a one-line reason beside each survivor why it is equivalent.

Each mutant of `bench/mutants.py` (one exact source-text replacement in `engine/`) is applied to
a temporary copy of the project, never to the working tree, and the physics tests run against
that copy with ``pytest -x`` (stop at the first failure) and the derandomised "mutation"
hypothesis profile of tests/conftest.py (the CI examples, fewer of them), so a run gives the same
answer every time. A mutant whose anchor text is no longer in
the file, or is there more than once, is reported stale, not killed. An unmutated copy runs
first: if it fails, nothing is scored.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from mutants import EQUIVALENT, MUTANTS  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
# Fast physics test files, quickest discriminating ones first (pytest -x stops at the first failure).
TEST_FILES = (
    "tests/test_slip_definitions.py",
    "tests/test_measure.py",
    "tests/test_measure_one_axle.py",
    "tests/test_measure_tip.py",
    "tests/test_statics.py",
    "tests/test_tyre_slip.py",
    "tests/test_slope_slip.py",
    "tests/test_course_walk.py",
    "tests/test_course_speed_ratio.py",
    "tests/test_traction_reference.py",
    "tests/test_traction_published.py",
    "tests/test_report_reference.py",
    "tests/test_contact_uniform_slope.py",
    "tests/test_contact_equilibrium.py",
    "tests/test_contact_first_to_let_go.py",
)
# Too slow to run ~80 times (about 80 s alone); the suite still runs it.
DESELECT = ("tests/test_contact_equilibrium.py::test_uneven_ground_agrees_with_an_independent_per_position_solver",)
TIMEOUT_S = 600  # a mutant that hangs the tests is killed by the timeout and said so
_IGNORE = shutil.ignore_patterns(".venv", ".git", "__pycache__", ".hypothesis", ".pytest_cache", "*.pyc",
                                 "*.egg-info", "build", "dist")


def make_copy(dest: Path) -> Path:
    """A runnable copy of the project under `dest`; returns the copy's engine folder.

    The installed package is editable and points at the working tree, so the copy carries its own
    ``slopetune`` package (engine/ and tui/ inside it) on PYTHONPATH, found before the editable
    finder (which setuptools appends to ``sys.meta_path``).
    """
    for name in ("tests", "setups"):
        shutil.copytree(ROOT / name, dest / name, ignore=_IGNORE)
    shutil.copy2(ROOT / "pyproject.toml", dest / "pyproject.toml")
    pkg = dest / "_pkg" / "slopetune"
    pkg.mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    shutil.copytree(ROOT / "engine", pkg / "engine", ignore=_IGNORE)
    shutil.copytree(ROOT / "tui", pkg / "tui", ignore=_IGNORE)
    for name in ("engine", "tui"):  # some tests import the folders by their repository names
        (dest / name).symlink_to(pkg / name, target_is_directory=True)
    return pkg / "engine"


def _env(copy_root: Path) -> dict:
    env = dict(os.environ)
    env.update(PYTHONPATH=str(copy_root / "_pkg"), PYTHONDONTWRITEBYTECODE="1", HYPOTHESIS_PROFILE="mutation")
    return env


def run_tests(copy_root: Path, files) -> tuple[bool, str, float]:
    """(passed, first failing test or reason, seconds) of the physics tests in a copy."""
    cmd = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "--no-header", "-rfE",
           "--tb=no", *(f"--deselect={d}" for d in DESELECT), *files]
    start = time.perf_counter()
    try:
        out = subprocess.run(cmd, cwd=copy_root, env=_env(copy_root), capture_output=True, text=True,
                             timeout=TIMEOUT_S)
    except subprocess.TimeoutExpired:
        return False, f"timeout after {TIMEOUT_S} s", time.perf_counter() - start
    took = time.perf_counter() - start
    if out.returncode == 0:
        return True, "", took
    failed = [line for line in out.stdout.splitlines() if line.startswith(("FAILED", "ERROR"))]
    if not failed:  # collection errors and crashes: any line naming a test or an error
        failed = [line for line in (out.stdout + out.stderr).splitlines() if "::" in line or "Error" in line]
    return False, (failed[0] if failed else f"pytest exit {out.returncode}")[:120], took


def check_import(copy_root: Path) -> str:
    """Where the copy imports the engine from (must be inside the copy)."""
    out = subprocess.run([sys.executable, "-c", "import slopetune.engine as e; print(e.__file__)"],
                         cwd=copy_root, env=_env(copy_root), capture_output=True, text=True)
    return out.stdout.strip() or out.stderr.strip()


def apply(engine_dir: Path, mutant) -> str:
    """Apply `mutant` in a copy's engine; "" when done, else why it is stale."""
    path = engine_dir / mutant.path
    if not path.exists():
        return f"engine/{mutant.path} is gone"
    text = path.read_text(encoding="utf-8")
    n = text.count(mutant.old)
    if n != 1:
        return f"anchor found {n} times in engine/{mutant.path}"
    path.write_text(text.replace(mutant.old, mutant.new), encoding="utf-8")
    return ""


def score(mutant, files):
    """("killed" | "survived" | "stale", detail, seconds) for one mutant, in its own copy."""
    with tempfile.TemporaryDirectory(prefix=f"slopetune-mut-{mutant.ident}-") as tmp:
        copy_root = Path(tmp)
        engine_dir = make_copy(copy_root)
        stale = apply(engine_dir, mutant)
        if stale:
            return "stale", stale, 0.0
        passed, detail, took = run_tests(copy_root, files)
        return ("survived" if passed else "killed"), detail, took


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--jobs", type=int, default=2, help="mutants run at once (default 2)")
    ap.add_argument("--only", default="", help="comma-separated mutant ids")
    ap.add_argument("--list", action="store_true", help="list the mutants and exit")
    args = ap.parse_args(argv)

    chosen = [m for m in MUTANTS if not args.only or m.ident in args.only.split(",")]
    if args.list:
        for m in chosen:
            print(f"{m.ident}  engine/{m.path:<18} {m.kind}")
        return 0
    files = [f for f in TEST_FILES if (ROOT / f).exists()]
    print(f"{len(chosen)} mutants of engine/, tests: {' '.join(Path(f).name for f in files)}")

    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="slopetune-mut-base-") as tmp:
        make_copy(Path(tmp))
        where = check_import(Path(tmp))
        if not where.startswith(tmp):
            print(f"the copy imports the engine from {where}, not from the copy: nothing scored")
            return 2
        passed, detail, took = run_tests(Path(tmp), files)
    if not passed:
        print(f"the unmutated copy fails ({detail}): nothing scored")
        return 2
    print(f"unmutated copy passes in {took:.1f} s")

    results = {}
    with ThreadPoolExecutor(max_workers=max(1, args.jobs)) as pool:
        futures = {m.ident: pool.submit(score, m, files) for m in chosen}
        for m in chosen:
            verdict, detail, took = futures[m.ident].result()
            results[m.ident] = verdict
            reason = EQUIVALENT.get(m.ident, "")
            line = f"{m.ident} {verdict:<8} {took:6.1f} s  engine/{m.path}: {m.kind}"
            if verdict == "killed":
                line += f"  <- {detail}"
            elif verdict == "stale":
                line += f"  ({detail})"
            elif reason:
                line += f"  EQUIVALENT: {reason}"
            else:
                line += "  NOT KILLED"
            print(line, flush=True)

    scored = [m for m in chosen if results[m.ident] != "stale"]
    killed = [m for m in scored if results[m.ident] == "killed"]
    survivors = [m for m in scored if results[m.ident] == "survived"]
    stale = [m for m in chosen if results[m.ident] == "stale"]
    print()
    for m in survivors:
        why = EQUIVALENT.get(m.ident)
        print(f"survivor {m.ident} engine/{m.path}: {m.kind} -- "
              + (f"equivalent: {why}" if why else "no test kills it"))
    for m in stale:
        print(f"stale {m.ident} engine/{m.path}: {m.kind} (anchor no longer matches; rewrite it)")
    unexplained = [m for m in survivors if m.ident not in EQUIVALENT]
    print(f"killed {len(killed)} of {len(scored)}  ({len(survivors) - len(unexplained)} survivors "
          f"equivalent, {len(unexplained)} unexplained, {len(stale)} stale; "
          f"{time.perf_counter() - t0:.0f} s on {args.jobs} jobs)")
    return 0 if not unexplained else 1


if __name__ == "__main__":
    sys.exit(main())
