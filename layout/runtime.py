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

Freed memory
------------
glibc's ``malloc`` gives an array of more than a few hundred kilobytes pages of its own
(``mmap``) and hands them back to the system when it is freed; the next array of that size
faults in fresh, zeroed pages again, a few microseconds a page on a virtual machine. A drag in
the planner makes and frees such arrays at every update: on the demo, about 400 page faults
an update with the defaults and under 20 with :func:`keep_freed_memory`, which lets arrays of
up to :data:`MALLOC_SETTINGS` ``MALLOC_MMAP_THRESHOLD_`` come from the heap and keeps up to
``MALLOC_TRIM_THRESHOLD_`` of freed heap for reuse (measured on the development machine:
``Analysis.update`` for a tree moved on the demo 20.4-23.4 ms against 23.9-32.8 ms, three
runs each; the 5,000-module warehouse 21.7-22.6 s against 24.0-26.7 s, its peak memory
100-250 MB higher). :func:`process_settings` makes both settings; the commands call it first.

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

__all__ = ["HUGEPAGE_VARIABLE", "MALLOC_SETTINGS", "MAX_DEFAULT_THREADS", "THREADS_VARIABLE",
           "even_block", "hugepage_advice", "keep_freed_memory", "parallel_map",
           "process_settings", "quiet_hugepages", "worker_threads"]

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


#: glibc's ``malloc`` settings, as the environment variables it reads when a process starts:
#: arrays below 32 MB come from the heap, and up to 256 MB freed at its top stay for reuse.
MALLOC_SETTINGS = {"MALLOC_MMAP_THRESHOLD_": str(32 << 20),
                   "MALLOC_TRIM_THRESHOLD_": str(256 << 20)}
#: ``mallopt`` parameter numbers of glibc's ``malloc.h`` for the same two settings.
_MALLOPT = {"MALLOC_MMAP_THRESHOLD_": -3, "MALLOC_TRIM_THRESHOLD_": -1}


def keep_freed_memory(environ: MutableMapping[str, str] | None = None) -> bool:
    """Let ``malloc`` reuse freed arrays of up to 32 MB, here and in child processes.

    Sets :data:`MALLOC_SETTINGS` in ``environ`` (read by glibc when a child process starts)
    and, through ``mallopt``, in this process, unless the user chose a ``malloc`` setting
    (any ``MALLOC_*_`` variable or ``GLIBC_TUNABLES``). Where the C library is not glibc
    (macOS, musl) only the environment is set, which changes nothing there.

    Parameters
    ----------
    environ : mutable mapping, optional
        The environment to read and to pass on to child processes; default ``os.environ``.

    Returns
    -------
    bool
        True when the settings were made by this call; False when the user had chosen.
    """
    environ = os.environ if environ is None else environ
    if "GLIBC_TUNABLES" in environ or any(
            name.startswith("MALLOC_") and name.endswith("_") for name in environ):
        return False
    environ.update(MALLOC_SETTINGS)
    if environ is os.environ:
        libc = _glibc()
        if libc is not None:
            for name, value in MALLOC_SETTINGS.items():
                libc.mallopt(_MALLOPT[name], int(value))
    return True


def _glibc():
    """Return glibc through ctypes, or None on another C library."""
    import ctypes
    import platform

    if platform.libc_ver()[0] != "glibc":
        return None
    try:
        return ctypes.CDLL("libc.so.6")
    except OSError:
        return None


def process_settings() -> None:
    """Make the process settings of eaveline's commands, here and for child processes.

    numpy's huge-page advice off (:func:`quiet_hugepages`) and freed arrays kept for reuse
    (:func:`keep_freed_memory`); each leaves a choice the user made in the environment alone.
    """
    quiet_hugepages()
    keep_freed_memory()


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
