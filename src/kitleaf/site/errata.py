"""The errata history: for each kit and each of its revisions, what changed since that revision
was first published, kept in the manifest from one publish to the next.

A builder whose board or parts list says revision B reads the parts to fit and the specs that
moved since revision B first appeared; a superseded revision keeps its last errata, and a new
one says how it differs from the one before. Errata are net: a value changed and changed back
between two publishes (a save in the live preview, say) is no erratum. The history is plain
JSON made from the published manifests alone (no clock, sorted keys), so publishing the same
guides again gives the same bytes, and a failed build, which publishes nothing, leaves it as
it was.
"""

from __future__ import annotations

import json
from dataclasses import asdict
from typing import Any

from kitleaf.site.changes import part_moves, spec_moves


def next_history(before: dict | None, guides: dict[str, dict]) -> dict[str, Any]:
    """The history after publishing ``guides`` (slug -> manifest record) over the published
    manifest ``before`` (None: the first publish)."""
    published = (before or {}).get("guides", {})
    history = (before or {}).get("history") or _started(published)
    kits = history.get("guides", {})
    return {"guides": {slug: _kit_history(kits.get(slug), published.get(slug), guides.get(slug))
                       for slug in sorted({*kits, *guides})}}


def _started(published: dict[str, dict]) -> dict[str, Any]:
    """A history for a manifest written before there was one: each guide's revision as
    published then is where its errata start."""
    return {"guides": {slug: _kit_history(None, None, record)
                       for slug, record in published.items()}}


def _kit_history(kit: dict | None, last: dict | None, record: dict | None) -> dict[str, Any]:
    """One kit's history after this publish; ``last`` is its record as published before."""
    if kit is None:
        return {**_heading(record), "revisions": [_opened(record, None)], "withdrawn": False}
    revisions = [dict(r) for r in kit["revisions"]]
    if record is None:
        return {**kit, "withdrawn": True}
    current = revisions[-1]
    if current["revision"] != revision_of(record):
        current.pop("baseline", None)  # closed: its errata stay as last published
        revisions.append(_opened(record, last))
    else:
        current["errata"] = moves(current["baseline"], record)
    return {**_heading(record), "revisions": revisions, "withdrawn": False}


def _heading(record: dict) -> dict[str, str]:
    kit = record["specs"]["kit"]
    return {"code": kit["code"], "title": kit["title"]}


def _opened(record: dict, last: dict | None) -> dict[str, Any]:
    """A revision first published now; ``last`` is the previous revision's final record."""
    return {"revision": revision_of(record), "baseline": record,
            "errata": moves(record, record),
            "from_previous": None if last is None else {
                "revision": revision_of(last), **moves(last, record)}}


def revision_of(record: dict) -> str:
    return record["specs"]["kit"].get("revision") or ""


def moves(old: dict, new: dict) -> dict[str, list]:
    """Parts that changed and specs that moved from ``old`` to ``new`` (manifest records)."""
    found = {"parts": [asdict(m) for m in part_moves(old["parts"], new["parts"])],
             "specs": [asdict(m) for m in spec_moves(old["specs"], new["specs"])]}
    return json.loads(json.dumps(found))  # as read back from a manifest, for equality


def errata_view(history: dict) -> list[dict[str, Any]]:
    """The history as the changes page lists it: kits by code, each revision newest first."""
    kits = []
    for slug, kit in history.get("guides", {}).items():
        revisions = list(reversed(kit["revisions"]))
        kits.append({"slug": slug, "code": kit["code"], "title": kit["title"],
                     "withdrawn": kit["withdrawn"], "revisions": [
                         {**{k: v for k, v in r.items() if k != "baseline"},
                          "current": i == 0 and not kit["withdrawn"]}
                         for i, r in enumerate(revisions)]})
    return sorted(kits, key=lambda k: (k["code"], k["slug"]))
