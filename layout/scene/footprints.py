"""Building footprints from a GeoJSON file, in the site frame.

A footprint file gives each building's outline on the map. GeoJSON (RFC 7946) is longitude and
latitude on WGS 84; files written to the older 2008 specification may name a projected
coordinate reference system in a ``crs`` member, and both are read. Outlines come into the
site frame (x east, y north, metres about the site) by the azimuthal equidistant projection of
:mod:`layout.scene.geodesy`. When the project has no site yet, the centroid of the footprints
is offered as one.

Each Polygon is one building; each part of a MultiPolygon is one building. A courtyard (an
interior ring) cannot be part of a roof face, so it is dropped, with a note.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pyproj
import shapely

from ..errors import InputError
from .building import Building
from .geodesy import lonlat_to_site, parse_crs, to_site_transformer
from .outlines import check_outline_drawing, face_from_drawing

__all__ = ["FootprintImport", "building_from_footprint", "read_footprints"]

_GEOMETRIES = ("Polygon", "MultiPolygon")


@dataclass(frozen=True)
class FootprintImport:
    """The footprints of a file, in the site frame.

    Attributes
    ----------
    outlines : tuple of numpy.ndarray
        Each building's outline, shape (n, 2), x east and y north [m].
    names : tuple of str
        A name per outline: the feature's ``name`` property, or ``"building k"``.
    site_latitude, site_longitude : float
        The site the outlines are relative to [degrees]: the one given, or the centroid.
    crs : str
        The file's coordinate reference system, as pyproj names it.
    notes : tuple of str
        What was dropped or assumed.
    """

    outlines: tuple
    names: tuple
    site_latitude: float
    site_longitude: float
    crs: str
    notes: tuple = ()


def _load(source) -> tuple[dict, str]:
    if isinstance(source, dict):
        return source, "the footprint data"
    path = Path(source)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as err:
        raise InputError("footprint_file", f"cannot be read ({err.strerror})",
                         value=str(path)) from None
    try:
        return json.loads(text), path.name
    except json.JSONDecodeError as err:
        raise InputError("footprint_file", f"is not GeoJSON: not JSON ({err.msg} at line "
                         f"{err.lineno})", value=path.name,
                         allowed="a GeoJSON file (RFC 7946)") from None


def _polygons(data: dict, where: str) -> list[tuple[str, list]]:
    """(name, rings) of every polygon, with rings as coordinate lists."""
    if not isinstance(data, dict) or "type" not in data:
        raise InputError("footprint_file", "is not GeoJSON: no 'type' member", value=where,
                         allowed="a FeatureCollection, Feature, Polygon or MultiPolygon")
    kind = data["type"]
    if kind == "FeatureCollection":
        features = data.get("features") or []
    elif kind == "Feature":
        features = [data]
    elif kind in _GEOMETRIES:
        features = [{"geometry": data, "properties": {}}]
    else:
        raise InputError("footprint_file", f"holds a {kind!r}, not building outlines",
                         value=where, allowed="a FeatureCollection, Feature, Polygon or "
                                              "MultiPolygon")
    found = []
    for feature in features:
        geometry = (feature or {}).get("geometry") or {}
        properties = (feature or {}).get("properties") or {}
        name = str(properties.get("name") or properties.get("Name") or "").strip()
        if geometry.get("type") == "Polygon":
            found.append((name, geometry.get("coordinates") or []))
        elif geometry.get("type") == "MultiPolygon":
            parts = geometry.get("coordinates") or []
            found += [(f"{name} {j + 1}".strip() if len(parts) > 1 else name, rings)
                      for j, rings in enumerate(parts)]
    if not found:
        raise InputError("footprint_file", "holds no polygon", value=where,
                         allowed="at least one Polygon or MultiPolygon feature")
    return found


def _crs_of(data: dict) -> pyproj.CRS:
    member = data.get("crs") if isinstance(data, dict) else None
    if not member:
        return pyproj.CRS.from_epsg(4326)
    name = (member.get("properties") or {}).get("name") if isinstance(member, dict) else None
    if not name:
        raise InputError("crs", "names no coordinate reference system", value=str(member)[:60],
                         allowed="{'type': 'name', 'properties': {'name': 'EPSG:...'}}")
    return parse_crs(name, field="crs")


def read_footprints(source, *, site_latitude: float | None = None,
                    site_longitude: float | None = None) -> FootprintImport:
    """Read building outlines from GeoJSON into the site frame.

    Parameters
    ----------
    source : str, pathlib.Path or dict
        A GeoJSON file, or its parsed content.
    site_latitude, site_longitude : float, optional
        The project's site [degrees]; without them, the centroid of all footprints is the site.

    Returns
    -------
    FootprintImport
        The outlines [m], their names, the site used and the file's CRS.

    Raises
    ------
    InputError
        ``footprint_file`` when the file is missing, not JSON, not GeoJSON or holds no polygon;
        ``coordinates`` when a position is not a pair of finite numbers, or (for longitude and
        latitude) is out of range; ``crs`` when pyproj does not know the file's CRS.

    Notes
    -----
    The projection is azimuthal equidistant about the site on the WGS 84 ellipsoid
    (:mod:`layout.scene.geodesy`): lengths and areas of a building-sized outline near the site
    are those of the ellipsoid to within a few parts per million.

    References
    ----------
    .. [1] Butler, H. et al. (2016). The GeoJSON Format. IETF RFC 7946.
    .. [2] Snyder, J. P. (1987). Map Projections: A Working Manual. USGS Professional Paper
       1395 (azimuthal equidistant projection).
    """
    data, where = _load(source)
    polygons = _polygons(data, where)
    crs = _crs_of(data)
    notes = []
    rings_xy = []
    for i, (_, rings) in enumerate(polygons):
        try:
            exterior = np.asarray(rings[0], dtype=float)[:, :2]
        except (IndexError, ValueError, TypeError):
            raise InputError(f"coordinates[{i}]", "are not positions (pairs of numbers)",
                             value=where) from None
        if not np.isfinite(exterior).all():
            raise InputError(f"coordinates[{i}]", "hold a value that is not a finite number",
                             value=where)
        if len(rings) > 1:
            notes.append(f"polygon {i + 1}: {len(rings) - 1} interior ring(s) (a courtyard) "
                         "dropped: a roof face has no holes")
        rings_xy.append(exterior)
    if crs.is_geographic:
        every = np.concatenate(rings_xy)
        bad = (np.abs(every[:, 0]) > 180) | (np.abs(every[:, 1]) > 90)
        if bad.any():
            lon, lat = every[np.flatnonzero(bad)[0]]
            raise InputError("coordinates", "are out of range for longitude and latitude",
                             value=f"{lon:g}, {lat:g}",
                             allowed="longitude -180 to 180, latitude -90 to 90 (a file in a "
                                     "projected system must name it in a 'crs' member)")
    if site_latitude is None or site_longitude is None:
        lon, lat = _centroid_lonlat(rings_xy, crs)
        site_latitude, site_longitude = float(lat), float(lon)
        notes.append(f"site taken at the footprints' centroid: {site_latitude:.6f}, "
                     f"{site_longitude:.6f}")
    if crs.is_geographic:
        outlines = [np.stack(lonlat_to_site(r[:, 0], r[:, 1], site_latitude=site_latitude,
                                            site_longitude=site_longitude), axis=1)
                    for r in rings_xy]
    else:
        to_site = to_site_transformer(crs, site_latitude=site_latitude,
                                      site_longitude=site_longitude)
        outlines = [np.stack(to_site.transform(r[:, 0], r[:, 1]), axis=1) for r in rings_xy]
    outlines = [o[:-1] if len(o) > 1 and np.allclose(o[0], o[-1]) else o for o in outlines]
    names = tuple(name or f"building {i + 1}" for i, (name, _) in enumerate(polygons))
    return FootprintImport(tuple(outlines), names, float(site_latitude), float(site_longitude),
                           crs.name, tuple(notes))


def _centroid_lonlat(rings: list[np.ndarray], crs: pyproj.CRS) -> tuple[float, float]:
    """Longitude and latitude of the area centroid of all outlines."""
    union = shapely.union_all([shapely.Polygon(r) for r in rings])
    x, y = union.centroid.coords[0]
    if crs.is_geographic:
        return x, y
    to_lonlat = pyproj.Transformer.from_crs(crs, "EPSG:4326", always_xy=True)
    return to_lonlat.transform(x, y)


def building_from_footprint(outline, name: str, *, pitch_deg: float = 0.0,
                            eave_height_m: float = 3.0, eave_edge: int = 0) -> Building:
    """Return a one-face building over a footprint: a flat roof, or one slope.

    Parameters
    ----------
    outline : array_like, shape (n, 2)
        The footprint in the site frame [m].
    name : str
        The building's name (its face is called ``"<name> roof"``).
    pitch_deg : float, default 0
        Slope of the roof [degrees]; 0 for a flat roof.
    eave_height_m : float, default 3
        Height of the eave (the lowest point) above ground [m].
    eave_edge : int, default 0
        For a sloped roof, the edge that is the eave (the slope runs down across it).

    Raises
    ------
    InputError
        ``outline`` when it crosses itself, has an edge under 0.1 m or no area.
    """
    corners = check_outline_drawing(outline)
    face = face_from_drawing(corners, pitch_deg, eave_height_m, name=f"{name} roof".strip(),
                             eave_edge=eave_edge)
    return Building(faces=(face,), name=name)
