"""The ground under a point cloud: a grid of ground heights, and each point's height above it.

With ASPRS classes the ground is the class-2 points. Without them the ground is found by a
morphological filter: the lowest point of each cell, opened (an erosion then a dilation) with a
window wider than the largest building, so that roofs and crowns drop out and the terrain
stays, after the progressive morphological filter of Zhang et al. (2003) in one pass. Cells
with no ground point (under a house, under a crown, where the scan is thin) are filled from the
nearest cells that have one.

References
----------
.. [1] Zhang, K., Chen, S.-C., Whitman, D., Shyu, M.-L., Yan, J., Zhang, C. (2003). A
   progressive morphological filter for removing nonground measurements from airborne LIDAR
   data. IEEE Transactions on Geoscience and Remote Sensing 41(4), 872-882.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import ndimage

from ..errors import InputError
from .pointcloud import CLASS_GROUND, PointCloud

__all__ = ["GroundModel", "ground_model"]

#: Points within this height of the opened surface count as ground when the file has no
#: classes [m]; three times a typical vertical noise of 5 cm, and below a kerb (common
#: practice).
GROUND_TOLERANCE_M = 0.3


@dataclass(frozen=True, eq=False)
class GroundModel:
    """Ground heights on a regular grid in the site frame.

    Parameters
    ----------
    x0, y0 : float
        Site coordinates of the centre of cell (0, 0) [m].
    cell_m : float
        Cell size [m].
    heights : numpy.ndarray, shape (ny, nx)
        Ground height of each cell above the file's datum [m]; row ``j`` is at
        ``y0 + j · cell_m``.
    site_level_m : float
        Ground height at the site origin above the datum [m]: the site frame's z = 0.
    from_classes : bool
        True when the ground came from class-2 points, False from the morphological filter.
    """

    x0: float
    y0: float
    cell_m: float
    heights: np.ndarray
    site_level_m: float
    from_classes: bool

    def height_at(self, x, y) -> np.ndarray:
        """Ground height above the datum at site points [m], bilinear between cell centres."""
        x = np.asarray(x, dtype=float)
        col = (np.atleast_1d(x) - self.x0) / self.cell_m
        row = (np.atleast_1d(np.asarray(y, dtype=float)) - self.y0) / self.cell_m
        out = ndimage.map_coordinates(self.heights, [row.ravel(), col.ravel()], order=1,
                                      mode="nearest").reshape(col.shape)
        return float(out[0]) if x.ndim == 0 else out

    def above_ground(self, cloud: PointCloud) -> np.ndarray:
        """Height of each point above the ground under it [m]."""
        return cloud.z - self.height_at(cloud.x, cloud.y)


def _grid_min(x, y, z, x0, y0, cell, shape):
    cols = np.clip(((x - x0) / cell + 0.5).astype(int), 0, shape[1] - 1)
    rows = np.clip(((y - y0) / cell + 0.5).astype(int), 0, shape[0] - 1)
    flat = np.full(shape[0] * shape[1], np.inf)
    np.minimum.at(flat, rows * shape[1] + cols, z)
    return flat.reshape(shape)


def _grid_mean(x, y, z, x0, y0, cell, shape):
    cols = np.clip(((x - x0) / cell + 0.5).astype(int), 0, shape[1] - 1)
    rows = np.clip(((y - y0) / cell + 0.5).astype(int), 0, shape[0] - 1)
    index = rows * shape[1] + cols
    size = shape[0] * shape[1]
    count = np.bincount(index, minlength=size)
    total = np.bincount(index, weights=z, minlength=size)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, total / np.maximum(count, 1), np.inf)
    return mean.reshape(shape)


def _fill_nearest(grid: np.ndarray) -> np.ndarray:
    missing = ~np.isfinite(grid)
    if not missing.any():
        return grid
    _, (rows, cols) = ndimage.distance_transform_edt(missing, return_indices=True)
    return grid[rows, cols]


def _fill_linear(grid: np.ndarray) -> np.ndarray:
    """Fill holes by linear interpolation between known cells, the rim by the nearest."""
    from scipy.interpolate import griddata

    missing = ~np.isfinite(grid)
    if not missing.any() or missing.all():
        return grid
    rows, cols = np.nonzero(~missing)
    mr, mc = np.nonzero(missing)
    out = grid.copy()
    out[mr, mc] = griddata((rows, cols), grid[rows, cols], (mr, mc), method="linear")
    return _fill_nearest(out)


def ground_model(cloud: PointCloud, *, cell_m: float = 2.0,
                 largest_building_m: float = 30.0) -> GroundModel:
    """Find the ground under the points.

    Parameters
    ----------
    cloud : PointCloud
    cell_m : float, default 2
        Grid cell [m].
    largest_building_m : float, default 30
        Width of the morphological window when there are no classes [m]: a building wider
        than this would be taken for ground.

    Returns
    -------
    GroundModel

    Raises
    ------
    InputError
        When the cloud has no ground point at all.

    References
    ----------
    .. [1] Zhang et al. (2003), IEEE TGRS 41(4):872 (morphological filter, one window).
    """
    x0, y0 = float(np.min(cloud.x)), float(np.min(cloud.y))
    nx = (math.ceil((np.max(cloud.x) - x0) / cell_m)) + 1
    ny = (math.ceil((np.max(cloud.y) - y0) / cell_m)) + 1
    if cloud.has_classes and np.any(cloud.classification == CLASS_GROUND):
        g = cloud.classification == CLASS_GROUND
        from_classes = True
    else:
        lowest = _grid_min(cloud.x, cloud.y, cloud.z, x0, y0, cell_m, (ny, nx))
        filled = _fill_nearest(lowest)
        size = max(3, round(largest_building_m / cell_m) | 1)
        opened = ndimage.grey_opening(filled, size=(size, size))
        g = cloud.z <= ndimage.map_coordinates(
            opened, [(cloud.y - y0) / cell_m, (cloud.x - x0) / cell_m], order=1,
            mode="nearest") + GROUND_TOLERANCE_M
        from_classes = False
    # the mean, not the lowest, of each cell's ground points: noise is symmetric
    grid = _grid_mean(cloud.x[g], cloud.y[g], cloud.z[g], x0, y0, cell_m, (ny, nx))
    if not np.isfinite(grid).any():
        raise InputError("points", "no ground point: the height of the ground is unknown",
                         value=cloud.source)
    heights = _fill_linear(grid)
    model = GroundModel(x0, y0, cell_m, heights, 0.0, from_classes)
    level = float(model.height_at(0.0, 0.0))
    return GroundModel(x0, y0, cell_m, heights, level, from_classes)
