"""Per-module exports: a table (CSV) and the module outlines (GeoJSON) in the site frame.

Both describe the layout the core placed (:class:`layout.fill.placed.Layout`); nothing is
recomputed here. Coordinates are the site frame of the project, metres, x east, y north, z up,
with the origin wherever the user put it. That is not longitude and latitude: the GeoJSON file
says so in its ``eaveline_frame`` member, and a GIS must place it with the site's own origin.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from layout.study.string_options import module_string_columns

__all__ = [
    "SITE_FRAME",
    "layout_geojson",
    "module_table",
    "write_layout_geojson",
    "write_module_table",
]

#: Description of the coordinates written to exports.
SITE_FRAME = "site-local metres: x east, y north, z up (not longitude/latitude)"


def module_table(layout, *, figures: pd.DataFrame | None = None, strings=None,
                 inputs=None) -> pd.DataFrame:
    """One row per placed module.

    Parameters
    ----------
    layout : layout.fill.placed.Layout
        The layout.
    figures : pandas.DataFrame, optional
        Per-module figures indexed by module id (annual energy, shade loss ...), joined on
        the right when given.
    strings : sequence of sequence of str, optional
        Module ids of each string (the project's ``energy.electrical.strings``).
    inputs : sequence of int, optional
        Tracking input (0-based) of each string.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``id``: ``face``, ``row``, ``column``, ``orientation``, ``active``,
        ``centre_x_m``, ``centre_y_m``, ``centre_z_m`` [m, site frame], ``tilt_deg`` and
        ``azimuth_deg`` [degrees], ``string`` (``"S1"``…, empty when in no string) and
        ``input`` (1-based, missing when unknown).
    """
    removed = {m.id for m in layout.removed_modules}
    records = []
    for m in layout.modules:
        x, y, z = m.centre_3d
        records.append({
            "id": m.id, "face": m.face, "row": m.row, "column": m.column,
            "orientation": m.orientation, "active": m.id not in removed,
            "centre_x_m": float(x), "centre_y_m": float(y), "centre_z_m": float(z),
            "tilt_deg": m.tilt_deg, "azimuth_deg": m.azimuth_deg,
        })
    columns = ["id", "face", "row", "column", "orientation", "active", "centre_x_m",
               "centre_y_m", "centre_z_m", "tilt_deg", "azimuth_deg"]
    table = pd.DataFrame.from_records(records, columns=columns).set_index("id")
    wiring = module_string_columns(list(table.index), strings, inputs)
    wiring.index = table.index
    table = table.join(wiring)
    if figures is not None:
        table = table.join(figures)
    return table


def layout_geojson(layout, *, name: str = "") -> dict:
    """Return the module outlines as a GeoJSON FeatureCollection in the site frame.

    Each feature is a Polygon whose ring runs through the module's four 3D corners
    (x, y, z [m]) and closes on the first; its properties are the module's id, face, row,
    column, orientation, whether it is active, tilt and azimuth.
    """
    removed = {m.id for m in layout.removed_modules}
    features = []
    for m in layout.modules:
        corners = np.asarray(m.corners_3d, dtype=float)
        ring = [list(map(float, c)) for c in corners] + [list(map(float, corners[0]))]
        features.append({
            "type": "Feature",
            "id": m.id,
            "geometry": {"type": "Polygon", "coordinates": [ring]},
            "properties": {
                "id": m.id, "face": m.face, "row": m.row, "column": m.column,
                "orientation": m.orientation, "active": m.id not in removed,
                "tilt_deg": m.tilt_deg, "azimuth_deg": m.azimuth_deg,
            },
        })
    return {"type": "FeatureCollection", "name": name, "eaveline_frame": SITE_FRAME,
            "features": features}


def _target(path, suffix: str) -> Path:
    target = Path(path).expanduser()
    if target.suffix.lower() != suffix:
        target = target.with_name(target.name + suffix)
    target.parent.mkdir(parents=True, exist_ok=True)
    return target


def write_module_table(layout, path, **kwargs) -> Path:
    """Write :func:`module_table` as CSV (``.csv`` appended if missing); return the path."""
    target = _target(path, ".csv")
    module_table(layout, **kwargs).to_csv(target)
    return target


def write_layout_geojson(layout, path, *, name: str = "") -> Path:
    """Write :func:`layout_geojson` (``.geojson`` appended if missing); return the path."""
    target = _target(path, ".geojson")
    target.write_text(json.dumps(layout_geojson(layout, name=name), indent=1) + "\n",
                      encoding="utf-8")
    return target
