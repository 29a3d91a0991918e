"""Content hashes of what a cached result depends on: values, theme files and kitleaf's own code.

A key is the SHA-256 of a canonical byte form, so the same inputs give the same key in every
process and on every run. Source spans (file and line) are left out of value keys: a prose
line added above a stage moves its lines but not its drawing.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import importlib.metadata
from collections.abc import Mapping
from pathlib import Path

import kitleaf
from kitleaf.errors import SourceSpan

# Libraries whose output ends up in the site's bytes: a new version may draw differently.
RENDERING_LIBRARIES = ("jinja2", "markdown-it-py", "matplotlib", "numpy", "schemdraw", "scipy",
                       "soundfile")


def canonical(value: object, spans: bool = False) -> str:
    """A stable text form of a frozen value; ``spans=False`` leaves source locations out."""
    return canonical_pair(value)[spans]


def canonical_pair(value: object) -> tuple[str, str]:
    """:func:`canonical` without and with source locations, from one walk of the value."""
    if isinstance(value, SourceSpan):
        return "~", repr((value.path, value.line))
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        inner = [(f.name, canonical_pair(getattr(value, f.name)))
                 for f in dataclasses.fields(value)]
        return tuple(f"{type(value).__name__}(" + ",".join(f"{n}={p[i]}" for n, p in inner)
                     + ")" for i in (0, 1))
    if isinstance(value, Mapping):
        pairs = [(canonical_pair(k), canonical_pair(v)) for k, v in value.items()]
        return tuple("{" + ",".join(f"{k}:{v}" for k, v in sorted((k[i], v[i]) for k, v in pairs))
                     + "}" for i in (0, 1))
    if isinstance(value, (list, tuple)):
        inner = [canonical_pair(v) for v in value]
        return tuple("[" + ",".join(p[i] for p in inner) + "]" for i in (0, 1))
    text = repr(value)  # str, float (repr round-trips), int, bool, None
    return text, text


def contains_span(value: object) -> bool:
    """Whether a value carries a source location anywhere inside it."""
    if isinstance(value, SourceSpan):
        return True
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return any(contains_span(getattr(value, f.name)) for f in dataclasses.fields(value))
    if isinstance(value, Mapping):
        return any(contains_span(v) for v in value.values())
    if isinstance(value, (list, tuple)):
        return any(contains_span(v) for v in value)
    return False


def digest(*parts: str | bytes) -> str:
    """SHA-256 of the parts, each length-prefixed so that ("ab", "c") differs from ("a", "bc")."""
    h = hashlib.sha256()
    for part in parts:
        data = part.encode("utf-8") if isinstance(part, str) else part
        h.update(len(data).to_bytes(8, "big"))
        h.update(data)
    return h.hexdigest()


def tree_digest(roots: list[Path], pattern: str = "*") -> str:
    """The hash of every file under ``roots`` (names and bytes), in a fixed order."""
    parts: list[str | bytes] = []
    for i, root in enumerate(roots):
        for path in sorted(p for p in Path(root).rglob(pattern) if p.is_file()):
            if "__pycache__" in path.parts:
                continue
            parts += [f"{i}:{path.relative_to(root).as_posix()}", path.read_bytes()]
    return digest(*parts)


@functools.lru_cache(maxsize=1)
def code_fingerprint() -> str:
    """kitleaf's version, its own source and device data, and the rendering libraries' versions.

    Hashing the package source stands in for an engine version number: any change to the
    engine, the device library, a stage kind or a renderer invalidates every cached result.
    """
    package = Path(kitleaf.__file__).parent
    versions = [f"{name}={_version(name)}" for name in RENDERING_LIBRARIES]
    return digest(kitleaf.__version__, *versions, tree_digest([package], "*.py"),
                  tree_digest([package / "data"]) if (package / "data").is_dir() else "")


def theme_fingerprint(themes: list[Path]) -> str:
    """Every template and static file of the build's themes, most specific first."""
    return tree_digest(list(themes))


def _version(name: str) -> str:
    try:
        return importlib.metadata.version(name)
    except importlib.metadata.PackageNotFoundError:
        return "absent"
