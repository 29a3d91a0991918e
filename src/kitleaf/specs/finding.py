"""A design rule's located result, apart from the rules themselves: built pages cached on disk
hold findings, and reading them back must not import the solver."""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.errors import SourceSpan, SpecError


@dataclass(frozen=True)
class Finding:
    """A located design-rule result: ``allowed`` holds the guide's reason when it is silenced."""

    rule: str
    subject: str  # a designator, a stage id, or "kit"
    scope: str  # the stage whose section shows it, or "kit"
    message: str
    span: SourceSpan
    allowed: str = ""

    def line(self, kind: str = "warning") -> str:
        """The CLI line: ``path:line: warning: message [rule]``."""
        return f"{self.span}: {kind}: {self.message} [{self.rule}]"

    def as_error(self) -> SpecError:
        """The finding as an error (``--fail-on-findings``): ``path:line: error: message
        [rule]``."""
        return SpecError(f"{self.message} [{self.rule}]", self.span)

    def __str__(self) -> str:
        return self.line()
