"""layout.runtime: the thread setting and parallel_map."""

from __future__ import annotations

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
