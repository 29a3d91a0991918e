"""build_site: a folder of guides in, a whole static site out, or nothing written at all.

A guide whose text, theme and kitleaf code are unchanged is taken whole from the cache; the
rest are built across the cores. The index, the manifest and the changes page are made here,
and :func:`publish` writes only the files whose bytes changed. After a successful build the
cache is pruned of what this build did not use (:mod:`kitleaf.site.prune`).
"""

from __future__ import annotations

import os
import time
from dataclasses import dataclass, field
from pathlib import Path

from kitleaf.errors import BuildError, ErrorList, KitleafError, SourceSpan
from kitleaf.render.environment import make_environment, theme_dirs
from kitleaf.render.pages import render_page
from kitleaf.site.cache import Cache, check_cache_folder, default_cache_dir
from kitleaf.site.changes import compare
from kitleaf.site.discover import find_guides, site_root_for
from kitleaf.site.errata import errata_view, next_history
from kitleaf.site.fingerprint import theme_fingerprint
from kitleaf.site.manifest import MANIFEST_NAME, dump_manifest, make_manifest, read_manifest
from kitleaf.site.output_folder import check_output_folder
from kitleaf.site.pool import default_jobs, run_guides
from kitleaf.site.progress import Progress
from kitleaf.site.prune import DEFAULT_POLICY, PrunePolicy, PruneReport, prune
from kitleaf.site.publish import publish
from kitleaf.site.unique import check_slugs, reused_codes

CHANGES_PAGE = "changes.html"


class BuildFailed(Exception):
    """One or more guides failed; ``errors`` holds each located error."""

    def __init__(self, errors: list[KitleafError]) -> None:
        super().__init__(f"{len(errors)} guide(s) failed")
        self.errors = errors


@dataclass(frozen=True)
class BuildReport:
    """What a build did: guides, files in the site, seconds, and what changed on disk."""

    guides: int
    files: int
    seconds: float
    written: tuple[str, ...] = ()
    removed: tuple[str, ...] = ()
    rebuilt: int = 0  # guides solved and rendered, not taken whole from the cache
    warnings: tuple[str, ...] = ()
    changes: dict = field(default_factory=dict)
    pages: int = 0
    pruned: PruneReport = PruneReport()  # cache entries removed after the build


def build_site(target: Path, out_dir: Path, *, jobs: int | None = None,
               cache_dir: Path | None = None, use_cache: bool = True,
               fail_on_findings: bool = False, progress=None,
               prune_policy: PrunePolicy = DEFAULT_POLICY) -> BuildReport:
    """Build every guide under ``target`` into ``out_dir``; on any error nothing is written.

    With ``fail_on_findings``, a guide's design-rule finding is an error too
    (:func:`finding_errors`).
    """
    started = time.perf_counter()
    paths = find_guides(target)
    check_output_folder(Path(out_dir), target)  # before any work: a refused folder is untouched
    themes = theme_dirs(site_root_for(target))
    static = static_files(themes)  # read first: a theme that cannot be published stops here
    cache = Cache(cache_dir or default_cache_dir(out_dir)) if use_cache else None
    if cache:
        check_cache_folder(cache.root, Path(out_dir), chosen=cache_dir is not None)
    outputs, rebuilt = collect(paths, themes, cache, jobs or default_jobs(), progress,
                               fail_on_findings)
    if fail_on_findings and (refused := finding_errors(outputs)):
        raise BuildFailed(refused)  # the guides stay cached; nothing is published
    files, changes = site_files(outputs, themes, static, Path(out_dir))
    result = publish(Path(out_dir), files)
    pruned = prune(cache.root, cache.used, prune_policy) if cache else PruneReport()
    warnings = tuple(f"{p}: {w}" for p, o in zip(paths, outputs, strict=True) for w in o.warnings)
    pages = sum(1 for name in files if name.endswith(".html"))
    return BuildReport(len(paths), len(files), time.perf_counter() - started, result.written,
                       result.removed, rebuilt, warnings, changes, pages, pruned)


def collect(paths: list[Path], themes: list[Path], cache: Cache | None, jobs: int,
            stream=None, fail_on_findings: bool = False) -> tuple[list, int]:
    """Every guide's output, from the cache or built; every guide's error, not just the first
    (with ``fail_on_findings``, the other guides' findings beside them, as ``check
    --fail-on-findings`` lists them).
    The guides that built are cached even when another failed, so fixing it rebuilds it alone."""
    theme_key = theme_fingerprint(themes)
    # Keyed by file name, not path: the same folder moved or copied elsewhere stays cached.
    keys = [cache.key("guide", theme_key, p.name, p.read_bytes()) if cache else "" for p in paths]
    outputs = [cached_guide(cache, k) if cache else None for k in keys]
    todo = [i for i, o in enumerate(outputs) if o is None]
    progress = Progress(len(paths), stream)
    progress.advance(len(paths) - len(todo))
    built = run_guides([paths[i] for i in todo], themes, cache.root if cache else None, jobs,
                       progress.advance, progress.tick)
    progress.done()
    for i, (output, uses) in zip(todo, built, strict=True):
        outputs[i] = output
        if cache and not isinstance(output, KitleafError):
            cache.used.update(uses)
            cache.store("guide", keys[i], (output, uses))
    if any(isinstance(o, KitleafError) for o in outputs):
        raise BuildFailed(failures(outputs, fail_on_findings))
    check_slugs(paths, [o.card.slug for o in outputs])
    if reused := reused_codes([(o.card.code, o.code_span) for o in outputs]):
        raise BuildFailed(reused)
    return outputs, len(todo)


def cached_guide(cache: Cache, key: str):
    """A guide's stored output; the entries it was built from count as used by this build."""
    found = cache.load("guide", key)
    if not (isinstance(found, tuple) and len(found) == 2):
        return None
    output, uses = found
    cache.used.update(uses)  # kept by the pruning, ready for this guide's next edit
    return output


def failures(outputs: list, fail_on_findings: bool) -> list[KitleafError]:
    """In guide order, each failed guide's error and, with ``fail_on_findings``, the others'
    findings."""
    errors: list[KitleafError] = []
    for output in outputs:
        if isinstance(output, KitleafError):
            errors.append(output)
        elif fail_on_findings:
            errors += finding_errors([output])
    return errors


def finding_errors(outputs: list) -> list[KitleafError]:
    """Each guide's design-rule findings as its error, one line per finding, as ``kitleaf check
    --fail-on-findings`` prints them: ``path:line: error: message [rule]``."""
    errors = [[f.as_error() for f in o.findings] for o in outputs]
    return [found[0] if len(found) == 1 else ErrorList(found) for found in errors if found]


def site_files(outputs: list, themes: list[Path], static: dict[str, bytes],
               out_dir: Path) -> tuple[dict, dict]:
    """Every file of the site, and the change record against the published manifest."""
    files: dict[str, bytes] = {}
    for output in outputs:
        files.update(output.files)
    env = make_environment(themes)
    cards = sorted((o.card for o in outputs), key=lambda c: (c.code, c.slug))
    files["index.html"] = render_page(env, "index.html", {"cards": cards, "root": ""}, "index")
    files.update(static)
    guides = {o.card.slug: o.record for o in outputs}
    published = read_manifest(out_dir)
    changes = compare(published, {"guides": guides})
    history = next_history(published, guides)
    files[MANIFEST_NAME] = dump_manifest(make_manifest(guides, changes, history))
    files[CHANGES_PAGE] = render_page(env, CHANGES_PAGE, {
        "changes": changes, "errata": errata_view(history), "root": ""}, CHANGES_PAGE)
    return files, changes


def static_files(themes: list[Path]) -> dict[str, bytes]:
    """The theme's static folder; a site's own file overrides the packaged one of that name."""
    files: dict[str, bytes] = {}
    for theme in reversed(themes):
        static = theme / "static"
        for path in own_files(static):
            files[f"static/{path.relative_to(static).as_posix()}"] = path.read_bytes()
    return files


def own_files(folder: Path) -> list[Path]:
    """Every file under ``folder``, sorted; a symbolic link is an error, not followed, so a
    link to a file elsewhere on the machine is never published."""
    found: list[Path] = []
    for here, dirs, files in os.walk(folder):  # a linked folder is listed, never entered
        for name in sorted(dirs + files):
            if (Path(here) / name).is_symlink():
                raise BuildError("a symbolic link in the theme's static folder; kitleaf "
                                 "publishes only the theme's own files, so copy the file in",
                                 SourceSpan(str(Path(here) / name)))
        found += [Path(here) / name for name in files]
    return sorted(found)
