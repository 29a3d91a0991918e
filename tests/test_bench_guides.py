"""The build bench's guides are guides a kit maker could ship: each one builds a circuit."""

import importlib.util
import sys
from pathlib import Path

from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide

BENCH = Path(__file__).resolve().parent.parent / "bench" / "bench_build.py"


def bench_build():
    if "bench_build" not in sys.modules:
        spec = importlib.util.spec_from_file_location("bench_build", BENCH)
        sys.modules["bench_build"] = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(sys.modules["bench_build"])
    return sys.modules["bench_build"]


def test_every_bench_guide_builds_its_circuit(tmp_path):
    # Ten guides take every demo guide as a base twice, so every donor stage is appended
    # somewhere, a switched one included (its switch needs the kit's switch: line).
    guides = bench_build().make_site(tmp_path, 10, "yes")
    for path in sorted(guides.glob("*.md")):
        kit = build_circuit(parse_guide(path))
        assert len(kit.stages) >= bench_build().STAGES


def test_an_appended_switch_is_named_in_the_kit_block():
    donor = "```kit\nswitch: Clip = S1: silicon, open, LEDs\n```\n"
    block = "```stage drive\nclip-switch: S1 SPDT on-off-on\n```\n"
    moved = bench_build().renumbered(block, "drive", 100)
    assert "S101" in moved
    assert bench_build().switch_lines(block, donor, 100) == (
        "switch: Clip 100 = S101: silicon, open, LEDs\n")
