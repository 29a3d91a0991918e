"""Pruning the build cache: after a successful build, entries nothing has used for long go.

An entry's modification time is its last use: a build marks every entry it used (read,
wrote, or took a whole guide from) as used now, at most once an hour per entry. Then, at most
once an hour per cache, a sweep removes the entries this build did not use that are older than
:attr:`PrunePolicy.max_age`, and, least recently used first, more of them while the cache is
larger than :attr:`PrunePolicy.max_bytes`. An entry this build used is never removed, nor one
used or written in the last hour (another build may be running beside this one).

Every removal is one ``unlink`` of one entry, so a sweep that is interrupted, or that races
another build, leaves a valid cache: a missing entry is only a miss, made again when needed.
Nothing here touches the site, so pruning never changes a built file.
"""

from __future__ import annotations

import os
import time
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from kitleaf.site.cache import TMP_PREFIX

HOUR = 3600.0
DAY = 24 * HOUR
SWEEP_STAMP = "last-sweep"  # a file at the top of the cache whose time is the last sweep's


@dataclass(frozen=True)
class PrunePolicy:
    """When an entry the build did not use may be removed (seconds, bytes)."""

    max_age: float = 14 * DAY  # unused this long: removed
    max_bytes: int = 512 * 2**20  # above this total, the least recently used go first
    grace: float = HOUR  # used or written this recently: kept, whatever the total
    every: float = HOUR  # a sweep at most this often: walking a large cache takes a while


DEFAULT_POLICY = PrunePolicy()


@dataclass(frozen=True)
class PruneReport:
    """What a sweep removed."""

    entries: int = 0
    freed: int = 0  # bytes


@dataclass(frozen=True)
class CacheFile:
    """One file of the cache: its name relative to the cache folder, size and last use."""

    path: Path
    name: str
    size: int
    used_at: float

    @property
    def torn(self) -> bool:
        return Path(self.name).name.startswith(TMP_PREFIX)  # being written, or torn by a kill


def prune(root: Path, used: set[str], policy: PrunePolicy = DEFAULT_POLICY,
          now: float | None = None) -> PruneReport:
    """Mark ``used`` (names relative to ``root``) as used now; sweep when one is due."""
    now = time.time() if now is None else now
    mark_used(root, used, now, policy.grace)
    if not sweep_due(root, policy.every, now):
        return PruneReport()
    return remove(doomed(list(entries(root)), used, policy, now))


def mark_used(root: Path, used: set[str], now: float, grace: float) -> None:
    """Set each used entry's time to ``now``, skipping those marked within ``grace``."""
    for name in sorted(used):
        path = root / name
        try:
            if now - path.stat().st_mtime > grace:
                os.utime(path, (now, now))
        except OSError:  # removed meanwhile (another build's sweep): a miss next time
            continue


def sweep_due(root: Path, every: float, now: float) -> bool:
    """Whether the last sweep is ``every`` seconds old; if so, this build claims the next."""
    stamp = root / SWEEP_STAMP
    try:
        if now - stamp.stat().st_mtime < every:
            return False
    except FileNotFoundError:
        if not root.is_dir():
            return False
    try:
        stamp.touch()
        os.utime(stamp, (now, now))
    except OSError:
        return False
    return True


def entries(root: Path) -> Iterator[CacheFile]:
    """Every file two folders below ``root`` (kind, then the key's first two digits)."""
    for kind in _folders(root):
        for shelf in _folders(Path(kind.path)):
            for item in _scan(Path(shelf.path)):
                if not item.is_file(follow_symlinks=False):
                    continue
                try:
                    st = item.stat(follow_symlinks=False)
                except OSError:
                    continue
                name = f"{kind.name}/{shelf.name}/{item.name}"
                yield CacheFile(Path(item.path), name, st.st_size, st.st_mtime)


def doomed(found: list[CacheFile], used: set[str], policy: PrunePolicy,
           now: float) -> list[CacheFile]:
    """Unused entries past the grace time: torn or old ones, then the oldest while over budget."""
    total = sum(e.size for e in found)
    spare = sorted((e for e in found if e.name not in used and now - e.used_at > policy.grace),
                   key=lambda e: (e.used_at, e.name))
    chosen = []
    for entry in spare:
        if entry.torn or now - entry.used_at > policy.max_age or total > policy.max_bytes:
            chosen.append(entry)
            total -= entry.size
    return chosen


def remove(chosen: list[CacheFile]) -> PruneReport:
    """Unlink each entry; one already gone (another sweep) is skipped, not counted."""
    count = freed = 0
    for entry in chosen:
        try:
            entry.path.unlink()
        except OSError:
            continue
        count += 1
        freed += entry.size
    # The emptied folders stay: a build writing beside this sweep may just have made one.
    return PruneReport(count, freed)


def _folders(path: Path) -> list[os.DirEntry]:
    return [e for e in _scan(path) if e.is_dir(follow_symlinks=False)]


def _scan(path: Path) -> list[os.DirEntry]:
    try:
        with os.scandir(path) as found:
            return sorted(found, key=lambda e: e.name)
    except OSError:
        return []
