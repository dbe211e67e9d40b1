"""Colours, line styles and the figure scale shared by every eaveline view.

One single-hue scale carries every per-module figure (annual shade loss, TSRF, annual energy):
from a near-white for little to a deep teal for much, so that the plan and the heat map read
alike. Zones are greys, obstructions darker greys; nothing warns by colour. The palette lives
in the core (:mod:`layout.report.colours`), so that a report draws with the same colours; this
module only passes it on to the panels.
"""

from __future__ import annotations

from layout.report import colours as _palette
from layout.report.colours import *  # noqa: F403 - the palette, passed on whole

__all__ = [*_palette.__all__, "PREVIEW_EDGE"]

#: A building being typed in the Roof tab, drawn dashed before it is added (planner only).
PREVIEW_EDGE = "#2f6f9f"
