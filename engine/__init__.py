"""slopetune's physics: pure numpy, no UI and no file-writing packages.

Public entry points:

- `load_setup(path)` -> `LoadedSetup` (raises `SetupError` with a one-line message)
- `analyse(setup, slopes_deg)` -> `Analysis` (loads, traction states, named angles)

Names are imported on first use (PEP 562), so reading and checking a setup file does not load
numpy: the tuner paints its form before the first analysis.
"""

from __future__ import annotations

import importlib

_HOME = {
    "Analysis": "analysis", "EffectiveRig": "analysis", "Sweep": "analysis", "analyse": "analysis",
    "effective_rig": "analysis", "setup_overdrive": "analysis",
    "LoadedSetup": "setup_file", "SetupError": "setup_file", "check_value": "value_check",
    "load_setup": "setup_file", "parse_setup": "setup_file",
    "BallastItem": "setup_model", "Course": "setup_model", "Driveline": "setup_model",
    "FIELDS": "setup_model", "Grip": "setup_model", "Rig": "setup_model",
    "SCHEMA_VERSION": "setup_model", "Setup": "setup_model", "Terrain": "setup_model",
    "STATES": "traction",
}

__all__ = sorted(_HOME)


def __getattr__(name: str):
    try:
        module = _HOME[name]
    except KeyError:
        raise AttributeError(f"module 'engine' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(f".{module}", __name__), name)
    globals()[name] = value
    return value


def __dir__():
    return __all__
