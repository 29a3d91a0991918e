"""The change report: parts that changed value and the specs they moved, between two publishes;
and the terminal progress line."""

from __future__ import annotations

import io
import shutil
from pathlib import Path

import pytest

from kitleaf.circuit.build import build_circuit
from kitleaf.guide import parse_guide
from kitleaf.site.changes import compare, summary_lines
from kitleaf.site.manifest import guide_record, make_manifest
from kitleaf.site.progress import Progress
from kitleaf.specs.derive import derive_specs
from kitleaf.values import format_db

DEMO = Path(__file__).resolve().parents[1] / "guides" / "brookside-boost.md"


def record(path: Path):
    guide = parse_guide(path)
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    return guide.slug, guide_record(path.name, kit.parts(), specs), specs


@pytest.fixture(scope="module")
def two_builds(tmp_path_factory):
    """The demo guide as published, and again with R4 changed from 1k5 to 1k8."""
    folder = tmp_path_factory.mktemp("changes")
    path = folder / DEMO.name
    shutil.copy(DEMO, path)
    slug, old, old_specs = record(path)
    path.write_text(path.read_text().replace("emitter: R4 1k5", "emitter: R4 1k8"))
    _slug, new, new_specs = record(path)
    before = make_manifest({slug: old}, {"baseline": False, "guides": []})
    return slug, before, {"guides": {slug: new}}, old_specs, new_specs


def test_first_publish_has_no_baseline():
    assert compare(None, {"guides": {}}) == {"baseline": False, "guides": []}


def test_changed_part_is_listed_with_both_values(two_builds):
    slug, before, after, _o, _n = two_builds
    [guide] = compare(before, after)["guides"]
    assert guide["slug"] == slug and guide["status"] == "changed"
    # 1k5 and 1k8 in the RKM code of IEC 60062 are 1.5 kΩ and 1.8 kΩ.
    assert guide["parts"] == [{"name": "R4", "before": "1.5 kΩ", "after": "1.8 kΩ",
                               "delta": ""}]


def test_gain_move_matches_the_two_solutions(two_builds):
    _slug, before, after, old_specs, new_specs = two_builds
    [guide] = compare(before, after)["guides"]
    moves = {m["name"]: m for m in guide["specs"]}
    gain = moves["gain at 1 kHz"]
    assert gain["before"] == format_db(old_specs.gain_db.nominal)
    assert gain["after"] == format_db(new_specs.gain_db.nominal)
    step = round(new_specs.gain_db.nominal - old_specs.gain_db.nominal, 1)
    assert float(gain["delta"].split()[0]) == pytest.approx(step, abs=0.051)
    # More emitter resistance, less gain (common practice, no source).
    assert new_specs.gain_db.nominal < old_specs.gain_db.nominal


def test_only_moved_specs_are_listed(two_builds):
    _slug, before, after, _o, _n = two_builds
    [guide] = compare(before, after)["guides"]
    assert all(m["before"] != m["after"] for m in guide["specs"])
    moves = {m["name"]: m for m in guide["specs"]}
    # More emitter resistance, less collector current, so the collector sits nearer the
    # supply (common practice, no source).
    collector = moves["The boost transistor: Q1 collector"]
    assert float(collector["after"].split()[0]) > float(collector["before"].split()[0])
    assert collector["delta"].startswith("+")


def test_no_change_carries_the_last_record_forward(two_builds):
    _slug, before, after, _o, _n = two_builds
    changes = compare(before, after)
    published = make_manifest(after["guides"], changes)
    assert compare(published, {"guides": after["guides"]}) == changes


def test_added_and_removed_guides(two_builds):
    slug, before, after, _o, _n = two_builds
    gone = compare(before, {"guides": {}})["guides"]
    assert [(g["slug"], g["status"]) for g in gone] == [(slug, "removed")]
    new = compare(make_manifest({}, {}), after)["guides"]
    assert [(g["slug"], g["status"]) for g in new] == [(slug, "added")]


def test_terminal_summary_names_part_and_spec(two_builds):
    _slug, before, after, _o, _n = two_builds
    [line] = summary_lines(compare(before, after))
    assert line.startswith("FB-101 Brookside Boost: R4 1.5 kΩ to 1.8 kΩ; gain at 1 kHz ")


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_shows_on_a_terminal_after_the_delay():
    stream = Terminal()
    progress = Progress(5, stream, delay=0.0)
    progress.advance(2)
    assert "2/5 guides" in stream.getvalue()
    progress.done()
    assert stream.getvalue().endswith("\r\x1b[K")


def test_progress_is_silent_off_a_terminal_and_before_the_delay():
    pipe, early = io.StringIO(), Terminal()
    Progress(5, pipe, delay=0.0).advance(3)
    Progress(5, early, delay=60.0).advance(3)
    assert pipe.getvalue() == "" and early.getvalue() == ""
