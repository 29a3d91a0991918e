"""Pruning the build cache: what a build used stays, what nothing used for long goes.

Inputs are two of the demo guides (Fernbrook Circuitworks' kits), built with their cache by the
fixtures of test_site_build. What a build needs is not taken from the pruning code's own
bookkeeping but from outside it: the entries a cold build of the same guides writes into an
empty cache. Ages are set with os.utime. That a cache keeps what is in use and drops the least
recently used first, and that a missing entry is only a miss, is common practice, no source.
"""

from __future__ import annotations

import os
import time
from pathlib import Path

import test_site_build
from kitleaf.cli import main
from kitleaf.site.build import build_site
from kitleaf.site.cache import CACHE_DIR_NAME
from kitleaf.site.prune import (
    DAY,
    HOUR,
    SWEEP_STAMP,
    PrunePolicy,
    doomed,
    entries,
    prune,
    remove,
)
from test_site_build import GUIDES, change_r4, contents

# The cold build of test_site_build and a private copy of it per test, cache included.
built, site = test_site_build.built, test_site_build.site

EVERY_BUILD = PrunePolicy(every=0)  # a sweep after each build; the rest as shipped


def cache_of(root: Path) -> Path:
    return root / CACHE_DIR_NAME


def sizes(root: Path) -> dict[str, int]:
    return {e.name: e.size for e in entries(cache_of(root))}


def set_age(root: Path, seconds: float, names=None, now: float | None = None) -> None:
    """Make the entries ``names`` (all, and the sweep stamp, by default) ``seconds`` old."""
    when = (now or time.time()) - seconds
    cache = cache_of(root)
    paths = [cache / n for n in names] if names is not None else (
        [e.path for e in entries(cache)] + [cache / SWEEP_STAMP])
    for path in paths:
        os.utime(path, (when, when))


def test_after_a_value_change_the_old_entries_go_and_the_used_stay(site: Path, tmp_path: Path):
    before = sizes(site)
    change_r4(site / "guides")
    build_site(site / "guides", site / "published", prune_policy=EVERY_BUILD)
    grown = sizes(site)
    assert before.keys() < grown.keys()  # nothing is old enough to go yet
    set_age(site, 30 * DAY)
    report = build_site(site / "guides", site / "published", prune_policy=EVERY_BUILD)
    # What the changed guides need: the entries a cold build of them makes.
    build_site(site / "guides", tmp_path / "cold" / "published", jobs=1)
    needed = sizes(tmp_path / "cold").keys()
    assert sizes(site).keys() == needed
    gone = grown.keys() - needed
    assert gone and gone <= before.keys()  # the entries of R4 1k5, and only those
    assert (report.pruned.entries, report.pruned.freed) == (len(gone),
                                                            sum(grown[n] for n in gone))
    assert report.rebuilt == 0 and report.written == ()  # the site is not touched


def test_entries_used_are_marked_so_they_never_age(site: Path):
    set_age(site, 30 * DAY)
    started = time.time()
    report = build_site(site / "guides", site / "published", prune_policy=EVERY_BUILD)
    assert report.pruned.entries == 0 and report.rebuilt == 0
    assert all(e.used_at >= started - 1 for e in entries(cache_of(site)))


def test_over_the_budget_the_least_recently_used_go_first(site: Path):
    cache, now = cache_of(site), time.time()
    found = sorted(entries(cache), key=lambda e: e.name)
    for i, entry in enumerate(found):  # entry i last used i + 2 hours ago: past the grace time
        set_age(site, (i + 2) * HOUR, [entry.name], now)
    used = {e.name for e in found[::3]}
    spare = [e for e in found if e.name not in used]  # oldest last
    kept = {e.name for e in spare[:2]}  # the two most recently used fit the budget
    budget = sum(e.size for e in found if e.name in used or e.name in kept)
    report = prune(cache, used, PrunePolicy(max_bytes=budget, every=0), now=now)
    assert {e.name for e in entries(cache)} == used | kept
    assert report.entries == len(spare) - 2


def test_old_entries_go_young_ones_and_used_ones_stay(site: Path):
    cache, now = cache_of(site), time.time()
    found = sorted(e.name for e in entries(cache))
    old, young, used = found[0::3], found[1::3], set(found[2::3])
    set_age(site, 10 * DAY, old + sorted(used), now)
    set_age(site, 3 * DAY, young, now)
    policy = PrunePolicy(max_age=7 * DAY, every=0)
    report = prune(cache, used, policy, now=now)
    assert {e.name for e in entries(cache)} == set(young) | used
    assert report.entries == len(old)
    assert all(abs(e.used_at - now) < 0.01 for e in entries(cache) if e.name in used)


def test_budget_never_removes_what_was_just_used_or_written(site: Path):
    cache = cache_of(site)
    found = sorted(e.name for e in entries(cache))
    set_age(site, 2 * HOUR)
    set_age(site, 10 * 60, found[:2])  # another build wrote these ten minutes ago
    prune(cache, set(), PrunePolicy(max_bytes=0, every=0))
    assert {e.name for e in entries(cache)} == set(found[:2])


def test_torn_writes_go_after_the_grace_time(site: Path):
    cache = cache_of(site)
    shelf = next(iter(entries(cache))).path.parent
    (shelf / ".tmp-killed").write_bytes(b"half an entry")
    (shelf / ".tmp-writing").write_bytes(b"an entry being written")
    os.utime(shelf / ".tmp-killed", (time.time() - 2 * HOUR,) * 2)
    report = prune(cache, set(), EVERY_BUILD)
    assert not (shelf / ".tmp-killed").exists() and (shelf / ".tmp-writing").exists()
    assert report.entries == 1


def test_a_sweep_runs_at_most_once_per_interval(site: Path):
    cache, before = cache_of(site), sizes(site)
    set_age(site, 30 * DAY)
    set_age(site, 10 * 60, [SWEEP_STAMP])  # the last sweep was ten minutes ago
    assert prune(cache, set(), PrunePolicy(every=HOUR)).entries == 0
    assert sizes(site) == before
    assert prune(cache, set(), PrunePolicy(every=5 * 60)).entries == len(before)


def test_an_entry_another_sweep_removed_is_skipped(site: Path):
    cache = cache_of(site)
    set_age(site, 30 * DAY)
    chosen = doomed(list(entries(cache)), set(), EVERY_BUILD, time.time())
    for entry in chosen[::2]:  # the other build got there first
        entry.path.unlink()
    assert remove(chosen).entries == len(chosen[1::2])
    assert not list(entries(cache))


def test_a_missing_entry_is_only_a_miss(site: Path):
    # A sweep interrupted halfway: every guide entry and every other of the rest are gone.
    before, site_before = sizes(site), contents(site / "published")
    found = sorted(before)
    guides = [n for n in found if n.startswith("guide/")]
    rest = [n for n in found if not n.startswith("guide/")]
    for name in guides + rest[::2]:
        (cache_of(site) / name).unlink()
    report = build_site(site / "guides", site / "published", jobs=1)
    assert report.rebuilt == len(GUIDES)
    assert report.written == () and contents(site / "published") == site_before
    assert sizes(site).keys() == before.keys()  # made again, under the same names


def test_cli_says_what_the_sweep_freed_only_when_it_freed_something(site: Path, capsys):
    change_r4(site / "guides")
    set_age(site, 30 * DAY)  # the last sweep too: this build sweeps
    assert main(["build", str(site / "guides"), "-o", str(site / "published")]) == 0
    out = capsys.readouterr().out.splitlines()
    [line] = [s for s in out if s.startswith("cache: ")]
    assert line.endswith(" MB freed") and " unused entries removed, " in line
    assert out[-1].startswith("built ")  # the summary stays the last line
    set_age(site, 30 * DAY, [e.name for e in entries(cache_of(site))])
    assert main(["build", str(site / "guides"), "-o", str(site / "published")]) == 0
    assert not [s for s in capsys.readouterr().out.splitlines() if s.startswith("cache: ")]
