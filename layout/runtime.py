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
"""

from __future__ import annotations

import os
from collections.abc import MutableMapping

import numpy as np

__all__ = ["HUGEPAGE_VARIABLE", "hugepage_advice", "quiet_hugepages"]

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
