"""Claims that set their own test tone: ``claim: thd.300mv below 1 % at 200 Hz``.

A claim on a large-signal figure (THD or output peak at a level, the clean and drive limits,
the swing limits) may end in ``at`` and a frequency within the audio band: the figure is
then the one the kit gives under a sine at that tone, solved for the claim (the kit's
sweep again, nominal parts, at every knob setting and at the levels such claims name)
rather than at the kit's ``test-tone:``. The figures at a claim's tone are the claim's own:
the page, the JSON and the prose keep the kit's test tone.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass

from kitleaf.circuit.chain import KitCircuit
from kitleaf.errors import KitleafError, SpecError
from kitleaf.guide.kit_lines import PLAYING_VOLTS, tone_hz
from kitleaf.guide.model import Entry, Guide
from kitleaf.specs.lookup import KIT, named_level

_TONE = re.compile(r"^(?P<claim>.+?)\s+at\s+(?P<tone>\S.*)$")
# The figures a claim may set a tone for: each name's last word but the setting's
_LARGE_SIGNAL = re.compile(r"(?:^|\.)(?:thd|peak|clean-limit|drive-limit|swing-up|swing-down)"
                           r"(?:\.|$)")


@dataclass(frozen=True)
class ClaimText:
    """A claim line read apart from its tone: ``text`` without it, ``tone`` in hertz (None:
    the kit's test tone)."""

    text: str
    tone: float | None = None


def claim_entries(guide: Guide, kit: KitCircuit) -> list[tuple[str, Entry]]:
    """Every ``claim:`` line with its scope (``kit`` or the stage id), in document order."""
    found = [(KIT, e) for e in guide.kit.extra if e.key == "claim"]
    found += [(s.id, e) for s in kit.stages for e in s.claims]
    return sorted(found, key=lambda pair: pair[1].span.line)


def split_tone(entry: Entry) -> ClaimText:
    """The claim of ``entry`` and the tone it sets, if any; a located SpecError for a tone
    that cannot be simulated or one set on a figure that is no large-signal one."""
    text = entry.value.strip()
    match = _TONE.match(text)
    if match is None:
        return ClaimText(text)
    name = match["claim"].split()[0]
    if not _LARGE_SIGNAL.search(name.lower()):
        raise SpecError(f"claim {entry.value!r} sets a test tone, but '{name}' is no "
                        "large-signal figure (THD, output peak, the clean and drive limits, "
                        f"the swing limits); drop 'at {match['tone']}'", entry.span)
    example = "'claim: thd.300mv below 1 % at 200 Hz' (the tone from 20 Hz to 20 kHz)"
    try:
        hz = tone_hz(entry, match["tone"], example)
    except KitleafError as exc:
        raise SpecError(exc.message, entry.span) from None
    return ClaimText(match["claim"], hz)


def claimed_tones(entries: Iterable[Entry]) -> dict[float, tuple[float, ...]]:
    """Each tone the claims set, with the pickup levels their THD and peak names are at
    (lowest first; none where they name only limits); a claim that does not read is left
    to the claims' check, which names it."""
    tones: dict[float, set[float]] = {}
    for entry in entries:
        try:
            claim = split_tone(entry)
        except SpecError:
            continue
        if claim.tone is None:
            continue
        level = named_level(claim.text.split()[0])
        levels = tones.setdefault(claim.tone, set())
        if level is not None and PLAYING_VOLTS[0] <= level[1] <= PLAYING_VOLTS[1]:
            levels.add(level[1])
    return {tone: tuple(sorted(levels)) for tone, levels in sorted(tones.items())}
