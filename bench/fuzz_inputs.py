"""Fuzz the setup loader, the value checker, the analysis and `slopetune report` with hostile input.

Run: python bench/fuzz_inputs.py [--cases 10000] [--seed 313]
Goal: every case either loads or is refused with one `SetupError` line that names the key (or the
file and line for file-level problems); a setup that loads always analyses to finite forces; a
value the tuner's form accepts (`check_value` returns None) is always one the file accepts.
Prints the number of cases per family and the number of crashes (must be 0).

The strategies (bench/fuzz_documents.py) and checks (bench/fuzz_checks.py) are shared with
tests/test_fuzz.py, which runs the same ones with fewer cases.
Input space: NaN, +-inf, +-0, negative, huge and subnormal numbers, 64-bit integers, wrong types
(text, booleans, lists, tables, dates), missing and extra keys and sections, the shipped files
truncated, cut or sprinkled with random characters, and random text and bytes; and, built from
structure (bench/fuzz_structures.py): deep nesting, long dotted keys, header-like lines in
multi-line strings, thousands of unknown keys, extreme legal gear stages, every TOML layout saved
back, control and bidi characters in printed text, extreme command-line numbers, special files,
extreme sizes and planner limits far wider than needed.
"""

from __future__ import annotations

import argparse
import re
import sys
import tempfile
import time
import traceback
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import seed as hyp_seed
from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench.fuzz_checks import (  # noqa: E402
    OUTCOMES, check_bytes, check_cli_report, check_single_refusal, check_text, check_value_case,
)
from bench.fuzz_documents import (  # noqa: E402
    BASE_SETUPS, KEYS, RANGED_KEYS, analyse_options, cut_texts, edge_documents, in_range, mutated_documents,
    raw_bytes, slope_arrays, values,
)
from slopetune.engine.setup_model import rule_for  # noqa: E402

# ---------------------------------------------------------------------------- families


def families(folder: Path):
    """name -> (strategy, check(drawn)) for each part of the input space."""
    return {
        "mutated documents": (
            st.tuples(mutated_documents(), slope_arrays, analyse_options),
            lambda d: (check_text(d[0][0], slopes=d[1], opts=d[2]), check_single_refusal(d[0][0], d[0][1])),
        ),
        "edge-of-range documents": (
            st.tuples(edge_documents(), slope_arrays, analyse_options),
            lambda d: check_text(d[0], slopes=d[1], opts=d[2]),
        ),
        "cut shipped files": (cut_texts(), lambda t: check_text(t)),
        "random text": (st.text(max_size=400), lambda t: check_text(t)),
        "random bytes on disk": (raw_bytes(), lambda b: check_bytes(b, folder)),
        "check_value": (
            st.tuples(st.integers(0, len(BASE_SETUPS) - 1), KEYS, st.one_of(values, st.sampled_from(["climb", "none", "x"]))),
            lambda d: check_value_case(*d),
        ),
        "check_value in range": (
            st.tuples(st.integers(0, len(BASE_SETUPS) - 1), st.sampled_from(RANGED_KEYS), st.data()),
            lambda d: check_value_case(d[0], d[1], d[2].draw(in_range(rule_for(d[1])))),
        ),
        "slopetune report": (mutated_documents(max_ops=2), lambda d: check_cli_report(d[0], folder)),
    }


SHARES = {  # fraction of the cases per family
    "mutated documents": 0.34, "edge-of-range documents": 0.18, "cut shipped files": 0.1,
    "random text": 0.06, "random bytes on disk": 0.08, "check_value": 0.12, "check_value in range": 0.08,
    "slopetune report": 0.04,
}


def run_family(strategy, check, n: int, seed: int):
    """Run `n` drawn cases through `check`; returns (cases run, [(input, traceback)])."""
    seen, crashes = [0], []

    @hyp_seed(seed)
    @settings(max_examples=n, deadline=None, database=None, derandomize=False,
              suppress_health_check=list(HealthCheck), phases=("generate",))
    @given(strategy)
    def run(drawn):
        seen[0] += 1
        try:
            check(drawn)
        except Exception:  # noqa: BLE001 - counted and shown, the run goes on
            crashes.append((repr(drawn)[:300], traceback.format_exc(limit=4)))

    run()
    return seen[0], crashes


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=10000, help="total cases over all families (10000)")
    ap.add_argument("--seed", type=int, default=313)
    ap.add_argument("--verbose", action="store_true", help="print the traceback of each kind of crash")
    args = ap.parse_args(argv)
    total, total_crashes = 0, 0
    t0 = time.perf_counter()
    print(f"fuzz seed {args.seed}")
    from bench import fuzz_structures  # the structure-aware families (nesting, layouts, special files, ...)

    shares = {**SHARES, **fuzz_structures.SHARES}
    scale = 1.0 / sum(shares.values())
    # The files-and-texts line counts the texts of this file's families only; the structure
    # families' texts (nesting, key lengths, sizes, gear stages) show in their own rows.
    texts = dict.fromkeys(OUTCOMES, 0)
    with tempfile.TemporaryDirectory() as tmp:
        every = {**families(Path(tmp)), **fuzz_structures.families(Path(tmp))}
        for i, (name, (strategy, check)) in enumerate(every.items()):
            n = max(1, round(args.cases * shares[name] * scale))
            t = time.perf_counter()
            before = dict(OUTCOMES)
            seen, crashes = run_family(strategy, check, n, args.seed + i)
            if name in SHARES:
                texts = {k: texts[k] + OUTCOMES[k] - before[k] for k in texts}
            total += seen
            total_crashes += len(crashes)
            print(f"{name:<26} {seen:>6} cases  {len(crashes):>3} crashes  {time.perf_counter() - t:6.1f} s")
            kinds = {}
            for drawn, tb in crashes:  # one example per kind of crash
                kinds.setdefault(re.sub(r"[-+.\de]{4,}|\d+", "#", tb.strip().splitlines()[-1])[:90], (drawn, tb))
            for kind, (drawn, tb) in kinds.items():
                print(f"  - {kind}\n    input: {drawn}" + ("\n    " + tb.strip().replace("\n", "\n    ")
                                                            if args.verbose else ""))
    print(f"files and texts: {texts['loaded and analysed']} loaded and analysed, "
          f"{texts['refused in one line']} refused with one line naming the key or file")
    print(f"total {total} cases, {total_crashes} crashes, {time.perf_counter() - t0:.0f} s")
    return 1 if total_crashes else 0


if __name__ == "__main__":
    sys.exit(main())
