"""Setting widget values from code without the observers taking them for the user's edits."""

from __future__ import annotations

import contextlib


class Quiet:
    """Mixin for a composite widget whose observers must ignore values it sets itself.

    Observers return at once while ``self._quiet`` is true; ``with self._silently():`` sets
    it for a block and puts back what it was, so blocks may nest.
    """

    _quiet = False

    @contextlib.contextmanager
    def _silently(self):
        quiet, self._quiet = self._quiet, True
        try:
            yield
        finally:
            self._quiet = quiet
