"""Computed values in prose: ``{=boost.gain.level-100}`` becomes the value, as the trade writes it.

The syntax is a name (starting with a letter) between ``{=`` and ``}``. Nothing in CommonMark
or Jinja (``{{``, ``{%``, ``{#``) starts with ``{=``; a brace right after ``_``, ``^`` or a
backslash is left to LaTeX-style math; a plain Markdown viewer shows the name as written.
Inside code spans and fenced blocks it stays literal. Names are those of
:mod:`kitleaf.specs.lookup`; an unknown name is a SpecError at its guide line.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from markdown_it import MarkdownIt
from markdown_it.common.utils import escapeHtml
from markdown_it.rules_core import StateCore
from markdown_it.rules_inline import StateInline

from kitleaf.display import small_signal_text
from kitleaf.errors import SourceSpan
from kitleaf.render.prose import register_plugin
from kitleaf.specs.lookup import Computed, lookup

TOKEN = "computed_value"
# What render_prose's env carries for this plugin.
VALUES_KEY = "computed_values"
PATH_KEY = "guide_path"
_REFERENCE = re.compile(r"\{=\s*([A-Za-z][A-Za-z0-9._-]*)\s*\}")
# Right after these a brace is LaTeX (x_{=a}, y^{=b}), not ours.
_LATEX_BEFORE = ("_", "^", "\\")


def prose_env(path: str, values: Mapping[str, Computed]) -> dict:
    """The ``env`` for :func:`kitleaf.render.prose.render_prose` that resolves names."""
    return {VALUES_KEY: values, PATH_KEY: path}


def _reference(state: StateInline, silent: bool) -> bool:
    """Inline rule: ``{=name}`` at the current position becomes one token."""
    if not state.src.startswith("{=", state.pos):
        return False
    if state.pos and state.src[state.pos - 1] in _LATEX_BEFORE:
        return False
    match = _REFERENCE.match(state.src, state.pos)
    if match is None:
        return False
    if not silent:
        token = state.push(TOKEN, "", 0)
        token.content = match[0]
        # Lines into the block's text; the block's own first line is added after parsing.
        token.meta = {"name": match[1], "offset": state.src.count("\n", 0, state.pos)}
    state.pos = match.end()
    return True


def _resolve(state: StateCore) -> None:
    """Core rule after inline parsing: each reference gets its value, or a located error."""
    values = state.env.get(VALUES_KEY)
    if values is None:  # rendered without specs (a preview): references stay as written
        return
    path, first = state.env.get(PATH_KEY, ""), 1
    for block in state.tokens:
        if block.map is not None:
            first = block.map[0] + 1  # Token.map is 0-based
        for token in block.children or ():
            if token.type == TOKEN:
                span = SourceSpan(path, first + token.meta["offset"])
                computed = lookup(values, token.meta["name"], span)
                token.meta["computed"] = computed


def _render(renderer, tokens, idx, options, env) -> str:
    token = tokens[idx]
    computed = token.meta.get("computed")
    if computed is None:
        return escapeHtml(token.content)
    title = escapeHtml(f"{computed.label} ({computed.name}), computed from the parts")
    shown = escapeHtml(small_signal_text(computed.value, computed.quantity, computed.unstable))
    return f'<span class="computed" title="{title}">{shown}</span>'


@register_plugin("computed-values")
def computed_values_plugin(md: MarkdownIt) -> None:
    """Register the ``{=name}`` syntax on a parser (``md.use`` style)."""
    md.inline.ruler.before("link", TOKEN, _reference)
    md.core.ruler.after("inline", f"{TOKEN}_resolve", _resolve)
    md.add_render_rule(TOKEN, _render)

