"""A quick slice of the guide fuzzer (bench/fuzz_guides.py runs the full 10,000 cases)."""

from __future__ import annotations

import importlib.util
import random
import sys
from pathlib import Path

BENCH = Path(__file__).resolve().parent.parent / "bench" / "fuzz_guides.py"


def _fuzzer():
    if "fuzz_guides" not in sys.modules:  # a dataclass needs its module registered
        spec = importlib.util.spec_from_file_location("fuzz_guides", BENCH)
        sys.modules["fuzz_guides"] = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(sys.modules["fuzz_guides"])
    return sys.modules["fuzz_guides"]


def test_mutated_demo_guides_end_in_located_lines():
    # The limit is process CPU time, which idle-spinning BLAS threads inflate on a loaded
    # machine; 30 s still catches a case that never ends (the bench keeps its 10 s).
    tally = _fuzzer().fuzz(cases=150, seed=20261205, limit=30.0)
    assert tally.cases == 150
    assert tally.failures == [], tally.failures[0][2]
    # The slice is not vacuous: mutants both pass and fail the check.
    assert tally.outcomes["ok"] > 0 and tally.outcomes["error"] > 0


def test_mutations_are_seeded():
    fuzz = _fuzzer()
    source = (fuzz.DEMO / "brookside-boost.md").read_bytes()
    first = [fuzz.mutate(source, random.Random(3)) for _ in range(5)]
    again = [fuzz.mutate(source, random.Random(3)) for _ in range(5)]
    assert first == again and any(m != source for m in first)


def test_the_judge_refuses_unlocated_and_raw_lines():
    judged = _fuzzer()._judged
    assert judged(1, "g.md:3: error: cannot read 'x'\n", [])[0] == "error"
    assert judged(0, "", [])[0] == "ok"
    assert judged(1, "Traceback (most recent call last):\n", [])[0] == "raw line"
    assert judged(1, "g.md:3: error: bad \x1b[31m\n", [])[0] == "raw line"
    assert judged(2, "", [])[0] == "raw line"
