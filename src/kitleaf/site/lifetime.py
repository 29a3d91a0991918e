"""The build's workers end with the build: on its death, on SIGTERM or SIGHUP, and on Ctrl-C.

Two sides. When the build process dies, however it died (even SIGKILL), the kernel ends the
rest on Linux: the fork server asks for SIGKILL when its parent, the build, dies
(``prctl(PR_SET_PDEATHSIG)``, armed in :mod:`kitleaf.site.fork_ready`), and each worker asks
the same of its parent, the fork server (:func:`exit_with_build`, the pool's initializer).
The fork server cannot be left to notice by itself: every worker holds its "alive" pipe open.
Where there is no prctl, each worker runs a thread that looks for the build every quarter
second. So the workers stop within moments instead of finishing their guide first.

In the build process, :func:`signals_stop_pool` turns SIGTERM and SIGHUP into an exception while
the pool runs, so the pool's cleanup terminates the workers as it does on Ctrl-C; then the
signal is raised again, its default action ends the process, and nothing was published
(publishing is atomic and comes after the pool).
"""

from __future__ import annotations

import contextlib
import ctypes
import os
import signal
import sys
import threading
import time

PR_SET_PDEATHSIG = 1  # from <linux/prctl.h>
WATCH_SECONDS = 0.25  # how often the portable watcher looks for the build
STOP_SIGNALS = tuple(getattr(signal, name) for name in ("SIGTERM", "SIGHUP")
                     if hasattr(signal, name))


class Stopped(BaseException):
    """A stop signal arrived while the pool ran; a BaseException like KeyboardInterrupt."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


def exit_with_build(build_pid: int) -> None:
    """In a worker: end this process when the build (or the fork server between) dies."""
    if os.name == "nt":  # there os.kill(pid, 0) would end the build: the pool's own rules hold
        return
    if not die_with_parent():
        threading.Thread(target=watch_build, args=(build_pid,), daemon=True,
                         name="kitleaf-watch-build").start()
    # The build may have died while this worker started, before the signal was armed.
    if not _alive(build_pid):
        os._exit(1)


def die_with_parent() -> bool:
    """Have the kernel SIGKILL this process when its parent dies (Linux); False elsewhere."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        # SIGKILL: nothing here needs cleaning up (cache entries are written by rename).
        return libc.prctl(PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0) == 0
    except (OSError, AttributeError):
        return False


def watch_build(build_pid: int) -> None:
    """The portable fallback, run as a thread: exit once the build process is gone."""
    while _alive(build_pid):
        time.sleep(WATCH_SECONDS)
    os._exit(1)


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, though owned by someone else
        return True
    return True


@contextlib.contextmanager
def signals_stop_pool():
    """While the pool runs, SIGTERM and SIGHUP raise :class:`Stopped` in the main thread.

    Only signals left at their default action are taken, and only in the main thread (signal
    handlers can be set nowhere else); an embedding program's own handlers are kept.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    taken = [s for s in STOP_SIGNALS if signal.getsignal(s) is signal.SIG_DFL]
    for signum in taken:
        signal.signal(signum, _raise_stopped)
    try:
        yield
    finally:
        for signum in taken:
            signal.signal(signum, signal.SIG_DFL)


def _raise_stopped(signum: int, _frame) -> None:
    raise Stopped(signum)


def die_of(stopped: Stopped) -> None:
    """Raise the signal again at its default action: the process ends as it would have."""
    signal.raise_signal(stopped.signum)  # delivered to this thread before it returns
