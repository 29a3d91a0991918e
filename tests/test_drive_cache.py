"""The large-signal figures are cached by all they depend on: a value edit redraws them.

Built through the guide pipeline with a cache folder, as a rebuild runs it: the demo drive
(Fernbrook Circuitworks' Alder) as shipped, then with its collector resistor moved, then as
shipped again. A stage's gain sets where the diodes after it start to clip, so the drive
curve and the waveforms must move with the resistor (common practice, no source); the same
guide again must give the first build's bytes from the cache.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from kitleaf.render.environment import theme_dirs
from kitleaf.site.cache import Cache
from kitleaf.site.guide_output import process_guide
from kitleaf.specs import drive

ALDER = Path(__file__).resolve().parents[1] / "guides" / "alder-drive.md"
PICTURES = ("drive-curve.svg", "drive-waves.svg")


def pictures(path: Path, cache: Cache) -> dict[str, bytes]:
    drive._SWEEPS.clear()  # each build as a fresh worker process sees it
    files = dict(process_guide(path, theme_dirs(None), cache=cache).files)
    return {name: data for name, data in files.items() if name.endswith(PICTURES)}


@pytest.fixture(scope="module")
def builds(tmp_path_factory):
    root = tmp_path_factory.mktemp("drive-cache")
    cache, guide = Cache(root / "cache"), root / "alder-drive.md"
    text = ALDER.read_text()
    assert "collector: R3 10k\n" in text
    guide.write_text(text)
    shipped = pictures(guide, cache)
    guide.write_text(text.replace("collector: R3 10k\n", "collector: R3 4k7\n"))
    edited = pictures(guide, cache)
    guide.write_text(text)
    return shipped, edited, pictures(guide, cache), cache


def test_both_pictures_are_drawn(builds):
    shipped, edited, _, _ = builds
    assert len(shipped) == len(edited) == len(PICTURES)


def test_a_value_edit_redraws_every_large_signal_picture(builds):
    shipped, edited, _, _ = builds
    for name, data in shipped.items():
        assert edited[name] != data, name


def test_the_guide_as_shipped_again_gives_the_same_bytes_from_the_cache(builds):
    shipped, _, again, cache = builds
    assert again == shipped
    assert any(name.startswith("specs/") for name in cache.used)
