"""Reading LAS/LAZ point clouds into the site frame, cropped to a radius, chunk by chunk.

A tile is read with laspy (LAZ through its lazrs backend) in chunks of a fixed number of
points, so a tile of any size never sits in memory whole: each chunk is first cut to the
box that holds the site's circle in the file's own coordinates (cheap, before any
projection), then the survivors are projected to the site frame (x east, y north, metres
about the site; :mod:`layout.scene.geodesy`) and kept when within the radius.

The ASPRS LAS 1.4 classes are kept when the file has them (2 ground, 3 to 5 vegetation,
6 building; 7 and 18, noise, are dropped). Heights stay as the file gives them (above the
file's vertical datum), converted to metres; :mod:`layout.elevation.terrain` finds the
ground.

References
----------
.. [1] ASPRS (2019). LAS Specification 1.4 - R15. American Society for Photogrammetry and
   Remote Sensing. Table 17 (standard point classes), global encoding bit 0 (GPS time type).
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import InputError, check_positive, check_range
from ..scene.geodesy import parse_crs, site_to_lonlat, to_site_transformer

__all__ = [
    "CLASS_BUILDING",
    "CLASS_GROUND",
    "CLASS_NOISE",
    "CLASS_VEGETATION",
    "PointCloud",
    "points_from_arrays",
    "read_points",
]

CLASS_GROUND = 2
CLASS_VEGETATION = (3, 4, 5)
CLASS_BUILDING = 6
CLASS_NOISE = (7, 18)

#: Heights a point may have [m above the vertical datum]; the Site's altitude range.
HEIGHT_RANGE_M = (-500.0, 9000.0)

_GPS_EPOCH = _dt.datetime(1980, 1, 6, tzinfo=_dt.UTC)
_DEFAULT_CHUNK = 2_000_000


@dataclass(frozen=True, eq=False)
class PointCloud:
    """Points of one file in the site frame, with what the reader saw on the way.

    Parameters
    ----------
    x, y : numpy.ndarray
        Site-frame plan coordinates [m] (x east, y north).
    z : numpy.ndarray
        Heights above the file's vertical datum [m].
    classification : numpy.ndarray of uint8 or None
        ASPRS class per point; None when the file has no classes (all 0 or 1).
    source : str
        The file's name.
    crs : str
        Name of the CRS the file's coordinates were in.
    acquired : datetime.date or None
        When the data were taken, if the file says (``acquired_from`` says how).
    acquired_from : str
        ``"GPS time of the points"``, ``"file creation date"`` or ``""``.
    notes : tuple of str
        What the reader dropped or could not tell, in plain words.
    radius_m : float
        Radius the points were cropped to [m].
    coverage : float
        Share of the circle inside the file's extent [fraction].
    """

    x: np.ndarray
    y: np.ndarray
    z: np.ndarray
    classification: np.ndarray | None
    source: str = ""
    crs: str = ""
    acquired: _dt.date | None = None
    acquired_from: str = ""
    notes: tuple[str, ...] = field(default=())
    radius_m: float = math.inf
    coverage: float = 1.0

    def __len__(self) -> int:
        return len(self.x)

    @property
    def has_classes(self) -> bool:
        """True when the points carry ASPRS classes."""
        return self.classification is not None

    def subset(self, mask) -> PointCloud:
        """Return the points where ``mask`` is True, with the same metadata."""
        cls = None if self.classification is None else self.classification[mask]
        return PointCloud(self.x[mask], self.y[mask], self.z[mask], cls, self.source, self.crs,
                          self.acquired, self.acquired_from, self.notes, self.radius_m,
                          self.coverage)


def points_from_arrays(x, y, z, classification=None, *, radius_m: float = math.inf,
                       source: str = "arrays") -> PointCloud:
    """Build a :class:`PointCloud` from site-frame arrays, dropping bad heights.

    Parameters
    ----------
    x, y, z : array_like
        Site-frame coordinates [m]; z above the datum.
    classification : array_like or None
        ASPRS classes; None, or all 0/1, means unclassified.
    radius_m : float
        Keep points within this plan distance of the origin [m].

    Raises
    ------
    InputError
        When the arrays differ in length or no point is left.
    """
    arrays = [np.asarray(a, dtype=float).ravel() for a in (x, y, z)]
    if len({len(a) for a in arrays}) != 1:
        raise InputError("points", "x, y and z differ in length",
                         value=tuple(len(a) for a in arrays))
    cls = None if classification is None else np.asarray(classification, np.uint8).ravel()
    if cls is not None and len(cls) != len(arrays[0]):
        raise InputError("classification", "needs one class per point", value=len(cls),
                         allowed=f"{len(arrays[0])} values")
    keep, notes = _clean(arrays[0], arrays[1], arrays[2], cls, radius_m)
    cls = _classes(None if cls is None else cls[keep])
    cloud = PointCloud(arrays[0][keep], arrays[1][keep], arrays[2][keep], cls, source,
                       "site frame", notes=tuple(notes), radius_m=radius_m)
    _require_points(cloud, source)
    return cloud


def _clean(x, y, z, cls, radius_m):
    """Mask of points to keep, and notes on what was dropped."""
    notes = []
    finite = np.isfinite(x) & np.isfinite(y) & np.isfinite(z)
    lo, hi = HEIGHT_RANGE_M
    sane = finite & (z >= lo) & (z <= hi)
    if (~finite).any():
        notes.append(f"dropped {int((~finite).sum())} points with no number (NaN) as a "
                     "coordinate")
    absurd = finite & ~sane
    if absurd.any():
        notes.append(f"dropped {int(absurd.sum())} points with heights outside "
                     f"{lo:g} to {hi:g} m")
    keep = sane
    if cls is not None:
        noise = np.isin(cls, CLASS_NOISE) & keep
        if noise.any():
            notes.append(f"dropped {int(noise.sum())} points classed as noise (7, 18)")
        keep &= ~noise
    if math.isfinite(radius_m):
        keep &= x * x + y * y <= radius_m * radius_m
    return keep, notes


def _classes(cls):
    """None when the classes say nothing (never classified: 0, or unclassified: 1)."""
    if cls is None or len(cls) == 0 or not np.any(cls > 1):
        return None
    return cls


def _require_points(cloud: PointCloud, source: str) -> None:
    if len(cloud) == 0:
        why = "; ".join(cloud.notes)
        raise InputError("points", f"no usable point within {cloud.radius_m:g} m of the site"
                         + (f" ({why})" if why else ""), value=source)


def _z_factor(crs) -> float:
    """Metres per unit of the file's heights: the vertical CRS's unit, else the plan unit."""
    sub = crs.sub_crs_list if crs.is_compound else [crs]
    for part in reversed(sub):
        for axis in part.axis_info:
            if axis.direction.lower() == "up" and axis.unit_conversion_factor:
                return float(axis.unit_conversion_factor)
    first = sub[0].axis_info
    if first and not sub[0].is_geographic and first[0].unit_conversion_factor:
        return float(first[0].unit_conversion_factor)
    return 1.0


def _acquisition(header, gps_times) -> tuple[_dt.date | None, str]:
    """When the data were taken: adjusted standard GPS time if the file has it."""
    standard = bool(int(header.global_encoding.value) & 1)
    if gps_times is not None and len(gps_times) and standard:
        seconds = float(np.median(gps_times)) + 1e9
        # GPS time runs ahead of UTC by the leap seconds (18 s since 2017); a date ignores it
        return (_GPS_EPOCH + _dt.timedelta(seconds=seconds)).date(), "GPS time of the points"
    created = header.creation_date
    if created is not None and created.year > 1990:
        return created, "file creation date"
    return None, ""


def _circle_box(transformer, radius_m: float, margin: float = 1.01):
    """Box (xmin, ymin, xmax, ymax) in file coordinates holding the site's circle."""
    angles = np.linspace(0.0, 2 * math.pi, 73)
    r = radius_m * margin + 1.0
    fx, fy = transformer.transform(r * np.sin(angles), r * np.cos(angles), direction="INVERSE")
    return float(np.min(fx)), float(np.min(fy)), float(np.max(fx)), float(np.max(fy))


def _coverage(transformer, header, radius_m: float) -> float:
    """Share of the circle inside the file's header box, on a 41 × 41 grid."""
    g = np.linspace(-radius_m, radius_m, 41)
    gx, gy = np.meshgrid(g, g)
    inside = gx ** 2 + gy ** 2 <= radius_m ** 2
    fx, fy = transformer.transform(gx[inside], gy[inside], direction="INVERSE")
    (x0, y0, _), (x1, y1, _) = header.mins, header.maxs
    covered = (fx >= x0) & (fx <= x1) & (fy >= y0) & (fy <= y1)
    return float(covered.mean())


def read_points(path, *, site_latitude: float, site_longitude: float, radius_m: float,
                crs=None, chunk_points: int = _DEFAULT_CHUNK) -> PointCloud:
    """Read a LAS or LAZ file into the site frame, cropped to ``radius_m`` about the site.

    Parameters
    ----------
    path : str or pathlib.Path
        A ``.las`` or ``.laz`` file.
    site_latitude, site_longitude : float
        The site origin [degrees].
    radius_m : float
        Keep points within this plan distance of the site [m], 1 to 5000.
    crs : str or pyproj.CRS, optional
        The file's CRS when it holds none (or to override it).
    chunk_points : int, default 2 000 000
        Points read at a time; memory grows with this, not with the tile.

    Returns
    -------
    PointCloud

    Raises
    ------
    InputError
        A missing or unreadable file, no CRS (and none given), a CRS pyproj does not know, a
        tile that does not reach the site, or no usable point within the radius.
    """
    import laspy
    from laspy.errors import LaspyException

    path = Path(path)
    radius = check_range("radius_m", radius_m, 1, 5000, unit="m")
    chunk_points = int(check_positive("chunk_points", chunk_points))
    if not path.is_file():
        raise InputError("file", "does not exist", value=str(path))
    selection = (laspy.DecompressionSelection.XY_RETURNS_CHANNEL
                 | laspy.DecompressionSelection.Z | laspy.DecompressionSelection.CLASSIFICATION
                 | laspy.DecompressionSelection.GPS_TIME)
    try:
        reader = laspy.open(str(path), decompression_selection=selection)
    except (LaspyException, OSError, ValueError) as err:
        raise InputError("file", f"is not a LAS/LAZ file laspy can read ({err})",
                         value=path.name) from None
    with reader:
        header = reader.header
        file_crs = _file_crs(header, crs, path.name)
        transformer = to_site_transformer(file_crs, site_latitude=site_latitude,
                                          site_longitude=site_longitude)
        coverage = _coverage(transformer, header, radius)
        if coverage == 0.0:
            raise InputError("site", _outside_text(header, transformer, site_latitude,
                                                   site_longitude),
                             value=(site_latitude, site_longitude))
        box = _circle_box(transformer, radius)
        zf = _z_factor(file_crs)
        parts = {"x": [], "y": [], "z": [], "c": [], "t": []}
        has_time = "gps_time" in header.point_format.dimension_names
        for chunk in reader.chunk_iterator(chunk_points):
            fx = np.asarray(chunk.x)
            fy = np.asarray(chunk.y)
            near = (fx >= box[0]) & (fx <= box[2]) & (fy >= box[1]) & (fy <= box[3])
            if not near.any():
                continue
            sx, sy = transformer.transform(fx[near], fy[near])
            inside = sx * sx + sy * sy <= radius * radius
            parts["x"].append(np.asarray(sx)[inside])
            parts["y"].append(np.asarray(sy)[inside])
            parts["z"].append(np.asarray(chunk.z)[near][inside] * zf)
            parts["c"].append(np.asarray(chunk.classification, np.uint8)[near][inside])
            if has_time:
                parts["t"].append(np.asarray(chunk.gps_time)[near][inside][::97])
    x, y, z, cls = (np.concatenate(parts[k]) if parts[k] else np.empty(0)
                    for k in ("x", "y", "z", "c"))
    cls = cls.astype(np.uint8)
    keep, notes = _clean(x, y, z, cls, math.inf)
    acquired, acquired_from = _acquisition(
        header, np.concatenate(parts["t"]) if parts["t"] else None)
    if coverage < 0.999:
        notes.append(f"the file covers only {coverage:.0%} of the {radius:g} m circle "
                     "about the site")
    cloud = PointCloud(x[keep], y[keep], z[keep], _classes(cls[keep]), path.name,
                       file_crs.name, acquired, acquired_from, tuple(notes), radius, coverage)
    _require_points(cloud, path.name)
    return cloud


def _file_crs(header, crs, name: str):
    if crs is not None:
        return parse_crs(crs)
    try:
        found = header.parse_crs()
    except Exception as err:  # laspy raises several types on a broken WKT or GeoTIFF key
        raise InputError("crs", f"the file's CRS record cannot be read ({err}); give the CRS",
                         value=name, allowed="an EPSG code such as EPSG:32632") from None
    if found is None:
        raise InputError("crs", "the file holds no coordinate reference system; give one",
                         value=name, allowed="an EPSG code such as EPSG:32632, or WKT")
    return found


def _outside_text(header, transformer, lat, lon) -> str:
    (x0, y0, _), (x1, y1, _) = header.mins, header.maxs
    cx, cy = transformer.transform((x0 + x1) / 2, (y0 + y1) / 2)
    lon_c, lat_c = site_to_lonlat(cx, cy, site_latitude=lat, site_longitude=lon)
    distance = math.hypot(cx, cy)
    return (f"the file does not cover the site: its centre lies {distance:,.0f} m away, at "
            f"{lat_c:.5f}, {lon_c:.5f} (lat, lon)")
