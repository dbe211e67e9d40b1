"""``python -m layout``: the command line of :mod:`layout.cli`."""

from __future__ import annotations

import sys

from .cli import main

if __name__ == "__main__":
    from .runtime import quiet_hugepages

    quiet_hugepages()  # this command and its Dask workers (see layout.runtime)
    sys.exit(main())
