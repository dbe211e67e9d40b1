"""Process settings that eaveline's own commands make before they compute.

numpy asks Linux for transparent huge pages (``madvise(MADV_HUGEPAGE)``) on every large array.
Where the kernel compacts memory on demand to find them (``defrag = madvise``, the usual
setting, on a virtual machine whose memory is fragmented), touching a fresh large array for
the first time is slow. Measured on the development machine (2 cores, Debian 13, 24 GB):
a 500-module evaluation 17.4 s with the advice and 5.3 s without; the first drag in the
planner 160-220 ms and 76-80 ms; the steady drag of a tree no different (about 60 ms).

``python -m layout`` (and the ``eaveline`` script), ``python -m widgets`` (and
``eaveline-planner``) therefore turn the advice off for themselves and the processes they start
(Voila kernels, Dask workers) through numpy's own switch, the environment variable
``NUMPY_MADVISE_HUGEPAGE`` -- unless the user has set it. Library use
(``import layout`` in a notebook) changes nothing; set ``NUMPY_MADVISE_HUGEPAGE=0`` before
starting Python to get the same there.

Threads
-------
The large array work of an evaluation (the ray tests of many obstructions, irradiance and power
a block of modules at a time) runs on a few threads through :func:`parallel_map`. numpy
releases the interpreter's lock inside its loops over large arrays, so two threads do about
1.6 times the work of one on a 5,000-module roof (measured on the development machine: the
ray tests of the warehouse of ``benchmarks/warehouse.py`` took 19.2 s on two threads against
31.5 s on one, the same hits). Small inputs (a dragged obstruction on a house) stay on one
thread, where the lock would make threads slower. The environment variable
``EAVELINE_THREADS`` sets the number (1 turns threads off); the default is the number of
processors this process may use, at most :data:`MAX_DEFAULT_THREADS`. Every result is the
same whatever the number: each item is computed on its own and the results keep their order.
"""

from __future__ import annotations

import os
import threading
from collections.abc import Callable, Iterable, MutableMapping
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from .errors import InputError

__all__ = ["HUGEPAGE_VARIABLE", "MAX_DEFAULT_THREADS", "THREADS_VARIABLE", "even_block",
           "hugepage_advice", "parallel_map", "quiet_hugepages", "worker_threads"]

#: numpy's environment switch for the huge-page advice, read when numpy is imported.
HUGEPAGE_VARIABLE = "NUMPY_MADVISE_HUGEPAGE"


def quiet_hugepages(environ: MutableMapping[str, str] | None = None) -> bool:
    """Turn numpy's huge-page advice off here and in child processes, unless the user chose.

    Parameters
    ----------
    environ : mutable mapping, optional
        The environment to read and to pass on to child processes; default ``os.environ``.

    Returns
    -------
    bool
        True when the advice was turned off by this call; False when ``environ`` already
        names a choice (it is then left as the user set it).
    """
    environ = os.environ if environ is None else environ
    if HUGEPAGE_VARIABLE in environ:
        return False
    environ[HUGEPAGE_VARIABLE] = "0"  # children import numpy with the advice off
    core = getattr(np, "_core", None) or np.core
    switch = getattr(core.multiarray, "_set_madvise_hugepage", None)
    if switch is not None:  # this process imported numpy already
        switch(False)
    return True


def hugepage_advice() -> bool:
    """Return whether numpy currently asks for huge pages on large arrays (Linux only)."""
    core = getattr(np, "_core", None) or np.core
    switch = getattr(core.multiarray, "_set_madvise_hugepage", None)
    if switch is None:
        return False
    current = switch(False)
    switch(current)
    return bool(current)


#: Environment variable that sets the number of threads of :func:`parallel_map`.
THREADS_VARIABLE = "EAVELINE_THREADS"

#: Most threads used when :data:`THREADS_VARIABLE` is not set (more gain little: the
#: interpreter's lock is held between numpy calls).
MAX_DEFAULT_THREADS = 4

_POOLS: dict = {}  # number of threads -> its executor, made when first needed
_POOL_LOCK = threading.Lock()
_IN_WORKER = threading.local()  # set inside a pool thread: nested maps run in place


def worker_threads(environ: MutableMapping[str, str] | None = None) -> int:
    """Return the number of threads :func:`parallel_map` uses.

    Parameters
    ----------
    environ : mapping, optional
        Where :data:`THREADS_VARIABLE` is read; default ``os.environ``.

    Returns
    -------
    int
        The variable's value when set (1 to 64), else the processors this process may use,
        at most :data:`MAX_DEFAULT_THREADS`.
    """
    environ = os.environ if environ is None else environ
    text = environ.get(THREADS_VARIABLE, "").strip()
    if text:
        try:
            value = int(text)
        except ValueError:
            value = 0
        if not 1 <= value <= 64:
            raise InputError(THREADS_VARIABLE, "must be a whole number of threads",
                             value=text, allowed="1 to 64")
        return value
    try:
        available = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        available = os.cpu_count() or 1
    return max(1, min(available, MAX_DEFAULT_THREADS))


def parallel_map(function: Callable, items: Iterable, *, threads: int | None = None) -> list:
    """Return ``[function(item) for item in items]``, computed on a few threads.

    For large numpy work only: each call should take milliseconds or more and spend them in
    numpy. The results are in the order of ``items``; an error raised for an item is raised
    here (the first in the items' order), and the items not yet started are dropped. One
    item, one thread, or a call from inside one of the pool's own threads runs in place.

    Parameters
    ----------
    function : callable
        Called once per item, from any thread: it may write only its own part of a shared
        output (its block of columns, say), never state another item reads.
    items : iterable
    threads : int, keyword-only, optional
        Threads to use; default :func:`worker_threads`.
    """
    items = list(items)
    count = worker_threads() if threads is None else int(threads)
    if count <= 1 or len(items) <= 1 or getattr(_IN_WORKER, "active", False):
        return [function(item) for item in items]
    with _POOL_LOCK:  # one pool per number of threads, kept: a map may run in each at once
        pool = _POOLS.get(count)
        if pool is None:
            pool = _POOLS[count] = ThreadPoolExecutor(count, thread_name_prefix="eaveline",
                                                      initializer=_mark_worker)
    return list(pool.map(function, items))


def _mark_worker() -> None:
    _IN_WORKER.active = True


def even_block(n_items: int, most: int) -> int:
    """Return a block size of at most ``most`` that cuts ``n_items`` into near-equal blocks.

    The fewest blocks of at most ``most`` items, the last short by less than one item a
    block, so that threads given one block each finish about together (531 items at most
    476 a block: 266 and 265, not 476 and 55).
    """
    most = max(1, int(most))
    n_blocks = max(1, -(-int(n_items) // most))
    return max(1, -(-int(n_items) // n_blocks))
