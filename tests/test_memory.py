"""keep_freed_memory: after it, re-allocating a freed array of a few megabytes faults no pages.

Checked through the kernel's own count of minor page faults (getrusage, POSIX); the figure
it replaces (one fault per 4 KiB page of a fresh mapping) is common practice, no source.
"""

import resource
import sys

import numpy as np
import pytest

from kitleaf.memory import keep_freed_memory


def faults_of(fn) -> int:
    before = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
    fn()
    return resource.getrusage(resource.RUSAGE_SELF).ru_minflt - before


def churn() -> None:
    # five 2 MB arrays alive at once, then freed, as a batched solve's temporaries are:
    # without the setting glibc trims the heap after each round (about 20000 faults here)
    for _ in range(10):
        held = [np.ones((1000, 16, 16)) for _ in range(5)]
        del held


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc's mallopt only")
def test_freed_arrays_are_reused_without_page_faults():
    if not keep_freed_memory():
        pytest.skip("the C library is not glibc")
    churn()  # the first round grows the heap
    assert faults_of(churn) < 200
