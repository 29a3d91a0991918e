"""A kit's sound previews for its page: rendered once per circuit, cached like every figure.

The clips depend on the kit's circuit alone (every part of every stage, the source and the
load, at each clip's knob setting) and on kitleaf's code, so they are keyed by exactly that:
a change of prose, of a claim or of a line number renders nothing again.
"""

from __future__ import annotations

from kitleaf.audio.clips import clip_plan
from kitleaf.audio.encode import RATE
from kitleaf.audio.phrase import dry_phrase
from kitleaf.audio.previews import Previews, make_previews
from kitleaf.audio.render import kit_renderer
from kitleaf.circuit.chain import KitCircuit
from kitleaf.errors import SourceSpan
from kitleaf.site.cache import Cache
from kitleaf.site.fingerprint import canonical_pair
from kitleaf.specs.derive import SolvedKit

FOLDER = "sounds"  # beside the guide's page


def cached_previews(cache: Cache, kit: KitCircuit, solved: SolvedKit) -> Previews:
    """The kit's clips and their levels, rendered only when its circuit moved."""
    key = cache.key("previews", canonical_pair(kit)[0])
    found = cache.load("previews", key)
    if isinstance(found, Previews):
        return found
    plan = clip_plan([(k.name, k.designator) for k in kit.knobs])
    previews = make_previews(plan, dry_phrase(RATE), kit_renderer(solved), FOLDER)
    cache.store("previews", key, previews)
    return previews


def preview_notes(previews: Previews | None, kit: KitCircuit,
                  kit_span: SourceSpan) -> tuple[str, ...]:
    """A located warning for each clip that could not be made: at its stage's block (the kit
    block's when no stage is named), with the setting and the reason."""
    if previews is None:
        return ()
    spans = {s.id: s.span for s in kit.stages}
    return tuple(f"{spans.get(c.stage, kit_span)}: warning: sound preview '{c.label}' has no "
                 f"clip: {c.reason}" for c in previews.clips if c.file is None)
