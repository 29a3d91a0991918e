"""Fixtures the browser tests share: one headless chromium per test module, and the demo site
built once per module for the tests that read it as published."""

from __future__ import annotations

from pathlib import Path

import pytest

from chromium_pipe import Browser, require_tool
from site_pages import build_demo_site


@pytest.fixture(scope="module")
def browser():
    with Browser(require_tool("chromium")) as running:
        yield running


@pytest.fixture(scope="module")
def demo_site(tmp_path_factory) -> Path:
    require_tool("chromium")
    return build_demo_site(tmp_path_factory.mktemp("demo"))
