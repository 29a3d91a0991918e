"""The build's worker processes never outlive it: killed, stopped or interrupted.

Each test starts a process that runs a worker pool, kills it from outside and watches every
process it had started (read from /proc) until they are all gone. The workers are given tasks
far longer than the wait, so a worker that only ends with its task fails the test. That a
killed parent must not leave its workers running is common practice, no source.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from test_site_build import GUIDES, change_r4, copy_guides, snapshot

pytestmark = pytest.mark.skipif(not Path("/proc/self/stat").exists(),
                                reason="reads the process tree from /proc")

GONE_WITHIN = 5.0  # seconds; the tasks below take 60
SLEEPING_POOL = """
import time
from kitleaf.site.pool import worker_pool

with worker_pool(2) as pool:
    tasks = [pool.submit(time.sleep, 60) for _ in range(2)]
    for task in tasks:
        task.result()
"""
WATCHED_CHILD = """
import os, threading, time
from kitleaf.site.lifetime import watch_build

threading.Thread(target=watch_build, args=(os.getppid(),), daemon=True).start()
print("watching", flush=True)
time.sleep(60)
"""
CLI = "import sys; from kitleaf.cli import main; sys.exit(main(sys.argv[1:]))"
PARENT_OF_WATCHED = """
import subprocess, sys, time
subprocess.Popen([sys.executable, "-c", sys.argv[1]])
time.sleep(60)
"""


def parents() -> dict[int, int]:
    """Every live process's parent, from /proc/PID/stat (zombies count as gone)."""
    found = {}
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue
        fields = stat.rsplit(")", 1)[1].split()
        if fields[0] != "Z":
            found[int(entry.name)] = int(fields[1])
    return found


def descendants(pid: int) -> set[int]:
    tree, found, todo = parents(), set(), [pid]
    while todo:
        parent = todo.pop()
        children = [p for p, pp in tree.items() if pp == parent]
        found.update(children)
        todo += children
    return found


def wait_for(condition, seconds: float):
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        value = condition()
        if value:
            return value
        time.sleep(0.05)
    return condition()


def start_with_workers(args: list[str], workers: int = 2) -> tuple[subprocess.Popen, set[int]]:
    """A process whose tree holds ``workers`` grandchildren (fork server workers) at least."""
    run = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE)

    def grandchildren():
        tree = parents()
        children = {p for p, pp in tree.items() if pp == run.pid}
        return len({p for p, pp in tree.items() if pp in children}) >= workers

    assert wait_for(grandchildren, 60), "the workers never started"
    return run, descendants(run.pid)


def survivors(pids: set[int]) -> set[int]:
    return pids & parents().keys()


def end(run: subprocess.Popen) -> int:
    run.stdout.close()
    run.stderr.close()
    return run.wait(timeout=30)


@pytest.mark.slow
@pytest.mark.parametrize("signum", [signal.SIGKILL, signal.SIGTERM, signal.SIGHUP])
def test_pool_workers_end_with_a_killed_parent(signum):
    run, started = start_with_workers([sys.executable, "-c", SLEEPING_POOL])
    os.kill(run.pid, signum)
    assert end(run) == -signum  # SIGTERM and SIGHUP end the process as their default would
    wait_for(lambda: not survivors(started), GONE_WITHIN)
    assert survivors(started) == set()


@pytest.mark.slow
def test_pool_workers_end_on_ctrl_c():
    run, started = start_with_workers([sys.executable, "-c", SLEEPING_POOL])
    os.kill(run.pid, signal.SIGINT)  # to the parent alone, not the whole terminal group
    end(run)
    wait_for(lambda: not survivors(started), GONE_WITHIN)
    assert survivors(started) == set()


def test_watcher_thread_ends_a_child_whose_parent_died():
    # The fallback where the kernel has no parent-death signal, tried on its own.
    run = subprocess.Popen([sys.executable, "-c", PARENT_OF_WATCHED, WATCHED_CHILD],
                           stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    assert run.stdout.readline() == "watching\n"
    [child] = descendants(run.pid)
    os.kill(run.pid, signal.SIGKILL)
    end(run)
    wait_for(lambda: not survivors({child}), GONE_WITHIN)
    assert survivors({child}) == set()


@pytest.mark.slow
def test_build_stopped_by_sigterm_leaves_the_site_and_no_worker(tmp_path: Path):
    from kitleaf.site.build import build_site

    guides = copy_guides(tmp_path / "guides")
    build_site(guides, tmp_path / "published", use_cache=False, jobs=1)
    before = snapshot(tmp_path / "published")
    change_r4(guides)
    run, started = start_with_workers(
        [sys.executable, "-c", CLI, "build", str(guides), "-o", str(tmp_path / "published"),
         "--jobs", str(len(GUIDES)), "--no-cache"], workers=len(GUIDES))
    os.kill(run.pid, signal.SIGTERM)
    assert end(run) == -signal.SIGTERM
    wait_for(lambda: not survivors(started), GONE_WITHIN)
    assert survivors(started) == set()
    assert snapshot(tmp_path / "published") == before
    assert not list(tmp_path.glob(".published.new-*"))
