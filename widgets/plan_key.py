"""What the colours and marks on the plan mean: a key, one line per mark, opened from the plan."""

from __future__ import annotations

import html

import ipywidgets as w

from . import style

__all__ = ["PlanKey", "key_lines"]


def _swatch(fill: str, edge: str, *, dashed: bool = False, width: float = 1,
            hatch: bool = False, round_: bool = False, opacity: float = 1.0,
            dotted: bool = False) -> str:
    """Return a small inline SVG of a mark, 22 × 14 px."""
    dash = (" stroke-dasharray='3,2'" if dashed else
            " stroke-dasharray='1.5,2.5' stroke-linecap='round'" if dotted else "")
    shape = (f"<circle cx='11' cy='7' r='5' fill='{fill}' fill-opacity='{opacity}' "
             f"stroke='{edge}' stroke-width='{width}'{dash}/>" if round_ else
             f"<rect x='2' y='2' width='18' height='10' fill='{fill}' fill-opacity='{opacity}' "
             f"stroke='{edge}' stroke-width='{width}'{dash}/>")
    lines = "".join(f"<line x1='{x}' y1='12' x2='{x + 8}' y2='2' stroke='#9e9e9e' "
                    "stroke-width='0.8'/>" for x in (3, 8, 13)) if hatch else ""
    return (f"<svg width='22' height='14' style='vertical-align:middle'>{shape}{lines}</svg>")


def key_lines() -> list[tuple[str, str]]:
    """Return (swatch SVG, meaning) for every kind of mark the plan draws."""
    mid = style.FIGURE_SCALE[len(style.FIGURE_SCALE) // 2]
    zone = style.ZONE_STYLES
    return [
        (_swatch(mid, style.MODULE_EDGE),
         "module, filled by the figure chosen in Colour by (light: little, dark: much)"),
        (_swatch(style.FIGURE_SCALE[1], style.FLAG_EDGE, width=3),
         "thick outline: the module's TSRF is below the project's threshold"),
        (_swatch("white", style.REMOVED_EDGE, dashed=True),
         "hollow dashed module: taken out by a click (click again to put it back)"),
        (_swatch(zone["setback"]["fill"], "#bdbdbd", hatch=True, opacity=0.55),
         "hatched grey: setback, access pathway or clearance ring (no modules)"),
        (_swatch("#8f8f8f", "#5b5b5b", opacity=0.85),
         "dark grey: a block (chimney, vent, wall, rooftop unit, neighbouring building)"),
        (_swatch(style.TREE_FILL, style.TREE_EDGE, dashed=True, round_=True, opacity=0.6),
         "dash-dotted disc: a tree's crown"),
        (_swatch("#fbfbf8", style.DATA_EDGE, dotted=True, width=2.2),
         "dotted umber outline: a roof face or obstruction from elevation data, not surveyed "
         "(as the data gave it; check it on site)"),
        (_swatch(style.INK, "white", round_=True),
         "dark dot: drag it to move that obstruction"),
        (_swatch("white", style.INK, round_=True, width=2),
         "hollow ring: a surveyed obstruction; click it to edit its readings"),
        (f"<span style='color:{style.SELECTED};font-size:14px'>&#9670;</span>",
         "diamond: the module shown in the Sky and Hours tabs"),
        (f"<span style='color:{style.PREVIEW_EDGE};font-size:15px'>&#10010;</span>",
         "cross: drag it to move that building"),
        (_swatch("white", style.PREVIEW_EDGE, dashed=True, width=2),
         "dashed outline: a building being typed in the Roof tab, not yet added"),
        (_swatch(style.SHADOW_FILL, style.SHADOW_FILL, opacity=style.SHADOW_OPACITY),
         "shadow on the roof at the timeline's moment"),
    ]


class PlanKey(w.VBox):
    """A "Key" toggle that shows or hides the list of marks."""

    def __init__(self):
        self.toggle = w.ToggleButton(value=False, description="Key", icon="info",
                                     tooltip="What the colours and marks on the plan mean",
                                     layout=w.Layout(width="auto", flex="0 0 auto"))
        self.toggle.add_class("eaveline-key-toggle")
        rows = "".join(f"<tr><td style='padding:1px 6px 1px 0'>{swatch}</td>"
                       f"<td>{html.escape(text)}</td></tr>" for swatch, text in key_lines())
        self.table = w.HTML(f"<table style='font-size:12px;color:{style.INK}'>{rows}</table>",
                            layout=w.Layout(display="none"))
        self.table.add_class("eaveline-key")
        self.toggle.observe(self._shown, names="value")
        super().__init__([self.table])

    def _shown(self, change) -> None:
        self.table.layout.display = "" if change["new"] else "none"
