"""Where one entry's readings put the object: site-frame geometry and the obstruction it builds.

Functions over a :class:`~layout.scene.survey.SurveyEntry`: the nominal position, heights and
sizes its readings give (:func:`entry_geometry`), the least and greatest height over the
tolerances (:func:`height_range`), the check that every shape within the tolerances exists,
and the :mod:`layout.scene.obstructions` object it stands for (:func:`build_obstruction`). The
frame is the site frame of :mod:`layout.scene.survey`; the formulas are those of
:mod:`layout.scene.survey.instruments`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from ...errors import InputError
from ..obstructions import Block, Cylinder, Tree
from .growth import growth_rate
from .instruments import laser_horizontal_distance, position_from_bearing, true_bearing
from .kinds import CYLINDER_KINDS, obstruction_type
from .readings import _READINGS

__all__ = ["build_obstruction", "entry_geometry", "height_range"]


def _reading_values(entry) -> dict[str, float]:
    """Nominal value of every reading the entry has."""
    return {n: getattr(entry, n).value for n in _READINGS if getattr(entry, n) is not None}


def _corner_values(entry) -> tuple[dict[str, np.ndarray], bool]:
    """Return the readings at every corner of the box of values ± tolerances, and a flag.

    The flag is False when no reading has a tolerance (the box is one point).
    """
    names = [n for n in _READINGS if getattr(entry, n) is not None
             and getattr(entry, n).tolerance > 0]
    values = {n: np.atleast_1d(v) for n, v in _reading_values(entry).items()}
    if names:
        grid = np.array(np.meshgrid(*[[-1.0, 1.0]] * len(names), indexing="ij")).reshape(
            len(names), -1)
        for i, n in enumerate(names):
            values[n] = values[n] + grid[i] * getattr(entry, n).tolerance
    return values, bool(names)


def _sighted_geometry(entry, v: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """Site-frame geometry from reading values (scalars or equal-shaped arrays)."""
    eye_z = entry.station_z_m + entry.eye_height_m
    top = np.asarray(v["top_angle_deg"], dtype=float)
    if entry.method == "laser":
        s = np.asarray(v["distance_m"], dtype=float)
        d = np.asarray(laser_horizontal_distance(s, top), dtype=float)
        top_z = eye_z + s * np.sin(np.radians(top))
    else:
        d = np.asarray(v["distance_m"], dtype=float)
        top_z = eye_z + d * np.tan(np.radians(top))
    if entry.base_angle_deg is not None:
        base_z = eye_z + d * np.tan(np.radians(v["base_angle_deg"]))
    else:
        base_z = np.full(np.shape(top_z), entry.station_z_m)
    bearing = np.asarray(true_bearing(v["bearing_deg"], entry.declination_deg), dtype=float)
    x, y = position_from_bearing(d, bearing, origin=(entry.station_x_m, entry.station_y_m))
    out = {"x": np.asarray(x), "y": np.asarray(y), "distance": d, "bearing": bearing,
           "top_z": np.asarray(top_z), "base_z": np.asarray(base_z)}
    if entry.crown_base_angle_deg is not None:
        out["crown_base"] = eye_z + d * np.tan(np.radians(v["crown_base_angle_deg"])) \
            - base_z
    elif entry.crown_base_m is not None:
        out["crown_base"] = np.asarray(v["crown_base_m"], dtype=float) + 0.0 * base_z
    for name in ("crown_radius_m", "width_m", "depth_m", "radius_m"):
        if name in v:
            out[name] = np.asarray(v[name], dtype=float)
    return out


def _check_tolerance_box(entry) -> None:
    """Raise :class:`InputError` when some reading within its tolerance gives no real shape."""
    values, spread_any = _corner_values(entry)
    g = _sighted_geometry(entry, values)
    spread = "over the tolerance ranges of the readings" if spread_any else "as read"
    if obstruction_type(entry.kind) is Tree:
        height = g["top_z"] - g["base_z"]
        if np.any(height <= 0):
            raise InputError("top_angle_deg", f"puts the top at or below the foot {spread}",
                             value=entry.top_angle_deg.value,
                             allowed="a top above the tree's foot")
        cb = g["crown_base"]
        field = ("crown_base_angle_deg" if entry.crown_base_angle_deg is not None
                 else "crown_base_m")
        if np.any(cb < 0) or np.any(cb >= height):
            raise InputError(field, f"puts the crown base outside the tree {spread}",
                             value=getattr(entry, field).value,
                             allowed="between the tree's foot and its top")
    elif np.any(g["top_z"] <= g["base_z"]):
        raise InputError("top_angle_deg", f"puts the top at or below the base {spread}",
                         value=entry.top_angle_deg.value, allowed="a top above the base")


def _obstruction_from_geometry(entry, g: Mapping[str, np.ndarray], index, hemisphere: str):
    """Build the obstruction at ``index`` of the (possibly sampled) geometry ``g``."""
    def at(key):
        return float(np.asarray(g[key])[index])

    x, y = at("x"), at("y")
    if entry.kind == "tree":
        height = at("top_z") - at("base_z")
        args = ((x, y), height, at("crown_radius_m"), at("crown_base"))
        if entry.trunk_radius_m is not None:
            args = (*args, entry.trunk_radius_m)
        growth = 0.0 if entry.growth_m_per_yr is None else growth_rate(entry.growth_m_per_yr)
        ground = at("base_z")  # the foot, on a bank or slope when a base angle was read
        if entry.deciduous:
            return Tree.deciduous(*args, hemisphere=hemisphere, name=entry.name,
                                  growth_m_per_yr=growth, ground_m=ground,
                                  crown_shape=entry.crown_shape,
                                  mature_height_m=entry.mature_height_m)
        return Tree(*args, name=entry.name, growth_m_per_yr=growth, ground_m=ground,
                    crown_shape=entry.crown_shape, mature_height_m=entry.mature_height_m)
    if entry.kind in CYLINDER_KINDS:
        return Cylinder((x, y), at("radius_m"), at("top_z"), at("base_z"), kind=entry.kind,
                        name=entry.name)
    if entry.axis_deg is None:
        axis = at("bearing") + 90.0
    else:
        axis = float(true_bearing(entry.axis_deg, entry.declination_deg))
    a = math.radians(axis)
    u = np.array([math.sin(a), math.cos(a)]) * (at("width_m") / 2.0)  # along the width
    w = np.array([math.cos(a), -math.sin(a)]) * (at("depth_m") / 2.0)  # across it
    c = np.array([x, y])
    footprint = [c - u - w, c + u - w, c + u + w, c - u + w]
    return Block(footprint, at("top_z"), at("base_z"), kind=entry.kind, name=entry.name)


def entry_geometry(entry) -> dict[str, float]:
    """Return the nominal computed geometry of a survey entry.

    Parameters
    ----------
    entry : SurveyEntry
        The readings of one obstruction.

    Returns
    -------
    dict
        ``x_m``, ``y_m`` (plan position of the axis, site frame [m]), ``top_z_m`` and
        ``base_z_m`` (site-frame heights of top and foot [m]), ``height_m`` (top minus
        foot [m]), ``horizontal_distance_m`` [m], ``true_bearing_deg`` [degrees], and for
        a tree ``crown_base_m`` (above the tree's foot [m]).
    """
    g = _sighted_geometry(entry, _reading_values(entry))
    out = {"x_m": float(g["x"]), "y_m": float(g["y"]), "top_z_m": float(g["top_z"]),
           "base_z_m": float(g["base_z"]),
           "height_m": float(g["top_z"] - g["base_z"]),
           "horizontal_distance_m": float(g["distance"]),
           "true_bearing_deg": float(g["bearing"])}
    if "crown_base" in g:
        out["crown_base_m"] = float(g["crown_base"])
    return out


def height_range(entry) -> tuple[float, float]:
    """Return the least and greatest height [m] over the tolerance ranges of the readings.

    Found at the corners of the box of readings ± tolerances; every height formula here
    is monotonic in each reading over such a box, so the corners hold the extremes.

    Parameters
    ----------
    entry : SurveyEntry
        The readings of one obstruction, each with its tolerance.

    Returns
    -------
    (float, float)
        Least and greatest height, foot to top [m].
    """
    g = _sighted_geometry(entry, _corner_values(entry)[0])
    h = np.atleast_1d(g["top_z"] - g["base_z"])
    return float(h.min()), float(h.max())


def build_obstruction(entry, *, hemisphere: str = "north"):
    """Build the obstruction a survey entry stands for, from its nominal readings.

    Parameters
    ----------
    entry : SurveyEntry
        The readings of one obstruction.
    hemisphere : {"north", "south"}, keyword-only
        For a deciduous tree: the hemisphere its leaf-on months belong to.

    Returns
    -------
    Tree, Block or Cylinder
        Of :func:`~layout.scene.survey.kinds.obstruction_type` of the entry's kind.
    """
    return _obstruction_from_geometry(entry, _sighted_geometry(entry, _reading_values(entry)),
                                      (), hemisphere)
