"""Publishing a built site: only changed files are written, and the swap is all or nothing.

A staging folder beside the output receives the changed files and hard links to the unchanged
ones (same inode, so their modification times stay); the staging folder and the output are
then exchanged in one ``renameat2(RENAME_EXCHANGE)`` call where the system has it, else in two
renames. Until that moment the published site is untouched; a build killed earlier leaves only
a stale staging folder, removed by the next publish. A site with no changed file is not touched
at all.
"""

from __future__ import annotations

import contextlib
import ctypes
import os
import shutil
import tempfile
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path

from kitleaf.site.output_folder import (
    PUBLISH_MARKER,
    check_publishable,
    files_on_disk,
    marker_bytes,
)

try:
    import fcntl
except ImportError:  # not POSIX: no lock, publishes must not overlap
    fcntl = None

STAGING, RETIRED = "new", "old"


@dataclass(frozen=True)
class PublishResult:
    """What publishing did: files written (new or changed), files removed, files kept."""

    written: tuple[str, ...]
    removed: tuple[str, ...]
    kept: int

    @property
    def touched(self) -> bool:
        return bool(self.written or self.removed)


def plan(out_dir: Path, files: Mapping[str, bytes]) -> PublishResult:
    """Compare the new site with the published one, file by file."""
    written = tuple(rel for rel in sorted(files) if not same_bytes(out_dir / rel, files[rel]))
    present = files_on_disk(out_dir) - {PUBLISH_MARKER}
    removed = tuple(sorted(present - files.keys()))
    return PublishResult(written, removed, len(files) - len(written))


def same_bytes(path: Path, data: bytes) -> bool:
    try:
        return path.stat().st_size == len(data) and path.read_bytes() == data
    except OSError:
        return False


def publish(out_dir: Path, files: Mapping[str, bytes]) -> PublishResult:
    """Make ``out_dir`` hold exactly ``files``, writing only what changed; all or nothing.

    A folder holding files no kitleaf publish wrote is refused (:func:`check_publishable`).
    """
    shown, out_dir = out_dir, out_dir.resolve()
    check_publishable(shown)
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    with locked(out_dir):
        recover(out_dir)
        check_publishable(shown)  # again under the lock: another publish may have run
        result = plan(out_dir, files)
        if not result.touched and out_dir.is_dir():
            return result
        staging = new_folder(out_dir, STAGING)
        try:
            fill(staging, out_dir, files, set(result.written))
            swap(staging, out_dir)
        finally:
            shutil.rmtree(staging, ignore_errors=True)  # after the swap: the retired site
    return result


def new_folder(out_dir: Path, role: str) -> Path:
    """A fresh folder beside the output with the mode a ``mkdir`` would give it: mkdtemp's
    0700 would swap in a site that a web server running as another user cannot read."""
    folder = Path(tempfile.mkdtemp(prefix=_prefix(out_dir, role), dir=out_dir.parent))
    os.chmod(folder, 0o777 & ~current_umask())
    return folder


def current_umask() -> int:
    """The process's umask, read from /proc where it can be (setting it to read it would
    briefly change it for every thread)."""
    try:
        status = Path("/proc/self/status").read_text()
        return int(next(line for line in status.splitlines() if line.startswith("Umask:"))
                   .split()[1], 8)
    except (OSError, StopIteration, ValueError, IndexError):
        mask = os.umask(0o022)
        os.umask(mask)
        return mask


@contextlib.contextmanager
def locked(out_dir: Path) -> Iterator[None]:
    """One publish at a time per folder of outputs (a ``build`` beside a running ``proof``).

    The lock is taken on the output's parent folder itself, so no lock file is left there.
    """
    if fcntl is None:
        yield
        return
    handle = os.open(out_dir.parent, os.O_RDONLY)
    try:
        fcntl.flock(handle, fcntl.LOCK_EX)
        yield
    finally:
        os.close(handle)  # closing releases the lock


def fill(staging: Path, out_dir: Path, files: Mapping[str, bytes], changed: set[str]) -> None:
    """Changed files written afresh, unchanged ones linked from the published site."""
    marker = marker_bytes(files)  # a marker of the same list is kept as it was, like a page
    if not same_bytes(out_dir / PUBLISH_MARKER, marker):
        changed = changed | {PUBLISH_MARKER}
    files = {**files, PUBLISH_MARKER: marker}
    for rel in sorted(files):
        target = staging / rel
        target.parent.mkdir(parents=True, exist_ok=True)
        if rel in changed:
            target.write_bytes(files[rel])
        else:
            link_or_copy(out_dir / rel, target)


def link_or_copy(source: Path, target: Path) -> None:
    """A hard link keeps the file's inode and time; a copy with its times where links fail."""
    try:
        os.link(source, target)
    except OSError:
        shutil.copy2(source, target)


def swap(staging: Path, out_dir: Path) -> None:
    """Put ``staging`` in place of ``out_dir``; the old site ends up at ``staging``."""
    if not out_dir.exists():
        os.replace(staging, out_dir)
        return
    if exchange(staging, out_dir):
        return
    retired = Path(tempfile.mkdtemp(prefix=_prefix(out_dir, RETIRED), dir=out_dir.parent))
    os.rmdir(retired)  # only its unique name is wanted
    os.replace(out_dir, retired)  # the window without a site is one syscall wide
    os.replace(staging, out_dir)
    os.replace(retired, staging)


def exchange(a: Path, b: Path) -> bool:
    """Swap two paths in one atomic step (Linux ``renameat2``); False where unsupported."""
    rename = getattr(_libc(), "renameat2", None)
    if rename is None:
        return False
    at_fdcwd, rename_exchange = -100, 2
    done = rename(at_fdcwd, os.fsencode(a), at_fdcwd, os.fsencode(b), rename_exchange)
    return done == 0


def _libc():
    try:
        return ctypes.CDLL(None, use_errno=True)
    except OSError:
        return None


def recover(out_dir: Path) -> None:
    """Undo what an interrupted publish left: restore a retired site, drop stale staging."""
    retired = sorted(out_dir.parent.glob(_prefix(out_dir, RETIRED) + "*"))
    if retired and not out_dir.exists():
        os.replace(retired.pop(), out_dir)
    for stale in retired + sorted(out_dir.parent.glob(_prefix(out_dir, STAGING) + "*")):
        shutil.rmtree(stale, ignore_errors=True)


def _prefix(out_dir: Path, role: str) -> str:
    return f".{out_dir.name}.{role}-"
