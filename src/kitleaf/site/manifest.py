"""The build manifest: each guide's parts and computed specs, kept in the output as JSON.

``kitleaf-manifest.json`` (schema ``kitleaf-manifest/1``) is what the next build compares against to
report which parts changed value and which specs moved. It holds no timestamps and sorts its
keys, so an unchanged site gives an unchanged manifest.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from kitleaf.circuit.parts import Part
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.model import KitSpecs

SCHEMA = "kitleaf-manifest/1"
MANIFEST_NAME = "kitleaf-manifest.json"


def part_record(part: Part) -> dict[str, Any]:
    """What the change report needs of a part: its SI value or model, tolerance and line."""
    return {"designator": part.designator, "type": part.type, "stage": part.stage_id,
            "role": part.role, "value": part.value, "model": part.model,
            "tolerance": part.tolerance, "text": part.text}


def guide_record(source: str, parts: tuple[Part, ...], specs: KitSpecs) -> dict[str, Any]:
    """One guide's entry: its file name, parts in designator order and the specs JSON."""
    return {"source": source,
            "parts": sorted((part_record(p) for p in parts), key=lambda r: r["designator"]),
            "specs": without_curves(specs_to_json(specs))}


def without_curves(specs: dict[str, Any]) -> dict[str, Any]:
    """The specs JSON less its plotted curves: the change report compares figures, not plots,
    and the curves would make the manifest some fifty times larger and slower to read."""
    kept = {k: v for k, v in specs.items() if k != "response"}
    kept["stages"] = [{k: v for k, v in s.items() if k != "response"} for s in specs["stages"]]
    return kept


def make_manifest(guides: dict[str, dict], changes: dict,
                  history: dict | None = None) -> dict[str, Any]:
    """The whole manifest: guides by slug, the change record of this publish and the errata
    history of every kit revision (:mod:`kitleaf.site.errata`)."""
    manifest = {"schema": SCHEMA, "guides": dict(sorted(guides.items())), "changes": changes}
    return manifest if history is None else {**manifest, "history": history}


def dump_manifest(manifest: dict[str, Any]) -> bytes:
    """Sorted keys, one line per guide (and per entry of any other top-level mapping).

    Each line comes from json's C encoder; ``indent`` would send the whole dump through its
    pure-Python encoder, about a second per hundred guides.
    """
    parts = [f"{_compact(key)}: {_entry_lines(value)}" for key, value in sorted(manifest.items())]
    return ("{\n" + ",\n".join(parts) + "\n}\n").encode()


def _entry_lines(value: Any) -> str:
    if not isinstance(value, dict) or not value:
        return _compact(value)
    lines = ",\n".join(f"  {_compact(k)}: {_compact(v)}" for k, v in sorted(value.items()))
    return "{\n" + lines + "\n}"


def _compact(value: Any) -> str:
    return json.dumps(value, sort_keys=True, ensure_ascii=False)


def read_manifest(out_dir: Path) -> dict[str, Any] | None:
    """The manifest of the site now published in ``out_dir``, or None (first build, or foreign)."""
    try:
        manifest = json.loads((out_dir / MANIFEST_NAME).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(manifest, dict) or manifest.get("schema") != SCHEMA:
        return None
    return manifest
