"""One built guide as the site assembles it, apart from the pipeline that builds it: a guide
taken whole from the cache is read back without importing the solver or the drawing."""

from __future__ import annotations

from dataclasses import dataclass

from kitleaf.errors import SourceSpan
from kitleaf.render.pages import Card
from kitleaf.specs.finding import Finding


@dataclass(frozen=True)
class GuideOutput:
    """The files of one guide (site-relative path -> bytes), its index card and manifest entry."""

    card: Card
    files: tuple[tuple[str, bytes], ...]
    record: dict | None = None
    notes: tuple[str, ...] = ()  # the specs' notes (not located)
    findings: tuple[Finding, ...] = ()  # design-rule findings no ``allow:`` line silences
    code_span: SourceSpan | None = None  # the kit's 'code:' line, for a code given twice

    @property
    def warnings(self) -> tuple[str, ...]:
        """What does not stop the build (unless ``--fail-on-findings``): notes, then findings'
        lines."""
        return self.notes + tuple(f.line() for f in self.findings)
