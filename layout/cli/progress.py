"""Stage progress of a long command on standard error, drawn only when it is a terminal."""

from __future__ import annotations

import sys
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["StageProgress", "terminal_progress"]


class StageProgress:
    """Draw ``[done/total] label`` over one line of ``stream``; :meth:`close` clears it.

    Parameters
    ----------
    stream : text stream
        Where to draw, a terminal.
    """

    def __init__(self, stream):
        self.stream = stream
        self.active = False

    def __call__(self, label: str, done: int, total: int) -> None:
        """Draw stage ``done + 1`` of ``total``, named ``label``, over the previous one."""
        self.stream.write(f"\r\033[K[{done + 1}/{total}] {label}")
        self.stream.flush()
        self.active = True

    def close(self) -> None:
        """Clear the progress line, if one was drawn."""
        if self.active:
            self.stream.write("\r\033[K")
            self.stream.flush()
            self.active = False


@contextmanager
def terminal_progress() -> Iterator[StageProgress | None]:
    """Yield a progress callback on standard error when it is a terminal, else None.

    The progress line is cleared on leaving, also when the work fails.

    Yields
    ------
    StageProgress or None
        The ``progress`` argument for :class:`layout.study.analysis.Analysis` and
        :func:`layout.study.compare.compare_layouts`.
    """
    stream = sys.stderr
    isatty = getattr(stream, "isatty", None)
    progress = StageProgress(stream) if isatty is not None and isatty() else None
    try:
        yield progress
    finally:
        if progress is not None:
            progress.close()
