"""Guide parsing: a Markdown file in, a :class:`Guide` with its kit and stage blocks out."""

from __future__ import annotations

import re
from pathlib import Path

from markdown_it import MarkdownIt

from kitleaf.errors import GuideError, SourceSpan
from kitleaf.guide.blocks import at_most_once, make_block, require_single
from kitleaf.guide.device_blocks import read_devices
from kitleaf.guide.fences import is_ours
from kitleaf.guide.kit_lines import check_battery, read_knobs, read_switches
from kitleaf.guide.model import DESIGNATOR, Block, Entry, Guide, HardwareLine, KitBlock, StageBlock
from kitleaf.guide.slug import guide_slug
from kitleaf.guide.source import checked_text, read_text

KIT_KEYS = {
    "title", "code", "revision", "supply", "summary", "knob", "switch", "hardware", "caution",
    "source", "load", "order", "battery", "battery-life", "claim", "allow", "bypass",
    "large-signal", "adapter-ripple", "playing-levels", "test-tone",
}
# Optional kit keys that may be given once (a second line would be silently ignored).
SINGLE_KEYS = ("revision", "summary", "source", "load", "order", "battery", "battery-life",
               "bypass", "large-signal", "adapter-ripple", "playing-levels", "test-tone")
# Kit keys kept whole in KitBlock.extra, read by the specs checks (claims, rules, battery).
EXTRA_KEYS = ("battery", "battery-life", "claim", "allow", "large-signal", "adapter-ripple",
              "playing-levels", "test-tone")
_EXAMPLES = {"title": "Fernbrook Clean Boost", "code": "FB-101", "supply": "9 V"}
# Stage ids name files of the site: short, plain names.
_ID = re.compile(r"^[a-z][a-z0-9-]{0,39}$")


def markdown_parser() -> MarkdownIt:
    """The one Markdown configuration: CommonMark with tables, raw HTML off."""
    return MarkdownIt("commonmark", {"html": False}).enable("table")


def parse_guide(path: str | Path, text: str | None = None) -> Guide:
    """Parse one guide file; raises :class:`GuideError` at the first malformed block."""
    path = Path(path)
    shown = str(path)
    text = read_text(path) if text is None else checked_text(text, shown)
    blocks = list(find_blocks(text, shown))
    kits = [b for b in blocks if b.name == "kit"]
    if not kits:
        raise GuideError(
            "the guide has no kit block; start it with a ```kit block giving title, code and "
            "supply",
            SourceSpan(shown, 1),
        )
    if len(kits) > 1:
        raise GuideError(f"a second kit block (the first is at line {kits[0].span.line}); keep one",
                         kits[1].span)
    stages = tuple(read_stage(b) for b in blocks if b.name == "stage")
    check_unique_ids(stages)
    devices = read_devices([b for b in blocks if b.name == "device"])
    return Guide(shown, guide_slug(path), text, read_kit(kits[0]), stages, devices)


def find_blocks(text: str, path: str):
    """Our fenced blocks (info string ``kit``, ``stage ...`` or ``device ...``) in document
    order."""
    lines = text.splitlines()
    for token in markdown_parser().parse(text):
        if is_ours(token, lines, path):
            yield make_block(token.info, token.content, path, token.map[0] + 1)


def read_stage(block: Block) -> StageBlock:
    stage_id = block.argument
    if not stage_id:
        raise GuideError("a stage block needs an id after 'stage', for example ```stage boost",
                         block.span)
    if not _ID.match(stage_id):
        raise GuideError(
            f"stage id {stage_id!r} must be lower-case letters, digits and hyphens (at most 40), "
            "like 'boost'",
            block.span,
        )
    what = f"stage '{stage_id}'"
    kind = require_single(block, "kind", what)
    title = at_most_once(block, "title", what)
    rest = tuple(e for e in block.entries if e.key not in ("kind", "title"))
    return StageBlock(stage_id, kind.value.strip(), title.value if title else stage_id,
                      rest, block.span, kind.span)


def check_unique_ids(stages: tuple[StageBlock, ...]) -> None:
    seen: dict[str, StageBlock] = {}
    for stage in stages:
        if stage.id in seen:
            raise GuideError(
                f"stage id '{stage.id}' is used twice (first at line {seen[stage.id].span.line}); "
                "give each stage its own id",
                stage.span,
            )
        seen[stage.id] = stage


LARGE_SIGNAL = ("yes", "no")


def check_large_signal(entry: Entry | None) -> None:
    """``large-signal: yes`` asks for the large-signal figures (they cost a few seconds)."""
    if entry is not None and entry.value.strip().lower() not in LARGE_SIGNAL:
        raise GuideError(f"'large-signal: {entry.value}' is neither yes nor no; write "
                         "'large-signal: yes' for the figures under a pickup's drive, or drop "
                         "the line", entry.span)


def wants_large_signal(kit: KitBlock) -> bool:
    """Whether the kit block asks for the large-signal figures."""
    return any(e.key == "large-signal" and e.value.strip().lower() == "yes" for e in kit.extra)


def read_kit(block: Block) -> KitBlock:
    for entry in block.entries:
        if entry.key not in KIT_KEYS:
            raise GuideError(
                f"the kit block has no key '{entry.key}'; "
                f"known keys: {', '.join(sorted(KIT_KEYS))}",
                entry.span,
            )
    value = {k: _required(block, k) for k in ("title", "code", "supply")}
    once = {k: at_most_once(block, k, "the kit block") for k in SINGLE_KEYS}
    for caution in block.all("caution"):
        if not caution.value:
            raise GuideError("'caution:' is empty; write the caution after it or drop the line",
                             caution.span)
    check_battery(block)
    check_large_signal(once["large-signal"])
    knobs = read_knobs(block.all("knob"))
    return KitBlock(
        title=value["title"].value, code=value["code"].value, supply=value["supply"].value,
        revision=once["revision"].value if once["revision"] else "A",
        summary=once["summary"].value if once["summary"] else "",
        knobs=knobs, switches=read_switches(block.all("switch"), knobs),
        hardware=tuple(read_hardware(e) for e in block.all("hardware")),
        cautions=tuple(e.value for e in block.all("caution")),
        source=once["source"], load=once["load"], order=once["order"], bypass=once["bypass"],
        extra=tuple(e for e in block.entries if e.key in EXTRA_KEYS),
        span=block.span, supply_span=value["supply"].span, code_span=value["code"].span,
    )


def _required(block: Block, key: str) -> Entry:
    entry = require_single(block, key, "the kit block")
    if not entry.value:
        raise GuideError(f"'{key}:' is empty; write the kit's {key} after it, for example "
                         f"'{key}: {_EXAMPLES[key]}'", entry.span)
    return entry


def read_hardware(entry) -> HardwareLine:
    designator, _, description = entry.value.strip().partition(" ")
    if not DESIGNATOR.match(designator) or not description.strip():
        raise GuideError(
            f"cannot read hardware {entry.value!r}; write a designator and what it is, "
            "like 'J1 input jack, 6.35 mm mono'",
            entry.span,
        )
    return HardwareLine(designator, description.strip(), entry.span)
