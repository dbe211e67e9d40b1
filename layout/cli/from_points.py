"""from-points: a project started from a LiDAR tile (and a surface raster) at a site.

``python -m layout from-points TILE.laz --site LAT,LON --radius 40 -o PROJECT.eaveline.json``
reads the tile, finds the roof at the site and what stands around it
(:func:`layout.elevation.import_elevation`), and writes a project with them, a generic module
and the IFC 2021 residential setbacks, ready for the planner. Every imported item is listed
in the project's ``sources`` as "from elevation data, not surveyed".
"""

from __future__ import annotations

import argparse
from pathlib import Path

from ..elevation import import_elevation
from ..errors import InputError, check_range
from ..project import FILE_SUFFIX, save_project
from ..project_imports import project_from_scene

__all__ = ["parse_site", "run_from_points"]


def parse_site(text: str) -> tuple[float, float]:
    """Parse ``--site LAT,LON`` [degrees]; raise argparse's error on a bad value."""
    parts = [p.strip() for p in str(text).split(",")]
    try:
        if len(parts) != 2:
            raise ValueError
        lat, lon = float(parts[0]), float(parts[1])
        check_range("latitude", lat, -90, 90, unit="degrees")
        check_range("longitude", lon, -180, 180, unit="degrees")
    except (ValueError, InputError) as err:
        detail = f": {err}" if isinstance(err, InputError) else ""
        raise argparse.ArgumentTypeError(
            f"--site takes LAT,LON in degrees, e.g. 47.3,8.5 (got {text!r}){detail}") from None
    return lat, lon


def run_from_points(tile, *, site: tuple[float, float], radius_m: float, out, crs=None,
                    surface=None, timezone: str | None = None, name: str = "house",
                    footprint=None) -> Path:
    """Run ``from-points``: import, print what was found, write the project.

    Parameters
    ----------
    tile : str or pathlib.Path
        The LAS/LAZ file.
    site : (float, float)
        Latitude and longitude [degrees].
    radius_m : float
        Crop radius [m].
    out : str or pathlib.Path
        The project file to write (``.eaveline.json`` is added when missing).
    crs : str, optional
        The tile's CRS when the file has none.
    surface : str or pathlib.Path, optional
        A GeoTIFF surface model for the far horizon.
    timezone : str, optional
        IANA zone of the site; by default looked up offline from the site's coordinates.
    name : str
        Building name.

    footprint : str or pathlib.Path, optional
        A GeoJSON file whose first polygon is the building's footprint (instead of finding it
        from the points).

    Returns
    -------
    pathlib.Path
        The file written.
    """
    lat, lon = site
    outline = None
    if footprint is not None:
        from ..scene.footprints import read_footprints

        outline = read_footprints(footprint, site_latitude=lat, site_longitude=lon).outlines[0]
    if timezone is None:
        from ..scene.site import timezone_at

        timezone = timezone_at(lat, lon)
    scene = import_elevation(tile, site_latitude=lat, site_longitude=lon, radius_m=radius_m,
                             crs=crs, surface=surface, name=name, footprint=outline)
    for line in scene.summary():
        print(line)
    project = project_from_scene(scene, latitude=lat, longitude=lon, timezone=timezone)
    out = Path(out)
    if not out.name.endswith(FILE_SUFFIX):
        out = out.with_name(out.name.removesuffix(".json") + FILE_SUFFIX)
    path = save_project(project, out)
    print(f"wrote {path}")
    print("Check every imported item against the roof and the site before a design goes out; "
          "the authority having jurisdiction decides setbacks, and a licensed structural "
          "engineer and electrician sign off load and wiring.")
    return path
