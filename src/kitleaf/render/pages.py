"""HTML pages from templates: the index, a guide page and its printable BOM page."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import jinja2

from kitleaf.errors import RenderError, SourceSpan


@dataclass(frozen=True)
class Card:
    """What the index shows of one kit."""

    slug: str
    title: str
    code: str
    revision: str
    summary: str
    headline: tuple[tuple[str, str], ...]
    href: str


def render_page(env: jinja2.Environment, template: str, context: Mapping[str, Any],
                path: str) -> bytes:
    """Render ``template`` with ``context``; a template mistake is a located RenderError."""
    try:
        html = env.get_template(template).render(**context)
    except jinja2.TemplateSyntaxError as exc:
        raise RenderError(f"theme template: {exc.message}",
                          SourceSpan(exc.filename or template, exc.lineno)) from None
    except jinja2.UndefinedError as exc:
        raise RenderError(f"template {template}: {exc.message}; check the name in the theme",
                          SourceSpan(path, 1)) from None
    return html.encode("utf-8")
