"""Claims: what a guide states its numbers must be, checked against the computed values.

A claim is a ``claim:`` line in the kit block or a stage block::

    claim: gain.level-100 between 22 dB and 28 dB
    claim: low-corner below 20 Hz
    claim: q1.collector between 4 V and 6 V

A claim holds only if the whole tolerance range of the value (its 5th to 95th percentile
spread, or the nominal value where no spread was computed) lies inside the stated limits: a
claim speaks for every kit built from parts within tolerance, not for the one on the bench.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from types import MappingProxyType

from kitleaf.circuit.chain import KitCircuit
from kitleaf.display import figure, unstable_text
from kitleaf.errors import KitleafError, SpecError, raise_all
from kitleaf.guide.model import Entry, Guide
from kitleaf.specs.claim_tone import ClaimText, claim_entries, split_tone
from kitleaf.specs.lookup import Computed, computed_values, lookup
from kitleaf.specs.model import KitSpecs
from kitleaf.specs.polarity import Orientation
from kitleaf.specs.ratings import Stress
from kitleaf.specs.rules import Finding, RuleContext, check_rules
from kitleaf.values import format_value, parse_value

_CLAIM = re.compile(r"^(?P<name>[A-Za-z0-9][A-Za-z0-9._-]*)\s+(?:(?P<op>below|above)\s+"
                    r"(?P<limit>.+)|between\s+(?P<low>.+?)\s+and\s+(?P<high>.+))$")
_DB = re.compile(r"^([-+−]?\d+(?:\.\d*)?)\s*dB$")
_PERCENT = re.compile(r"^(\d+(?:\.\d*)?|\.\d+)\s*%$")


@dataclass(frozen=True)
class Claim:
    """A stated bound on one computed value: ``low``/``high`` in SI (None: unbounded)."""

    entry: Entry
    scope: str
    name: str
    low: float | None
    high: float | None
    tone: float | None = None  # hertz: the test tone the claim sets (None: the kit's)


@dataclass(frozen=True)
class Verified:
    """A claim that holds, with the value that verified it."""

    claim: Claim
    computed: Computed

    @property
    def scope(self) -> str:
        return self.claim.scope

    @property
    def text(self) -> str:
        return self.claim.entry.value

    @property
    def label(self) -> str:
        return self.computed.label


def read_claim(entry: Entry, scope: str, values: Mapping[str, Computed],
               text: ClaimText | None = None) -> Claim:
    """The claim of ``entry`` (``text``: its words apart from the tone it sets, see
    specs/claim_tone.py), its name looked up in ``values``."""
    text = text or ClaimText(entry.value.strip())
    match = _CLAIM.match(text.text)
    if match is None:
        raise SpecError(f"cannot read the claim {entry.value!r}; write a name and a bound, like "
                        "'gain.level-100 between 22 dB and 28 dB' or 'current below 5 mA'",
                        entry.span)
    computed = lookup(values, match["name"], entry.span, scope)
    read = _reader(computed.quantity, entry)
    low, high = (read(match["low"]), read(match["high"])) if match["low"] else (None, None)
    if match["op"] == "below":
        high = read(match["limit"])
    elif match["op"] == "above":
        low = read(match["limit"])
    if low is not None and high is not None and low > high:
        raise SpecError(f"claim {entry.value!r}: the lower bound is above the upper", entry.span)
    return Claim(entry, scope, computed.name, low, high, text.tone)


def _reader(quantity: str, entry: Entry):
    def read(text: str) -> float:
        text = text.strip()
        if quantity == "db":
            match = _DB.match(text)
            if match is None:
                raise SpecError(f"claim {entry.value!r}: cannot read {text!r}; a gain is "
                                "written in decibels, like '24 dB' or '-3 dB'", entry.span)
            return float(match[1].replace("−", "-"))
        if quantity == "thd":
            match = _PERCENT.match(text)
            if match is None:
                raise SpecError(f"claim {entry.value!r}: cannot read {text!r}; distortion is "
                                "written as a percentage, like '1 %' or '0.5%'", entry.span)
            return float(match[1]) / 100.0
        try:
            return parse_value(text, quantity)
        except KitleafError as exc:
            raise SpecError(f"claim {entry.value!r}: {exc.message}", entry.span) from None

    return read


def tone_values(specs: KitSpecs | None, kit: KitCircuit, tone: float) -> dict[str, Computed]:
    """The names a claim at its own ``tone`` reads: the kit's, with its large-signal figures
    those at that tone (none where the kit has no large-signal figures)."""
    drives = next((t for t in specs.claim_tones if t.freq == tone), None) if specs else None
    if drives is None:  # the lookup then says that the kit has no large-signal figures
        return computed_values(specs, kit) if specs else {}
    by_stage = dict(drives.stages)
    at_tone = replace(specs, drive=drives.kit, stages=tuple(
        replace(s, drive=by_stage.get(s.id, s.drive)) for s in specs.stages))
    words = f", at a {format_value(tone, 'frequency')} test tone"
    return {n: replace(c, label=c.label + words) for n, c in
            computed_values(at_tone, kit).items()}


def judged_span(value) -> tuple[float, float]:
    """The span a claim is judged over: the tolerance range widened to take in the nominal
    value (a spread of samples need not hold the nominal build where a part is pushed to an
    extreme, and the nominal build is one the maker may solder)."""
    low = value.nominal if value.low is None else min(value.low, value.nominal)
    high = value.nominal if value.high is None else max(value.high, value.nominal)
    return low, high


def holds(claim: Claim, computed: Computed) -> bool:
    """True if the whole tolerance range of ``computed`` lies within the claim's bounds."""
    low, high = judged_span(computed.value)
    return ((claim.low is None or low >= claim.low)
            and (claim.high is None or high <= claim.high))


def broken(claim: Claim, computed: Computed) -> SpecError:
    value = computed.value
    nominal = figure(value.nominal, computed.quantity)
    if value.low is None or value.high is None:
        spread = "range not computed: nominal only"
    else:
        low, high = (figure(x, computed.quantity) for x in judged_span(value))
        spread = f"range {low}{' to ' if '-' in low + high else '–'}{high}"
    return SpecError(f"claim '{claim.entry.value}' ({computed.label}) does not hold: computed "
                     f"{nominal} ({spread}); correct the parts or the claim", claim.entry.span)


def meaningless(claim: Claim, computed: Computed) -> SpecError:
    """A claim on a small-signal figure of an unstable setting: no figure to hold there."""
    return SpecError(f"claim '{claim.entry.value}' ({computed.label}) cannot hold: the figure "
                     f"is {unstable_text(computed.unstable)}; correct the parts or drop the "
                     "claim", claim.entry.span)


def check_claims(guide: Guide, kit: KitCircuit, values: Mapping[str, Computed],
                 specs: KitSpecs | None = None) -> tuple[Verified, ...]:
    """Every claim of ``guide`` verified; raises every one that does not hold, in one error.
    A claim that sets its own test tone reads the figures ``specs`` holds at that tone."""
    verified, failures = [], []
    for scope, entry in claim_entries(guide, kit):
        try:
            text = split_tone(entry)
            at = values if text.tone is None else tone_values(specs, kit, text.tone)
            claim = read_claim(entry, scope, at, text)
        except SpecError as exc:
            failures.append(exc)
            continue
        computed = at[claim.name]
        if computed.unstable is not None:
            failures.append(meaningless(claim, computed))
        elif holds(claim, computed):
            verified.append(Verified(claim, computed))
        else:
            failures.append(broken(claim, computed))
    raise_all(failures)
    return tuple(verified)


@dataclass(frozen=True)
class Checks:
    """A guide's verified claims and design-rule findings, for its page and the CLI."""

    values: Mapping[str, Computed]
    claims: tuple[Verified, ...]
    findings: tuple[Finding, ...]
    # Each rated part's worst DC stress, for the BOM's rating warnings (specs/ratings.py).
    stresses: Mapping[str, Stress]
    # Which way each polarised capacitor goes, for the drawing and the BOM (specs/polarity.py).
    orientations: Mapping[str, Orientation] = field(default_factory=dict)

    def claims_for(self, scope: str) -> tuple[Verified, ...]:
        return tuple(c for c in self.claims if c.scope == scope)

    def findings_for(self, scope: str) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.scope == scope)

    @property
    def warnings(self) -> tuple[Finding, ...]:
        """Findings no ``allow:`` line silences."""
        return tuple(f for f in self.findings if not f.allowed)


def verify(guide: Guide, kit: KitCircuit, specs: KitSpecs, solved=None) -> Checks:
    """Claims checked (a broken one raises SpecError) and every design rule run; the rules
    read ``solved`` (the kit's :func:`~kitleaf.specs.derive.solve_kit`, shared with the
    specs) or solve the states they need themselves."""
    values = computed_values(specs, kit)
    claims = check_claims(guide, kit, values, specs)
    ctx = RuleContext(guide, kit, specs, solved)
    return Checks(MappingProxyType(values), claims, check_rules(ctx),
                  MappingProxyType(ctx.stresses), MappingProxyType(ctx.orientations))
