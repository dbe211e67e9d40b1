"""layout.runtime: the thread setting and parallel_map; freed memory kept for reuse."""

from __future__ import annotations

import os
import subprocess
import sys
import threading

import pytest

from layout.errors import InputError
from layout.runtime import (
    MAX_DEFAULT_THREADS,
    THREADS_VARIABLE,
    even_block,
    parallel_map,
    worker_threads,
)


def test_worker_threads_reads_the_variable_and_names_it_when_bad():
    assert worker_threads({THREADS_VARIABLE: "3"}) == 3
    assert worker_threads({THREADS_VARIABLE: " 1 "}) == 1
    assert 1 <= worker_threads({}) <= MAX_DEFAULT_THREADS
    for bad in ("0", "65", "two", "1.5"):
        with pytest.raises(InputError) as info:
            worker_threads({THREADS_VARIABLE: bad})
        assert info.value.field == THREADS_VARIABLE
        assert "1 to 64" in str(info.value)


def test_parallel_map_keeps_the_order_and_uses_several_threads():
    names = set()
    barrier = threading.Barrier(2, timeout=10)

    def square(x):
        names.add(threading.current_thread().name)
        if x < 2:
            barrier.wait()  # the first two items run at the same time, or this times out
        return x * x

    assert parallel_map(square, range(6), threads=2) == [0, 1, 4, 9, 16, 25]
    assert len(names) == 2
    assert parallel_map(square, [3], threads=2) == [9]  # one item: in place
    assert parallel_map(lambda x: threading.current_thread().name, [1, 2], threads=1) \
        == [threading.current_thread().name] * 2


def test_parallel_map_raises_the_first_error_and_nests_in_place():
    def fails(x):
        if x == 3:
            raise ValueError("item 3")
        return x

    with pytest.raises(ValueError, match="item 3"):
        parallel_map(fails, range(5), threads=2)

    def inner(x):  # a map inside a pool thread runs there, never waits for the pool
        outer = threading.current_thread().name
        return parallel_map(lambda y: threading.current_thread().name == outer, range(3),
                            threads=2)

    assert parallel_map(inner, range(4), threads=2) == [[True] * 3] * 4


@pytest.mark.parametrize(("n", "most", "expected"), [
    (531, 476, 266), (476, 476, 476), (13, 476, 13), (10, 3, 3), (0, 5, 1), (7, 1, 1)])
def test_even_block(n, most, expected):
    size = even_block(n, most)
    assert size == expected
    assert size <= max(1, most)
    if n:  # the fewest blocks of at most `most`; the last one short by less than a block
        blocks = [min(size, n - lo) for lo in range(0, n, size)]
        assert len(blocks) == -(-n // most)
        assert blocks[-1] > size - len(blocks)


FAULTS_CODE = """
import resource, sys
import numpy as np
from layout.runtime import keep_freed_memory
if sys.argv[1] == "on":
    assert keep_freed_memory()
def a_round():  # ten arrays of 4 MB made and freed, as an update makes its temporaries
    arrays = [np.ones(1 << 19) for _ in range(10)]
    del arrays
a_round()
before = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
for _ in range(5):
    a_round()
print(resource.getrusage(resource.RUSAGE_SELF).ru_minflt - before)
"""


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc's malloc, Linux only")
def test_kept_freed_memory_is_reused_without_page_faults():
    # with glibc's defaults the freed arrays go back to the system (their 40 MB at the top of
    # the heap exceed the trim threshold) and every round faults 10,000 fresh pages in; with
    # keep_freed_memory the heap keeps them and the rounds fault (almost) none
    env = {k: v for k, v in os.environ.items()
           if not (k.startswith("MALLOC_") or k == "GLIBC_TUNABLES")}
    faults = {}
    for setting in ("off", "on"):
        done = subprocess.run([sys.executable, "-c", FAULTS_CODE, setting], env=env,
                              capture_output=True, text=True, timeout=60, check=True)
        faults[setting] = int(done.stdout.split()[-1])
    assert faults["off"] > 20_000 and faults["on"] < 500, faults
