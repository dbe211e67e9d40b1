"""The survey against the elevation data: each surveyed object beside what the data found.

For every survey entry the nearest detected obstruction of the same family (a tree for a tree,
a block for a chimney, a wall or a building) within ``match_m`` is its match. The check
compares the height (foot to top, the surveyor's figure) with the entry's height range over
its tolerances (:func:`layout.scene.survey.height_range`), and the plan position with the
entry's position tolerance: the distance reading's tolerance along the line of sight and the
bearing's across it. A difference outside the tolerance is flagged; neither side is taken
as right (the data may be years old, the reading may be off).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..scene.obstructions import Block, Cylinder, Tree
from ..scene.survey import entry_geometry, height_range
from ..scene.survey.kinds import obstruction_type

__all__ = ["SurveyCheck", "cross_check"]


@dataclass(frozen=True)
class SurveyCheck:
    """One survey entry against the elevation data.

    Parameters
    ----------
    entry_index : int
        Index of the entry in the survey.
    entry_name : str
    matched : str or None
        Name of the detected obstruction, None when nothing matched.
    surveyed_height_m, detected_height_m : float
        Foot to top [m]; NaN for ``detected_height_m`` without a match.
    height_low_m, height_high_m : float
        The entry's height range over its tolerances [m].
    position_error_m : float
        Plan distance between the surveyed and the detected position [m].
    position_tolerance_m : float
        The entry's position tolerance in the direction of that difference [m].
    height_ok, position_ok : bool
        Within the tolerance; False when unmatched.
    """

    entry_index: int
    entry_name: str
    matched: str | None
    surveyed_height_m: float
    detected_height_m: float
    height_low_m: float
    height_high_m: float
    position_error_m: float
    position_tolerance_m: float
    height_ok: bool
    position_ok: bool

    @property
    def flagged(self) -> bool:
        """True when the data and the survey disagree beyond the tolerance, or no match."""
        return not (self.height_ok and self.position_ok)

    def text(self) -> str:
        """One line for a table or a report."""
        name = self.entry_name or f"entry {self.entry_index + 1}"
        if self.matched is None:
            return f"{name}: nothing in the elevation data matches it"
        dh = self.detected_height_m - self.surveyed_height_m
        verdict = "agrees" if not self.flagged else "DIFFERS"
        return (f"{name} {verdict} with {self.matched}: height {self.detected_height_m:.2f} m "
                f"in the data against {self.surveyed_height_m:.2f} m surveyed ({dh:+.2f} m; "
                f"tolerance {self.height_low_m:.2f} to {self.height_high_m:.2f} m), position "
                f"{self.position_error_m:.2f} m apart (tolerance "
                f"{self.position_tolerance_m:.2f} m)")


def _family(item) -> type:
    return Tree if isinstance(item, Tree) else Cylinder if isinstance(item, Cylinder) else Block


def _detected(item) -> tuple[float, float, float]:
    """Plan position and height (foot to top) of a detected obstruction."""
    if isinstance(item, Tree):
        return item.center[0], item.center[1], item.height
    c = item.footprint_polygon.centroid
    return c.x, c.y, item.top - item.base


def _position_tolerance(entry, geometry, dx: float, dy: float) -> float:
    """Return the entry's plan tolerance in the direction (dx, dy) from it (an ellipse)."""
    radial = entry.distance_m.tolerance
    across = geometry["horizontal_distance_m"] * math.tan(
        math.radians(entry.bearing_deg.tolerance))
    bearing = math.radians(geometry["true_bearing_deg"])
    ux, uy = math.sin(bearing), math.cos(bearing)
    length = math.hypot(dx, dy)
    if length == 0:
        return max(radial, across)
    along = (dx * ux + dy * uy) / length
    side = (-dx * uy + dy * ux) / length
    # the ellipse's radius in that direction
    return 1.0 / math.sqrt((along / max(radial, 1e-9)) ** 2 + (side / max(across, 1e-9)) ** 2)


def cross_check(entries, detected, *, match_m: float = 5.0) -> list[SurveyCheck]:
    """Compare each survey entry with the nearest detected obstruction of its family.

    Parameters
    ----------
    entries : sequence of SurveyEntry
    detected : sequence of Tree, Block or Cylinder
        What the elevation import found (roof bumps, trees, neighbouring buildings).
    match_m : float, default 5
        Farthest plan distance between a surveyed and a detected position that still counts
        as the same object [m].

    Returns
    -------
    list of SurveyCheck
        One per entry, in order.
    """
    checks = []
    for i, entry in enumerate(entries):
        g = entry_geometry(entry)
        low, high = height_range(entry)
        family = obstruction_type(entry.kind)
        best = None
        for item in detected:
            if _family(item) is not family and not (family is Cylinder
                                                    and isinstance(item, Block)):
                continue
            x, y, h = _detected(item)
            d = math.hypot(x - g["x_m"], y - g["y_m"])
            if d <= match_m and (best is None or d < best[0]):
                best = (d, item, x, y, h)
        if best is None:
            checks.append(SurveyCheck(i, entry.name, None, g["height_m"], math.nan, low, high,
                                      math.nan, math.nan, False, False))
            continue
        d, item, x, y, h = best
        tol = _position_tolerance(entry, g, x - g["x_m"], y - g["y_m"])
        checks.append(SurveyCheck(i, entry.name, item.name or type(item).__name__.lower(),
                                  g["height_m"], h, low, high, d, tol, low <= h <= high,
                                  d <= tol))
    return checks
