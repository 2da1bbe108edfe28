"""slopetune's physics: pure numpy, no UI and no file-writing packages.

Public entry points:

- `load_setup(path)` -> `LoadedSetup` (raises `SetupError` with a one-line message)
- `analyse(setup, slopes_deg)` -> `Analysis` (loads, traction states, named angles)
"""

from .analysis import Analysis, EffectiveRig, Sweep, analyse, effective_rig, setup_overdrive
from .setup_file import LoadedSetup, SetupError, check_value, load_setup, parse_setup
from .setup_model import (
    BallastItem, Course, Driveline, FIELDS, Grip, Rig, SCHEMA_VERSION, Setup, Terrain,
)
from .traction import STATES

__all__ = [
    "Analysis", "EffectiveRig", "Sweep", "analyse", "effective_rig", "setup_overdrive",
    "LoadedSetup", "SetupError", "check_value", "load_setup", "parse_setup",
    "BallastItem", "Course", "Driveline", "FIELDS", "Grip", "Rig", "SCHEMA_VERSION", "Setup", "Terrain",
    "STATES",
]
