"""`engine/` stays headless: importing any engine module pulls in no UI or file-writing package.

Each module is imported in a fresh interpreter (this test process has imported half the world
already), the same way headless cores are guarded in well-kept Textual applications.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
FORBIDDEN = ("textual", "plotext", "tomlkit", "rich")
MODULES = ["slopetune.engine"] + sorted(f"slopetune.engine.{p.stem}" for p in (ROOT / "engine").glob("*.py") if p.stem != "__init__")

PROBE = """
import importlib, sys
importlib.import_module(sys.argv[1])
bad = sorted({name.split(".")[0] for name in sys.modules} & set(sys.argv[2:]))
print(",".join(bad))
"""


@pytest.fixture(scope="module")
def imported():
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    procs = {m: subprocess.Popen([sys.executable, "-c", PROBE, m, *FORBIDDEN], cwd=ROOT, env=env,
                                 stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for m in MODULES}
    out = {}
    for m, p in procs.items():
        stdout, stderr = p.communicate(timeout=120)
        out[m] = (p.returncode, stdout.strip(), stderr)
    return out


def test_every_engine_module_is_probed():
    assert "slopetune.engine.analysis" in MODULES and "slopetune.engine.traction" in MODULES and len(MODULES) >= 9


@pytest.mark.parametrize("module", MODULES)
def test_engine_module_imports_no_ui(imported, module):
    code, bad, err = imported[module]
    assert code == 0, err
    assert bad == "", f"{module} imports {bad}"


def test_probe_can_see_a_ui_import():
    # The positive control: the same probe on a module that does import tomlkit reports it.
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    out = subprocess.run([sys.executable, "-c", PROBE, "tomlkit", *FORBIDDEN], cwd=ROOT, env=env,
                         capture_output=True, text=True, timeout=60)
    assert out.stdout.strip() == "tomlkit"
