"""Writing a built site atomically: into a temporary folder beside the output, then swapped in."""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path
from typing import Mapping


def write_tree(root: Path, files: Mapping[str, bytes]) -> None:
    """Write ``files`` (relative posix path -> bytes) under ``root``."""
    for rel in sorted(files):
        path = root / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(files[rel])


def publish(out_dir: Path, files: Mapping[str, bytes]) -> None:
    """Replace ``out_dir`` with exactly ``files``; the old site stays whole until the swap."""
    out_dir = out_dir.resolve()
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    staging = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.new-", dir=out_dir.parent))
    try:
        write_tree(staging, files)
        _swap(staging, out_dir)
    finally:
        if staging.exists():
            shutil.rmtree(staging, ignore_errors=True)


def _swap(staging: Path, out_dir: Path) -> None:
    if not out_dir.exists():
        os.replace(staging, out_dir)
        return
    retired = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.old-", dir=out_dir.parent))
    os.rmdir(retired)
    os.replace(out_dir, retired)  # two renames: the window without a site is one syscall wide
    os.replace(staging, out_dir)
    shutil.rmtree(retired, ignore_errors=True)
