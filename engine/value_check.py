"""One value checked against the same rules the file loader applies: the form's and the CLI's gate.

`check_value(setup, key, value)` answers with the reason a value cannot go at a dotted key (its
range from `FIELDS`, a gear-stage ratio the loader would refuse, or a cross-field rule broken by
the change), or None. The tuner keeps the last good value whenever this says no.
"""

from __future__ import annotations

from typing import Optional

from .setup_file import stage_ratio_problem
from .setup_model import FIELDS, Setup, cross_field_problems, rule_for


def _is_text_key(key: str) -> bool:
    parts = key.split(".")
    return key in ("name", "notes") or (
        len(parts) == 4 and parts[:2] == ["rig", "ballast"] and parts[3] == "name")


def check_value(setup: Setup, key: str, value) -> Optional[str]:
    """Why `value` cannot go at dotted `key` of `setup` (range or cross-field), or None if it can."""
    if not isinstance(key, str):
        return "not a setup key"
    parts = key.split(".")
    if _is_text_key(key):
        if not isinstance(value, str):
            return "must be text"
    elif len(parts) >= 2 and parts[0] == "driveline" and parts[1] in ("front_stages", "rear_stages"):
        # one tooth count at a time: driveline.front_stages.<stage>.<0 driver | 1 driven>
        stages = getattr(setup.driveline, parts[1])
        if (len(parts) != 4 or not parts[2].isdigit() or parts[3] not in ("0", "1") or stages is None
                or int(parts[2]) >= len(stages)):
            return "not a tooth count of this setup's gear stages"
        problem = FIELDS["driveline.teeth"].problem(value)
        if problem:
            return f"{problem} [teeth]"
        changed = [list(s) for s in stages]
        changed[int(parts[2])][int(parts[3])] = value
        other = "rear_stages" if parts[1] == "front_stages" else "front_stages"
        pair = {parts[1]: changed, other: getattr(setup.driveline, other)}
        if pair[other] is not None:
            ratio = stage_ratio_problem(pair["front_stages"], pair["rear_stages"])
            if ratio:
                return ratio
    else:
        try:
            rule = rule_for(key)
        except (KeyError, IndexError):
            return "not a setup key"
        if key not in FIELDS and not (len(parts) == 4 and parts[2].isdigit()):
            return "not a setup key"  # e.g. rig.ballast.x.mass_g
        problem = rule.problem(value)
        if problem:
            return f"{problem}" + (f" [{rule.unit}]" if rule.unit else "")
    try:
        candidate = setup.with_value(key, value)
    except (TypeError, ValueError, IndexError, AttributeError, KeyError) as exc:
        return str(exc)
    problems = cross_field_problems(candidate)
    if not problems:
        return None
    other, message = problems[0]
    return message if other == key else f"then {other} {message}"
