"""Solving and rendering guides across all cores: a process pool whose result equals a serial run.

Each worker builds whole guides and returns a :class:`GuideOutput` or the guide's
:class:`KitleafError` (picklable, so it crosses the process boundary with its location), with
the names of the cache entries the guide used. Results are put back in guide order, so the
site never depends on which worker finished first. Workers start from a fork server that has
imported the pipeline once and frozen it, and they end with the build
(:mod:`kitleaf.site.lifetime`): on an error, Ctrl-C, SIGTERM or SIGHUP they are terminated at
once, and if the build process dies they exit by themselves.
"""

from __future__ import annotations

import concurrent.futures as futures
import contextlib
import multiprocessing
import os
import sys
from collections.abc import Callable
from pathlib import Path

from kitleaf.errors import KitleafError
from kitleaf.site.lifetime import Stopped, die_of, exit_with_build, signals_stop_pool

PIPELINE_MODULE = "kitleaf.site.guide_output"
LIFETIME_MODULE = "kitleaf.site.lifetime"  # the workers' initializer, imported once
FREEZE_MODULE = "kitleaf.site.fork_ready"  # preloaded last: the workers share the imports' pages
Result = object  # a GuideOutput, or the KitleafError that stopped the guide
Built = tuple[Result, tuple[str, ...]]  # and the cache entries the guide read or wrote


def default_jobs() -> int:
    """Every core this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:
        return max(1, os.cpu_count() or 1)


def build_one(path: Path, themes: list[Path], cache_root: Path | None) -> Built:
    """One guide, start to finish; a user error is returned, not raised, to keep the others."""
    from kitleaf.site.cache import Cache, NoCache
    from kitleaf.site.guide_output import process_guide

    cache = Cache(cache_root) if cache_root is not None else NoCache()
    try:
        return process_guide(path, themes, cache=cache), tuple(sorted(cache.used))
    except KitleafError as exc:
        return exc, ()
    except Exception as exc:  # a kitleaf bug: keep the traceback, but say which guide
        exc.add_note(f"while building {path}")
        raise


def run_guides(paths: list[Path], themes: list[Path], cache_root: Path | None, jobs: int,
               advance: Callable[[], None] = lambda: None,
               tick: Callable[[], None] = lambda: None) -> list[Built]:
    """Build ``paths`` with up to ``jobs`` processes; results in the order of ``paths``."""
    workers = min(jobs, len(paths)) if _main_importable() else 1
    if workers <= 1:
        return [_serial(path, themes, cache_root, advance) for path in paths]
    with worker_pool(workers) as pool:
        return _parallel(pool, paths, themes, cache_root, advance, tick)


@contextlib.contextmanager
def worker_pool(workers: int):
    """A process pool whose workers never outlive the build, however the build ends."""
    pool = futures.ProcessPoolExecutor(workers, mp_context=_context(),
                                       initializer=exit_with_build, initargs=(os.getpid(),))
    try:
        with signals_stop_pool():
            yield pool
    except Stopped as stopped:  # SIGTERM or SIGHUP: stop the workers, then die of the signal
        # No shutdown here: the signal may have landed inside submit() while it held the
        # pool's lock, and shutdown would wait on that lock for ever. The process dies next.
        _terminate(pool)
        die_of(stopped)
        raise
    except BaseException:  # an error or Ctrl-C: the workers' guides are of no use any more
        stop_workers(pool)
        raise
    pool.shutdown(wait=True)


def stop_workers(pool: futures.ProcessPoolExecutor) -> None:
    """Cancel what is queued and terminate the workers now, mid-guide."""
    terminate = getattr(pool, "terminate_workers", None)  # Python 3.14 and later
    if terminate is not None:
        terminate()
        return
    # What terminate_workers does: the pool's own shutdown would wait for the running guides.
    processes = list((getattr(pool, "_processes", None) or {}).values())  # shutdown drops them
    pool.shutdown(wait=False, cancel_futures=True)
    for process in processes:
        process.terminate()


def _terminate(pool: futures.ProcessPoolExecutor) -> None:
    """Terminate the pool's worker processes without taking any of the pool's locks."""
    for process in list((getattr(pool, "_processes", None) or {}).values()):
        process.terminate()


def _serial(path: Path, themes: list[Path], cache_root: Path | None, advance) -> Built:
    result = build_one(path, themes, cache_root)
    advance()
    return result


def _parallel(pool, paths, themes, cache_root, advance, tick) -> list[Built]:
    pending = {pool.submit(build_one, p, themes, cache_root): i for i, p in enumerate(paths)}
    results: list[Built] = [(None, ())] * len(paths)
    waiting = set(pending)
    while waiting:
        finished, waiting = futures.wait(waiting, timeout=0.5,
                                         return_when=futures.FIRST_COMPLETED)
        for future in finished:
            results[pending[future]] = future.result()
            advance()
        tick()
    return results


def _main_importable() -> bool:
    """Whether workers can re-import ``__main__`` as they start (not so for a script on stdin)."""
    main = getattr(sys.modules.get("__main__"), "__file__", None)
    return main is None or os.path.exists(main)


def _context():
    """A fork server where the platform has one (fast, and safe beside threads), else spawn."""
    if "forkserver" in multiprocessing.get_all_start_methods():
        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload([PIPELINE_MODULE, LIFETIME_MODULE, FREEZE_MODULE])
        return context
    return multiprocessing.get_context("spawn")
