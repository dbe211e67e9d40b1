"""``python -m layout`` and the installed ``eaveline`` command: :func:`layout.cli.main`.

Both come through :func:`main` here, so both make the process settings of :mod:`layout.runtime`
first (numpy's huge-page advice off and freed arrays kept for reuse, for this process and its
Dask workers) before running the command line; calling :func:`layout.cli.main` from Python
changes no process setting.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence

from .cli import main as run_command_line
from .runtime import process_settings


def main(argv: Sequence[str] | None = None) -> int:
    """Make the process settings, run the command line; return the exit status.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments after the program name; default ``sys.argv[1:]``.

    Returns
    -------
    int
        The exit status of :func:`layout.cli.main`.
    """
    process_settings()  # this command and its Dask workers (see layout.runtime)
    return run_command_line(argv)


if __name__ == "__main__":
    sys.exit(main())
