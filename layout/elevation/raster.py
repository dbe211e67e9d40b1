"""Reading a single-band GeoTIFF surface or terrain model onto a grid in the site frame.

The raster is warped with rasterio (GDAL) from its own CRS onto a square grid in the site
frame (the azimuthal equidistant projection about the site, :mod:`layout.scene.geodesy`), at
its own cell size, cropped to ``radius_m`` about the site and read window by window, so a
large tile is never held whole. Nodata cells stay NaN and are counted.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import InputError, check_range
from ..scene.geodesy import parse_crs, site_crs
from .pointcloud import HEIGHT_RANGE_M

__all__ = ["SiteRaster", "read_raster"]


@dataclass(frozen=True, eq=False)
class SiteRaster:
    """Heights on a square grid in the site frame.

    Parameters
    ----------
    heights : numpy.ndarray, shape (n, n)
        Height above the file's datum [m], NaN where the file has no data. Row 0 is the
        northern edge; column 0 the western edge.
    cell_m : float
        Cell size [m].
    half_size_m : float
        The grid spans -half to +half in x and y [m].
    source, crs : str
    notes : tuple of str
    """

    heights: np.ndarray
    cell_m: float
    half_size_m: float
    source: str = ""
    crs: str = ""
    notes: tuple[str, ...] = field(default=())

    def height_at(self, x, y) -> np.ndarray:
        """Height at site points [m], bilinear; NaN outside the grid or next to a hole."""
        from scipy import ndimage

        col = (np.asarray(x, dtype=float) + self.half_size_m) / self.cell_m - 0.5
        row = (self.half_size_m - np.asarray(y, dtype=float)) / self.cell_m - 0.5
        return ndimage.map_coordinates(self.heights, [row, col], order=1, mode="constant",
                                       cval=np.nan)


def read_raster(path, *, site_latitude: float, site_longitude: float,
                radius_m: float = 5000.0, crs=None, cell_m: float | None = None) -> SiteRaster:
    """Read a single-band GeoTIFF into the site frame.

    Parameters
    ----------
    path : str or pathlib.Path
    site_latitude, site_longitude : float
        The site [degrees].
    radius_m : float, default 5000
        Half the side of the square read about the site [m], 10 to 100 000.
    crs : str, optional
        The raster's CRS when the file holds none.
    cell_m : float, optional
        Cell of the site grid [m]; the file's own by default.

    Returns
    -------
    SiteRaster

    Raises
    ------
    InputError
        A missing or unreadable file, more than one band, no CRS (and none given), a CRS
        pyproj does not know, a raster that does not reach the site, or no data at all.
    """
    import rasterio
    from rasterio.errors import RasterioIOError
    from rasterio.transform import Affine
    from rasterio.warp import Resampling, reproject, transform_bounds

    path = Path(path)
    half = check_range("radius_m", radius_m, 10, 100_000, unit="m")
    if not path.is_file():
        raise InputError("surface", "does not exist", value=str(path))
    try:
        src = rasterio.open(path)
    except RasterioIOError as err:
        raise InputError("surface", f"is not a raster rasterio can read ({err})",
                         value=path.name) from None
    notes = []
    with src:
        if src.count != 1:
            raise InputError("surface", "must have a single band of heights",
                             value=f"{src.count} bands", allowed="1 band")
        if crs is not None:
            source_crs = parse_crs(crs, field="crs")
        elif src.crs is None:
            raise InputError("crs", "the raster holds no coordinate reference system; give one",
                             value=path.name, allowed="an EPSG code such as EPSG:32632, or WKT")
        else:
            source_crs = parse_crs(src.crs.to_wkt(), field="crs")
        target = site_crs(site_latitude, site_longitude)
        res = cell_m or float(min(abs(src.transform.a), abs(src.transform.e)))
        left, bottom, right, top = transform_bounds(source_crs, target, *src.bounds)
        if left > half or right < -half or bottom > half or top < -half:
            cx, cy = (left + right) / 2, (bottom + top) / 2
            raise InputError("site", f"the raster does not cover the site: its centre lies "
                             f"{math.hypot(cx, cy):,.0f} m away", value=path.name)
        if not (left <= 0 <= right and bottom <= 0 <= top):
            raise InputError("site", "the raster does not cover the site itself",
                             value=path.name)
        half = min(half, max(abs(left), abs(right), abs(bottom), abs(top)))
        size = max(2, math.ceil(2 * half / res))
        half = size * res / 2
        out = np.full((size, size), np.nan, dtype=np.float32)
        reproject(rasterio.band(src, 1), out, src_crs=source_crs, dst_crs=target,
                  dst_transform=Affine(res, 0.0, -half, 0.0, -res, half), dst_nodata=np.nan,
                  resampling=Resampling.bilinear)
    heights = out.astype(float)
    lo, hi = HEIGHT_RANGE_M
    absurd = np.isfinite(heights) & ((heights < lo) | (heights > hi))
    if absurd.any():
        notes.append(f"{int(absurd.sum())} raster cells with heights outside {lo:g} to "
                     f"{hi:g} m were taken as holes")
        heights[absurd] = np.nan
    holes = np.isnan(heights)
    if holes.all():
        raise InputError("surface", "holds no height within the radius", value=path.name)
    if holes.any():
        notes.append(f"{holes.mean():.1%} of the raster within {half:,.0f} m has no data "
                     "(holes or beyond the file's edge): the skyline there may be too low")
    return SiteRaster(heights, res, half, path.name, source_crs.name, tuple(notes))
