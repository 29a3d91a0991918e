"""Links in a guide's prose: a path from the page, a web or a mail address, and nothing else."""

from __future__ import annotations

import pytest

from kitleaf.render.prose import render_prose


def prose_html(text: str) -> str:
    return "".join(p.content for p in render_prose(text) if p.kind == "html")


@pytest.mark.parametrize("url", [
    "notes.html#part-2", "../index.html", "#voltages", "https://example.org/fernbrook",
    "http://example.org/", "mailto:kits@example.org", "HTTPS://EXAMPLE.ORG/",
])
def test_paths_and_web_and_mail_addresses_stay_links(url):
    assert 'href="' in prose_html(f"[the notes]({url})")


@pytest.mark.parametrize("text", [
    "[x](javascript:alert(1))", "[x](JaVaScRiPt:alert(1))", "[x](&#106;avascript:alert(1))",
    "<javascript:alert(1)>", "[x](vbscript:alert(1))", "[x](file:///etc/passwd)",
    "[x](data:text/html;base64,PHNjcmlwdD4=)",
    # Schemes markdown-it lets through by default: an image from a data: URL (an SVG one runs
    # script when opened on its own), a page's own handlers (intent:, ms-settings:), blobs.
    "![x](data:image/png;base64,iVBORw0KGgo=)", "[x](intent://scan/#Intent;end)",
    "[x](ms-settings:privacy)", "[x](blob:https://example.org/1)", "<ftp://example.org/a>",
    "[x]: javascript:alert(1)\n\n[y][x]",
])
def test_any_other_scheme_leaves_plain_text(text):
    html = prose_html(text)
    assert "href=" not in html and "src=" not in html


@pytest.mark.parametrize("text", ["[x](java&#9;script:alert(1))", "[x](java%0Ascript:alert(1))",
                                  "[x](%6Aavascript:alert(1))", "[x](%20javascript:alert(1))"])
def test_a_scheme_split_or_encoded_is_judged_as_the_browser_would_read_it(text):
    """Browsers drop tabs, newlines and leading control characters from a URL (WHATWG URL
    standard, "basic URL parser"); a percent-encoded scheme is judged decoded, to be safe."""
    assert "href=" not in prose_html(text)
