"""Sound previews on a built page: players with their levels, clips cached by the circuit, the
same bytes on every build, and a clip that could not be made said on the page and the terminal.

The phrase is cut to a few milliseconds here (the clips' length changes nothing of what is
checked), and guides build in this process so the cut applies.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from kitleaf.site import sound_previews
from kitleaf.site.build import BuildFailed, build_site
from site_pages import DEMO_GUIDES, parse_page

GUIDE = "brookside-boost.md"


@pytest.fixture(autouse=True)
def short_phrase(monkeypatch):
    monkeypatch.setattr("kitleaf.audio.phrase.PHRASE_SECONDS", 0.01)


def guides_with(root: Path, text_change=lambda t: t) -> Path:
    guides = root / "guides"
    guides.mkdir(parents=True, exist_ok=True)
    text = (DEMO_GUIDES / GUIDE).read_text(encoding="utf-8")
    text = text.replace("bypass: true\n", "bypass: true\nsound-previews: on\n", 1)
    (guides / GUIDE).write_text(text_change(text), encoding="utf-8")
    return guides


def build(root: Path, guides: Path, **options):
    return build_site(guides, root / "published", jobs=1, **options)


def test_the_page_plays_the_bypass_and_every_clip_with_its_levels(tmp_path):
    build(tmp_path, guides_with(tmp_path), use_cache=False)
    page = tmp_path / "published" / "brookside-boost" / "index.html"
    tree = parse_page(page)
    players = tree.find_all("audio")
    sources = [p.attrs["src"] for p in players]
    assert sources == ["sounds/bypass.ogg", "sounds/all-half.ogg", "sounds/level-0.ogg",
                       "sounds/level-100.ogg"]
    assert all((page.parent / s).is_file() for s in sources)
    assert all("controls" in p.attrs for p in players)  # plain players, no script needed
    levels = [e.all_text() for e in tree.find_all("span", "clip-level")]
    assert len(levels) == 4
    level = re.compile(r"peak [\d.]+ [µm]?V, RMS [\d.]+ [µm]?V \(-?[\d.]+ dBV\)")
    assert all(level.search(t) for t in levels)


def test_two_builds_give_the_same_bytes(tmp_path):
    sites = []
    for name in ("one", "two"):
        build(tmp_path / name, guides_with(tmp_path / name), use_cache=False)
        site = tmp_path / name / "published"
        sites.append({p.relative_to(site): p.read_bytes() for p in site.rglob("*")
                      if p.is_file()})
    assert any(p.suffix == ".ogg" for p in sites[0])
    assert sites[0] == sites[1]


def test_clips_render_again_only_when_the_circuit_moves(tmp_path, monkeypatch):
    renders = []
    original = sound_previews.kit_renderer

    def counted(solved):
        renders.append(solved.kit)
        return original(solved)

    monkeypatch.setattr(sound_previews, "kit_renderer", counted)
    cache = tmp_path / "cache"
    build(tmp_path, guides_with(tmp_path), cache_dir=cache)
    assert len(renders) == 1
    build(tmp_path, guides_with(tmp_path, lambda t: t.replace("first build",
                                                              "very first build")),
          cache_dir=cache)
    assert len(renders) == 1  # the prose moved, the circuit did not
    build(tmp_path, guides_with(tmp_path, lambda t: t.replace("input-cap: C1 68n",
                                                              "input-cap: C1 100n")),
          cache_dir=cache)
    assert len(renders) == 2


def test_a_clip_that_could_not_be_made_is_said_on_the_page_and_warned_at_its_stage(
        tmp_path, monkeypatch):
    monkeypatch.setattr("kitleaf.engine.transient._compiled", lambda mem: None)
    monkeypatch.setattr("kitleaf.engine.reduced_steps.MAX_NEWTON", 1)
    monkeypatch.setattr("kitleaf.engine.reduced_steps.RETRY_NEWTON", 1)
    guides = guides_with(tmp_path)
    report = build(tmp_path, guides, use_cache=False)
    page = parse_page(tmp_path / "published" / "brookside-boost" / "index.html")
    missing = [e.all_text() for e in page.find_all("li", "clip-missing")]
    assert len(missing) == 3 and all("No clip: the time-domain solve of stage 'boost'" in m
                                     for m in missing)
    assert [a.attrs["src"] for a in page.find_all("audio")] == ["sounds/bypass.ogg"]
    # nothing to match the dry phrase to: the page does not call it level-matched
    names = [e.all_text() for e in page.find_all("span", "clip-name")]
    assert names[0] == ("Bypass (not level-matched: the clip 'Every knob at half way' could "
                        "not be made)")
    how = page.find_all("p", "previews-how")[0].all_text()
    assert "not level-matched" in how and "level-matched to the kit" not in how
    lines = (guides / GUIDE).read_text(encoding="utf-8").splitlines()
    stage_line = lines.index("```stage boost") + 1
    warned = [w for w in report.warnings if "sound preview" in w]
    assert len(warned) == 3
    assert all(f"{GUIDE}:{stage_line}: warning: sound preview '" in w for w in warned)
    assert "Level at 100 %" in "".join(warned)


def test_previews_placed_in_a_guide_that_did_not_ask_for_them_is_a_located_error(tmp_path):
    guides = tmp_path / "guides"
    guides.mkdir()
    text = (DEMO_GUIDES / GUIDE).read_text(encoding="utf-8") + "\n{@previews}\n"
    (guides / GUIDE).write_text(text, encoding="utf-8")
    with pytest.raises(BuildFailed) as failed:
        build(tmp_path, guides, use_cache=False)
    [error] = failed.value.errors
    assert "add 'sound-previews: on'" in str(error)
    assert error.span.line == len(text.splitlines())
