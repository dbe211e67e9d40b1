"""The scene from elevation data: roof faces, trees, chimneys and the far horizon.

Reads aerial LiDAR point clouds (LAS/LAZ) and elevation rasters (GeoTIFF) into the site frame
and finds in them what a user would otherwise describe: the roof's faces, the chimneys on it,
the trees and the neighbouring buildings around it, and the skyline of the distant terrain.
Everything found is data, not a survey (:data:`PROVENANCE`). The entry point is
:func:`import_elevation`; :func:`scene_from_points` works on points already read.
"""

from .crosscheck import SurveyCheck, cross_check
from .horizon import curvature_refraction_drop, horizon_from_raster
from .pointcloud import PointCloud, points_from_arrays, read_points
from .raster import SiteRaster, read_raster
from .scene_import import PROVENANCE, ElevationScene, import_elevation, scene_from_points

__all__ = [
    "PROVENANCE",
    "ElevationScene",
    "PointCloud",
    "SiteRaster",
    "SurveyCheck",
    "cross_check",
    "curvature_refraction_drop",
    "horizon_from_raster",
    "import_elevation",
    "points_from_arrays",
    "read_points",
    "read_raster",
    "scene_from_points",
]
