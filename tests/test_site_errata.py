"""The errata history: per kit and revision, what changed since the revision was first
published, kept across publishes, the same bytes for the same guides, untouched by a failed
build."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from kitleaf.site.build import BuildFailed, build_site
from kitleaf.site.changes import compare
from kitleaf.site.errata import errata_view, next_history
from kitleaf.site.manifest import MANIFEST_NAME, make_manifest
from site_pages import DEMO_GUIDES, parse_page
from test_site_changes import DEMO, record

R4 = ("emitter: R4 1k5", "emitter: R4 1k8")
C1 = ("input-cap: C1 68n film 63V", "input-cap: C1 100n film 63V")
REVISION = ("revision: B", "revision: C")


@pytest.fixture(scope="module")
def records(tmp_path_factory):
    """The Brookside guide's manifest record as published and after each edit, cumulative:
    R4 1k5 -> 1k8, then C1 68n -> 100n, then R4 back to 1k5, then revision C with R3 changed."""
    folder = tmp_path_factory.mktemp("errata")
    path = folder / DEMO.name
    text = DEMO.read_text(encoding="utf-8")
    found = []
    for swaps in ((), (R4,), (R4, C1), (C1,), (C1, REVISION, ("collector: R3 8k2",
                                                               "collector: R3 10k"))):
        edited = text
        for old, new in swaps:
            assert edited.count(old) == 1, old
            edited = edited.replace(old, new)
        path.write_text(edited, encoding="utf-8")
        slug, rec, _specs = record(path)
        found.append(rec)
    return slug, found


def publish(slug: str, recs: list[dict]) -> dict:
    """The manifest after publishing each record in turn, as build_site writes it."""
    manifest = None
    for rec in recs:
        guides = {slug: rec}
        manifest = make_manifest(guides, compare(manifest, {"guides": guides}),
                                 next_history(manifest, guides))
    return manifest


def parts(moved: dict) -> dict[str, tuple[str, str]]:
    return {m["name"]: (m["before"], m["after"]) for m in moved["parts"]}


def test_the_first_publish_opens_the_revision_with_no_errata(records):
    slug, recs = records
    [kit] = errata_view(publish(slug, recs[:1])["history"])
    [rev] = kit["revisions"]
    assert (kit["code"], rev["revision"], rev["current"]) == ("FB-101", "B", True)
    assert rev["errata"] == {"parts": [], "specs": []} and rev["from_previous"] is None


def test_a_second_change_adds_to_the_first_instead_of_replacing_it(records):
    """Two publishes, two edits: the revision's errata list both (the change record of the
    last publish alone names only the second)."""
    slug, recs = records
    manifest = publish(slug, recs[:3])
    [rev] = errata_view(manifest["history"])[0]["revisions"]
    # 1k5, 1k8, 68n and 100n in the RKM code of IEC 60062.
    assert parts(rev["errata"]) == {"R4": ("1.5 kΩ", "1.8 kΩ"), "C1": ("68 nF", "100 nF")}
    assert [g["parts"] for g in manifest["changes"]["guides"]] == [
        [{"name": "C1", "before": "68 nF", "after": "100 nF", "delta": ""}]]
    assert any(m["name"] == "gain at 1 kHz" for m in rev["errata"]["specs"])


def test_errata_are_net_a_value_changed_back_is_no_erratum(records):
    slug, recs = records
    [rev] = errata_view(publish(slug, recs[:4])["history"])[0]["revisions"]
    assert parts(rev["errata"]) == {"C1": ("68 nF", "100 nF")}


def test_a_new_revision_keeps_the_old_ones_errata_and_says_what_it_changed(records):
    slug, recs = records
    [kit] = errata_view(publish(slug, recs)["history"])
    new, old = kit["revisions"]
    assert (new["revision"], new["current"], old["revision"], old["current"]) == (
        "C", True, "B", False)
    assert parts(old["errata"]) == {"C1": ("68 nF", "100 nF")}  # as revision B was left
    assert new["errata"] == {"parts": [], "specs": []}
    assert new["from_previous"]["revision"] == "B"
    assert parts(new["from_previous"]) == {"R3": ("8.2 kΩ", "10 kΩ")}


def test_a_withdrawn_kit_keeps_its_history(records):
    slug, recs = records
    manifest = publish(slug, recs[:2])
    history = next_history(manifest, {})
    [kit] = errata_view(history)
    assert kit["withdrawn"] and not kit["revisions"][0]["current"]
    assert parts(kit["revisions"][0]["errata"]) == {"R4": ("1.5 kΩ", "1.8 kΩ")}


def test_a_manifest_without_a_history_starts_one_from_what_it_published(records):
    slug, recs = records
    old = make_manifest({slug: recs[0]}, {"baseline": False, "guides": []})
    [rev] = errata_view(next_history(old, {slug: recs[1]}))[0]["revisions"]
    assert parts(rev["errata"]) == {"R4": ("1.5 kΩ", "1.8 kΩ")}


def build(guides: Path, out: Path) -> dict[str, bytes]:
    build_site(guides, out, jobs=1)
    return {p.relative_to(out).as_posix(): p.read_bytes() for p in out.rglob("*") if p.is_file()}


def edit(path: Path, old: str, new: str) -> None:
    path.write_text(path.read_text(encoding="utf-8").replace(old, new), encoding="utf-8")


def test_across_publishes_the_page_lists_every_change_and_survives_a_failed_build(tmp_path):
    guides, out = tmp_path / "guides", tmp_path / "published"
    shutil.copytree(DEMO_GUIDES, guides)
    guide = guides / "brookside-boost.md"
    build(guides, out)
    edit(guide, *R4)
    build(guides, out)
    edit(guide, *C1)
    site = build(guides, out)
    page = parse_page(out / "changes.html")
    [section] = [e for e in page.iter("section") if e.attrs.get("id") == "errata-brookside-boost"]
    shown = [" ".join(th.all_text().split()) for th in section.iter("th")
             if th.attrs.get("scope") == "row"]
    assert "R4" in shown and "C1" in shown  # both publishes' changes on the page
    # The same guides again: the same bytes, the history included.
    assert build(guides, out) == site
    # A broken guide fails the build; the published site, history and all, stays as it was.
    edit(guide, "supply: 9 V", "supply: nine volts")
    with pytest.raises(BuildFailed):
        build_site(guides, out, jobs=1)
    assert {p.relative_to(out).as_posix(): p.read_bytes()
            for p in out.rglob("*") if p.is_file()} == site
    assert b'"history"' in site[MANIFEST_NAME]
