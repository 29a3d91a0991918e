"""The build cache: results stored by the hash of exactly what they depend on.

The cache lives in ``.kitleaf-cache/`` beside the output folder, or in a folder of the user's
choosing (``--cache-dir``, ``KITLEAF_CACHE_DIR``), never inside the published site. The folder
carries a ``CACHEDIR.TAG`` (the Cache Directory Tagging Specification, so backups skip it);
since pruning removes old files from it, a chosen folder that already holds other files and no
kitleaf tag is refused (:func:`check_cache_folder`).

Every entry is one file named by its key under a folder per kind of result (``guide``,
``specs``, ``schematic``, ``plot``...). Entries are written to a temporary name and renamed, so
a build killed mid-write leaves no torn entry, and several worker processes can fill the cache
at once. Deleting the folder, or any entry in it, is always safe: a missing entry is a miss,
and the next build makes it again. Each :class:`Cache` remembers the entries it read or wrote
(``used``), so a build knows exactly what it depends on when the cache is pruned
(:mod:`kitleaf.site.prune`).
"""

from __future__ import annotations

import os
import pickle
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from kitleaf.errors import BuildError, SourceSpan
from kitleaf.site.fingerprint import code_fingerprint, digest

CACHE_DIR_NAME = ".kitleaf-cache"
# Bumped when the layout or the pickled records change shape (3: a guide entry carries the
# names of the entries it was built from).
CACHE_FORMAT = "3"
TMP_PREFIX = ".tmp-"  # an entry being written, renamed into place when complete


TAG_NAME = "CACHEDIR.TAG"
TAG_TEXT = ("Signature: 8a477f597d28d172789f06886806bc55\n"
            "# kitleaf's build cache: every file can be made again; deleting it is safe.\n")


def default_cache_dir(out_dir: Path) -> Path:
    """``.kitleaf-cache/`` beside the output folder (outside the site that gets published)."""
    return out_dir.resolve().parent / CACHE_DIR_NAME


def check_cache_folder(root: Path, out_dir: Path, chosen: bool) -> None:
    """Refuse a cache folder in or around the output, a file, or (``chosen`` by the user) a
    folder holding other files and no kitleaf tag. Nothing is written here: the first entry
    stored tags the folder (:meth:`Cache.put`)."""
    cache, out = root.resolve(), out_dir.resolve()
    if cache == out or cache.is_relative_to(out) or out.is_relative_to(cache):
        why = "is inside the output folder" if cache.is_relative_to(out) else "holds the output"
        raise _refusal(root, f"{why}; give a cache folder apart from the site")
    if cache.exists() and not cache.is_dir():
        raise _refusal(root, "is a file; give a folder")
    if chosen and cache.is_dir() and not is_tagged(cache) and any(cache.iterdir()):
        raise _refusal(root, "holds files that are not kitleaf's cache, and old cache files are "
                             "removed from it; give an empty or new folder")


def is_tagged(cache: Path) -> bool:
    try:
        return (cache / TAG_NAME).read_text(encoding="utf-8") == TAG_TEXT
    except (OSError, UnicodeDecodeError):
        return False


def _write_whole(path: Path, data: bytes) -> None:
    """Write by rename, so a reader (another worker) never sees a torn file."""
    fd, tmp = tempfile.mkstemp(prefix=TMP_PREFIX, dir=path.parent)
    with os.fdopen(fd, "wb") as handle:
        handle.write(data)
    os.replace(tmp, path)


def _refusal(root: Path, what: str) -> BuildError:
    return BuildError(f"the cache folder {what}; nothing was written", SourceSpan(str(root)))


def entry_name(kind: str, key: str) -> str:
    """An entry's file, relative to the cache folder: one folder per kind, 256 below it."""
    return f"{kind}/{key[:2]}/{key[2:]}"


@dataclass(frozen=True)
class Cache:
    """A content-addressed store of bytes and of pickled frozen values."""

    root: Path
    # Entries read or written through this object, as names relative to ``root``.
    used: set[str] = field(default_factory=set, compare=False, hash=False, repr=False)

    def key(self, kind: str, *parts: str | bytes) -> str:
        """The key of a result of ``kind``: its inputs, kitleaf's code and the cache format."""
        return digest(CACHE_FORMAT, code_fingerprint(), kind, *parts)

    def _path(self, kind: str, key: str) -> Path:
        return self.root / entry_name(kind, key)

    def get(self, kind: str, key: str) -> bytes | None:
        try:
            data = self._path(kind, key).read_bytes()
        except OSError:
            return None
        self.used.add(entry_name(kind, key))
        return data

    def put(self, kind: str, key: str, data: bytes) -> None:
        """Store ``data``; a failure to write only costs speed, never the build."""
        path = self._path(kind, key)
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
            if not (self.root / TAG_NAME).exists():  # the folder's first entry: say whose it is
                _write_whole(self.root / TAG_NAME, TAG_TEXT.encode())
            _write_whole(path, data)
        except OSError:
            return
        self.used.add(entry_name(kind, key))

    def bytes_for(self, kind: str, key: str, make: Callable[[], bytes]) -> bytes:
        """The stored result for ``key``, or ``make()`` stored under it."""
        found = self.get(kind, key)
        if found is None:
            found = make()
            self.put(kind, key, found)
        return found

    def load(self, kind: str, key: str) -> object | None:
        """A pickled value, or None when absent or unreadable (an older kitleaf, a torn disk)."""
        data = self.get(kind, key)
        if data is None:
            return None
        try:
            return pickle.loads(data)
        except Exception:  # any unreadable entry is a miss, never a failed build
            return None

    def store(self, kind: str, key: str, value: object) -> None:
        self.put(kind, key, pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL))


class NoCache(Cache):
    """A cache that remembers nothing: every result is computed afresh (``--no-cache``)."""

    def __init__(self) -> None:
        super().__init__(Path(os.devnull))

    def get(self, kind: str, key: str) -> bytes | None:
        return None

    def put(self, kind: str, key: str, data: bytes) -> None:
        return
