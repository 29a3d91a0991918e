"""The build cache: results stored by the hash of exactly what they depend on.

The cache lives in ``.kitleaf-cache/`` beside the output folder, never inside the published
site. Every entry is one file named by its key under a folder per kind of result (``guide``,
``specs``, ``schematic``, ``plot``...). Entries are written to a temporary name and renamed,
so a build killed mid-write leaves no torn entry, and several worker processes can fill the
cache at once. Deleting the folder is always safe: the next build is simply a cold one.
"""

from __future__ import annotations

import os
import pickle
import tempfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from kitleaf.site.fingerprint import code_fingerprint, digest

CACHE_DIR_NAME = ".kitleaf-cache"
# Bumped when the layout or the pickled records change shape.
CACHE_FORMAT = "2"


def default_cache_dir(out_dir: Path) -> Path:
    """``.kitleaf-cache/`` beside the output folder (outside the site that gets published)."""
    return out_dir.resolve().parent / CACHE_DIR_NAME


@dataclass(frozen=True)
class Cache:
    """A content-addressed store of bytes and of pickled frozen values."""

    root: Path

    def key(self, kind: str, *parts: str | bytes) -> str:
        """The key of a result of ``kind``: its inputs, kitleaf's code and the cache format."""
        return digest(CACHE_FORMAT, code_fingerprint(), kind, *parts)

    def _path(self, kind: str, key: str) -> Path:
        return self.root / kind / key[:2] / key[2:]

    def get(self, kind: str, key: str) -> bytes | None:
        try:
            return self._path(kind, key).read_bytes()
        except OSError:
            return None

    def put(self, kind: str, key: str, data: bytes) -> None:
        """Store ``data``; a failure to write only costs speed, never the build."""
        path = self._path(kind, key)
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=".tmp-", dir=path.parent)
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
            os.replace(tmp, path)
        except OSError:
            return

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
