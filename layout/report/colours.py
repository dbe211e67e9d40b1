"""The planner's palette: the colour scale of every per-module figure, zones, casters.

From a near-white for little to a deep teal for much, so that the planner's plan, its heat map
and a report's plan read alike. The stops are ours; their CIE lightness falls steadily from the
first to the last stop, which the tests check with the sRGB and CIELAB formulas. Zones are
greys, obstructions darker greys; nothing warns by colour. The planner (:mod:`widgets.style`)
takes its whole palette from here; this module imports no plotting library.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "CASTER_COLOURS",
    "DATA_EDGE",
    "FIGURE_SCALE",
    "FLAG_EDGE",
    "INK",
    "MODULE_EDGE",
    "MODULE_FILL",
    "NO_FIGURE",
    "REMOVED_EDGE",
    "SELECTED",
    "SHADOW_FILL",
    "SHADOW_OPACITY",
    "TREE_EDGE",
    "TREE_FILL",
    "ZONE_STYLES",
    "figure_colours",
    "hex_to_rgb",
    "rgb_to_hex",
]

#: Stops of the single-hue scale for module figures, light (little) to dark (much).
FIGURE_SCALE = (
    "#f5faf9", "#d7ecea", "#afd9d4", "#80bfb9", "#519f9a", "#2b7c79", "#0f5656",
)

#: Lines and text of the drawing.
INK = "#34403f"
#: Module outline and the fill of a module drawn without a figure.
MODULE_EDGE = "#2f4a49"
MODULE_FILL = "#ffffff"
#: Outline of a module the user took out (drawn hollow and dashed).
REMOVED_EDGE = "#8d9695"
#: Tree crowns: a muted grey-green, light fill.
TREE_EDGE = "#7c8a72"
TREE_FILL = "#e3e8de"

#: Faces and obstructions from elevation data, not surveyed: a dotted outline over their own,
#: a muted umber that no other mark of a plan uses (the planner's and the report's).
DATA_EDGE = "#8a6a3e"

#: How each kind of zone is drawn: fill colour, fill opacity, and whether it is hatched.
ZONE_STYLES = {
    "setback": {"fill": "#dcdcdc", "opacity": 0.55, "hatch": True},
    "pathway": {"fill": "#e8e8e8", "opacity": 0.6, "hatch": True},
    "clearance": {"fill": "#cfcfcf", "opacity": 0.5, "hatch": True},
    "obstruction": {"fill": "#8f8f8f", "opacity": 0.85, "hatch": False},
}





def hex_to_rgb(colour: str) -> np.ndarray:
    """Return an sRGB colour ``"#rrggbb"`` as three floats in 0..1."""
    text = colour.lstrip("#")
    return np.array([int(text[i:i + 2], 16) / 255.0 for i in (0, 2, 4)])


def rgb_to_hex(rgb) -> str:
    """Return three sRGB floats in 0..1 (clipped) as ``"#rrggbb"``."""
    return "#" + "".join(f"{round(float(c) * 255):02x}" for c in np.clip(rgb, 0, 1))


def figure_colours(values, *, vmin: float | None = None, vmax: float | None = None) -> list:
    """Map figures onto :data:`FIGURE_SCALE`, interpolating between its stops in sRGB.

    Parameters
    ----------
    values : array_like
        One figure per module; NaN gives None (drawn without a figure).
    vmin, vmax : float, optional
        Ends of the scale; default the smallest and largest finite value.

    Returns
    -------
    list of str or None
        ``"#rrggbb"`` per value.
    """
    data = np.asarray(values, dtype=float)
    finite = np.isfinite(data)
    if not finite.any():
        return [None] * len(data)
    low = float(np.min(data[finite])) if vmin is None else float(vmin)
    high = float(np.max(data[finite])) if vmax is None else float(vmax)
    span = high - low
    stops = np.array([hex_to_rgb(c) for c in FIGURE_SCALE])
    positions = np.linspace(0.0, 1.0, len(stops))
    t = np.zeros(len(data)) if span <= 0 else np.clip((data - low) / span, 0.0, 1.0)
    rgb = np.column_stack([np.interp(t, positions, stops[:, k]) for k in range(3)])
    return [rgb_to_hex(colour) if ok else None for colour, ok in zip(rgb, finite, strict=True)]


#: Regions of the sky chart and shadows, one muted colour per caster (cycled); none warns.
CASTER_COLOURS = (
    "#7a7468", "#7c8a72", "#6b7f94", "#9a8a78", "#5f7d7b", "#8a7a8c", "#a0a08a", "#6e6e6e",
)
#: Shadows on the plan at a chosen moment: a dark slate, drawn translucent.
SHADOW_FILL = "#3d4a5c"
SHADOW_OPACITY = 0.32
#: Heat-map cells without a figure (sun below the horizon): a neutral mid grey, off the scale.
NO_FIGURE = "#c9c9c9"
#: Outline of a module below the TSRF threshold (drawn thick), and the selected module's mark.
FLAG_EDGE = "#1d2b2a"
SELECTED = "#3a4f8a"
