"""The rows of a page's check table: each claim and design-rule finding of one scope, with what
the parts give and the verdict in words and a symbol (never colour alone)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

from kitleaf.display import range_text

if TYPE_CHECKING:  # types only: the environment that offers check_rows loads no specs code
    from kitleaf.specs.claims import Checks, Verified
    from kitleaf.specs.finding import Finding

# verdict key -> (symbol, words); the symbol repeats the words for a quick scan of the column
# and in greyscale print, the words carry the meaning for a screen reader.
VERDICTS = {
    "holds": ("✓", "Holds"),
    "look": ("▲", "Needs a look"),
    "accepted": ("◇", "Accepted by the maker"),
}


@dataclass(frozen=True)
class CheckRow:
    """One row: what is checked, what the parts give, the verdict and the guide line."""

    kind: str  # "claim" or "rule"
    check: str  # the claim as written, or the rule's summary
    detail: str  # the value's name, or the rule's id and subject
    given: str  # the computed value with its range, or the finding's words
    verdict: str  # a key of VERDICTS
    line: int
    reason: str = ""  # why an accepted finding stays

    @property
    def symbol(self) -> str:
        return VERDICTS[self.verdict][0]

    @property
    def words(self) -> str:
        return VERDICTS[self.verdict][1]


def check_rows(checks: Checks, scope: str) -> tuple[CheckRow, ...]:
    """The claims of ``scope`` (a stage id or the kit), then its findings, in guide order."""
    summaries = _rule_summaries()
    rows = [_claim_row(v) for v in checks.claims_for(scope)]
    rows += [_finding_row(f, summaries) for f in checks.findings_for(scope)]
    return tuple(rows)


def _claim_row(verified: Verified) -> CheckRow:
    value = verified.computed
    return CheckRow("claim", verified.text, f"claim on {value.label}",
                    range_text(value.value, value.quantity), "holds",
                    verified.claim.entry.span.line)


def _finding_row(finding: Finding, summaries: Mapping[str, str]) -> CheckRow:
    summary = summaries.get(finding.rule, finding.rule)
    detail = f"design rule {finding.rule}, on {finding.subject}"
    return CheckRow("rule", summary[:1].upper() + summary[1:], detail, _sentence(finding.message),
                    "accepted" if finding.allowed else "look", finding.span.line,
                    finding.allowed)


def _sentence(message: str) -> str:
    return message[:1].upper() + message[1:] + ("" if message.endswith(".") else ".")


def _rule_summaries() -> dict[str, str]:
    # Imported here, not at the top: the index and changes pages share this environment and
    # are rendered without loading the rules (and the solver they import).
    from kitleaf.specs.rules import RULES
    return {rule.id: rule.summary for rule in RULES.values()}
