"""A scene of our own sampled as aerial LiDAR and as a surface raster, for tests and demos.

The scene: a house with a hip roof (12 m × 9 m, pitch 30°, eaves at 5 m) and a chimney on
its south face, a flat-roofed garage, three broadleaf trees of known heights and crowns, ground
that rises gently to the east, and a ridge of hills 1.5 km to the south-south-east. Every
object is one of eaveline's own (:class:`~layout.scene.building.Building`,
:class:`~layout.scene.obstructions.Block`, :class:`~layout.scene.obstructions.Tree`), so a
test compares what the import finds with what made the points.

The points imitate a nadir aerial scan: positions uniform in plan at a given density (8 to 20
points/m² is usual for regional programs), the first surface a pulse meets (roofs, the top of a
crown, the ground), a share of pulses that go into a crown and return from inside it, no
return from the ground under a crown, ASPRS LAS 1.4 classes (2 ground, 5 high vegetation,
6 building), and Gaussian noise (σ 10 cm in plan, 5 cm in height). The whole scene turns
about the site origin by ``rotation_deg``, so a test can check that the import does not
depend on the scene's orientation.

Files are written in UTM zone 32 N (EPSG:32632) with heights above sea level: the site is a
point of our choosing at 47.3° N, 8.5° E, its ground 430 m above sea level.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass

import numpy as np
import shapely

from ..errors import InputError, check_positive, check_range
from ..scene.building import Building, hip_roof
from ..scene.geodesy import lonlat_to_site, site_to_lonlat
from ..scene.obstructions import Block, Tree
from ..scene.roof import building_to_site

__all__ = [
    "CLASS_BUILDING",
    "CLASS_GROUND",
    "CLASS_HIGH_VEGETATION",
    "DEMO_CRS",
    "DEMO_GROUND_ALTITUDE_M",
    "DEMO_LATITUDE",
    "DEMO_LONGITUDE",
    "Ridge",
    "SyntheticScene",
    "demo_scene",
    "sample_points",
    "scene_surface",
    "write_las",
    "write_surface_geotiff",
]

#: ASPRS LAS 1.4 (R15, 2019) standard point classes used here (Table 17 of the specification).
CLASS_GROUND = 2
CLASS_HIGH_VEGETATION = 5
CLASS_BUILDING = 6

DEMO_LATITUDE = 47.3
DEMO_LONGITUDE = 8.5
DEMO_GROUND_ALTITUDE_M = 430.0
DEMO_CRS = "EPSG:32632"
#: When the demo scan was flown (written as GPS time into the points).
DEMO_ACQUISITION = _dt.datetime(2023, 4, 18, 10, 30, tzinfo=_dt.UTC)

_GPS_EPOCH = _dt.datetime(1980, 1, 6, tzinfo=_dt.UTC)
_GPS_LEAP_SECONDS_2023 = 18  # GPS time runs ahead of UTC by 18 s since 2017 (IERS Bulletin C)


@dataclass(frozen=True)
class Ridge:
    """A ridge of hills: a Gaussian profile across a straight crest line.

    Parameters
    ----------
    azimuth_deg : float
        Compass direction from the site to the nearest point of the crest [degrees].
    distance_m : float
        Horizontal distance from the site to the crest line [m].
    height_m : float
        Crest height above the site's ground [m].
    width_m : float
        Half-width of the Gaussian profile across the crest (e-folding) [m].
    half_length_m : float
        Half the crest's length along its line [m]; it falls off beyond over ``width_m``.
    """

    azimuth_deg: float
    distance_m: float
    height_m: float
    width_m: float = 150.0
    half_length_m: float = 3000.0

    def height_at(self, x, y) -> np.ndarray:
        """Height of the ridge above the site's ground at site points (x, y) [m]."""
        az = math.radians(self.azimuth_deg)
        across = np.asarray(x) * math.sin(az) + np.asarray(y) * math.cos(az) - self.distance_m
        along = -np.asarray(x) * math.cos(az) + np.asarray(y) * math.sin(az)
        beyond = np.maximum(np.abs(along) - self.half_length_m, 0.0)
        return self.height_m * np.exp(-((across / self.width_m) ** 2)
                                      - (beyond / self.width_m) ** 2)


@dataclass(frozen=True)
class SyntheticScene:
    """What made the points: the truth a test compares the import with.

    Parameters
    ----------
    house : Building
        The hip-roofed house, heights above the site's ground at the origin.
    chimney : Block
        The chimney on the house (top in site z).
    chimney_height_above_roof_m : float
        Chimney top above the roof plane at the chimney's centre [m].
    garage : Block
        The flat-roofed garage (a neighbouring building).
    trees : tuple of Tree
        The trees; ``ground_m`` gives the ground at each trunk.
    ground_slope : float
        Rise of the ground per metre toward the east [m/m]; ground z = slope · x within
        100 m of the site.
    ridge : Ridge
        The far hills.
    rotation_deg : float
        How far the scene was turned clockwise about the origin [degrees].
    """

    house: Building
    chimney: Block
    chimney_height_above_roof_m: float
    garage: Block
    trees: tuple[Tree, ...]
    ground_slope: float
    ridge: Ridge
    rotation_deg: float

    def ground_at(self, x, y) -> np.ndarray:
        """Ground height above the site origin's ground at site points [m], hills excluded.

        The slope runs 100 m either side of the site and levels off beyond.
        """
        x = np.clip(np.asarray(x, dtype=float), -100.0, 100.0)
        return self.ground_slope * x + 0.0 * np.asarray(y, dtype=float)


def _turn(points, rotation_deg: float) -> np.ndarray:
    return building_to_site(np.asarray(points, dtype=float), rotation_deg, (0.0, 0.0))


def demo_scene(rotation_deg: float = 0.0) -> SyntheticScene:
    """Build the demo scene, turned clockwise by ``rotation_deg`` about the site origin.

    Parameters
    ----------
    rotation_deg : float, default 0
        Turn of the whole scene [degrees], -360 to 360.

    Returns
    -------
    SyntheticScene
    """
    rot = check_range("rotation_deg", rotation_deg, -360, 360, unit="degrees")
    length, width, pitch, eave = 12.0, 9.0, 30.0, 5.0
    origin = tuple(_turn([(-length / 2, -width / 2)], rot)[0])
    house = hip_roof(length, width, pitch, eave, rotation_deg=rot, origin=origin, name="house")
    south = next(f for f in house.faces if abs(((f.azimuth_deg - rot) % 360) - 180) < 1e-6)
    chim_center = _turn([(2.5, -2.2)], rot)[0]
    hx, hy = 0.6, 0.45  # a double-flue chimney, 1.2 m along the eave and 0.9 m deep
    chim_local = [(2.5 - hx, -2.2 - hy), (2.5 + hx, -2.2 - hy),
                  (2.5 + hx, -2.2 + hy), (2.5 - hx, -2.2 + hy)]
    chim_foot = _turn(chim_local, rot)
    above = 1.2
    roof_at_center = float(south.height_at(chim_center))
    chimney = Block([tuple(p) for p in chim_foot], roof_at_center + above,
                    float(min(south.height_at(chim_foot))), kind="chimney", name="chimney")
    garage_local = [(10.0, 2.0), (16.0, 2.0), (16.0, 6.0), (10.0, 6.0)]
    garage = Block([tuple(p) for p in _turn(garage_local, rot)], 2.8, kind="building",
                   name="garage")
    slope = 0.01
    trees = []
    for (x, y), height, radius, base in (((-16.0, -12.0), 8.0, 2.5, 2.0),
                                         ((15.0, -15.0), 11.0, 3.5, 3.0),
                                         ((-2.0, 19.0), 14.0, 4.0, 4.0)):
        cx, cy = _turn([(x, y)], rot)[0]
        trees.append(Tree((float(cx), float(cy)), height, radius, base,
                          ground_m=round(slope * float(cx), 9), name=f"tree {height:g} m"))
    ridge = Ridge(azimuth_deg=(160.0 + rot) % 360.0, distance_m=1500.0, height_m=120.0)
    return SyntheticScene(house, chimney, above, garage, tuple(trees), slope, ridge, rot)


def _crown_surfaces(tree: Tree, x, y):
    """Top and bottom of a spheroid crown over plan points, NaN outside its disc."""
    r2 = ((x - tree.center[0]) ** 2 + (y - tree.center[1]) ** 2) / tree.crown_radius ** 2
    inside = r2 < 1.0
    root = np.sqrt(np.where(inside, 1.0 - r2, np.nan))
    zc = tree.ground_m + tree.crown_center_z
    b = tree.crown_semi_axis_z
    return zc + b * root, zc - b * root


def scene_surface(scene: SyntheticScene, x, y, *, hills: bool = True):
    """Return the first surface a vertical pulse meets at site points, and its ASPRS class.

    Parameters
    ----------
    scene : SyntheticScene
    x, y : array_like
        Site-frame plan points [m].
    hills : bool, default True
        Include the far ridge in the ground.

    Returns
    -------
    z : numpy.ndarray
        Height above the site origin's ground [m].
    classification : numpy.ndarray of uint8
        2 ground, 5 high vegetation, 6 building.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    z = scene.ground_at(x, y)
    if hills:
        z = z + scene.ridge.height_at(x, y)
    cls = np.full(x.shape, CLASS_GROUND, dtype=np.uint8)
    for tree in scene.trees:
        top, _ = _crown_surfaces(tree, x, y)
        hit = np.isfinite(top) & (top > z)
        z = np.where(hit, top, z)
        cls[hit] = CLASS_HIGH_VEGETATION
    for face in scene.house.faces:
        inside = shapely.contains_xy(face.plan_polygon, x, y)
        if inside.any():
            z[inside] = face.height_at(np.stack([x[inside], y[inside]], axis=-1))
            cls[inside] = CLASS_BUILDING
    for block in (scene.chimney, scene.garage):
        inside = shapely.contains_xy(block.footprint_polygon, x, y)
        z[inside] = block.top
        cls[inside] = CLASS_BUILDING
    return z, cls


def sample_points(scene: SyntheticScene, *, half_size_m: float = 60.0, density: float = 12.0,
                  seed: int = 0, sigma_xy_m: float = 0.10, sigma_z_m: float = 0.05,
                  crown_penetration: float = 0.15, center=(0.0, 0.0)) -> dict:
    """Sample the scene as a nadir aerial scan over a square tile.

    Parameters
    ----------
    scene : SyntheticScene
    half_size_m : float, default 60
        Half the side of the square tile, about ``center`` [m].
    density : float, default 12
        Pulses per square metre [1/m²], 0.5 to 100.
    seed : int, default 0
        Seed of the random generator.
    sigma_xy_m, sigma_z_m : float
        Standard deviation of the plan and height noise [m].
    crown_penetration : float, default 0.15
        Share of the pulses over a crown that return from inside it (uniform in depth
        between its top and bottom) instead of from its top [fraction].
    center : (float, float)
        Tile centre in the site frame [m].

    Returns
    -------
    dict
        ``x``, ``y``, ``z`` (site frame [m], noisy) and ``classification`` (uint8). No point
        falls on the ground under a crown.
    """
    half = check_positive("half_size_m", half_size_m, unit="m")
    density = check_range("density", density, 0.5, 100, unit="points/m²")
    rng = np.random.default_rng(seed)
    n = rng.poisson(density * (2 * half) ** 2)
    x = center[0] + rng.uniform(-half, half, n)
    y = center[1] + rng.uniform(-half, half, n)
    z, cls = scene_surface(scene, x, y, hills=False)
    inner = rng.random(n) < crown_penetration
    for tree in scene.trees:
        top, bottom = _crown_surfaces(tree, x, y)
        pick = inner & np.isfinite(top) & (cls == CLASS_HIGH_VEGETATION) & (z == top)
        z[pick] = bottom[pick] + rng.random(int(pick.sum())) * (top[pick] - bottom[pick])
    x = x + rng.normal(0.0, sigma_xy_m, n)
    y = y + rng.normal(0.0, sigma_xy_m, n)
    z = z + rng.normal(0.0, sigma_z_m, n)
    return {"x": x, "y": y, "z": z, "classification": cls}


def _file_transformer(crs: str):
    import pyproj

    return pyproj.Transformer.from_crs("EPSG:4326", crs, always_xy=True)


def _site_to_file(x, y, crs: str):
    lon, lat = site_to_lonlat(x, y, site_latitude=DEMO_LATITUDE, site_longitude=DEMO_LONGITUDE)
    return _file_transformer(crs).transform(lon, lat)


def _file_to_site(e, n, crs: str):
    lon, lat = _file_transformer(crs).transform(e, n, direction="INVERSE")
    return lonlat_to_site(lon, lat, site_latitude=DEMO_LATITUDE, site_longitude=DEMO_LONGITUDE)


def write_las(path, points: dict, *, crs: str | None = DEMO_CRS, classified: bool = True,
              acquired: _dt.datetime | None = DEMO_ACQUISITION) -> None:
    """Write sampled points as a LAS 1.4 file (or LAZ when ``path`` ends in ``.laz``).

    Parameters
    ----------
    path : str or pathlib.Path
        Where to write; ``.laz`` compresses with the lazrs backend.
    points : dict
        Output of :func:`sample_points` (site frame).
    crs : str or None, default "EPSG:32632"
        CRS of the written coordinates, stored as an OGC WKT record; None writes site-frame
        coordinates shifted to UTM-like numbers with no CRS record (a bad file, for tests).
    classified : bool, default True
        Keep the ASPRS classes; False writes every point as class 1 (unclassified).
    acquired : datetime or None
        Time of the flight, written as adjusted standard GPS time in every point (global
        encoding bit 0 set, as LAS 1.4 requires for point format 6); None writes no time.
    """
    import laspy

    x, y = np.asarray(points["x"]), np.asarray(points["y"])
    if crs is None:
        e, n = x + 500000.0, y + 5200000.0
    else:
        e, n = _site_to_file(x, y, crs)
    header = laspy.LasHeader(point_format=6, version="1.4")
    header.scales = np.array([0.001, 0.001, 0.001])
    header.offsets = np.array([math.floor(np.min(e)), math.floor(np.min(n)), 0.0])
    if crs is not None:
        import pyproj

        header.add_crs(pyproj.CRS.from_user_input(crs))
    las = laspy.LasData(header)
    las.x = e
    las.y = n
    las.z = np.asarray(points["z"]) + DEMO_GROUND_ALTITUDE_M
    cls = np.asarray(points["classification"], dtype=np.uint8)
    las.classification = cls if classified else np.ones_like(cls)
    if acquired is not None:
        gps = (acquired - _GPS_EPOCH).total_seconds() + _GPS_LEAP_SECONDS_2023 - 1e9
        las.gps_time = np.full(len(e), gps) + np.linspace(0.0, 600.0, len(e))
        las.header.global_encoding.gps_time_type = laspy.header.GpsTimeType.STANDARD
    las.write(str(path))


def write_surface_geotiff(path, scene: SyntheticScene, *, half_size_m: float = 3000.0,
                          resolution_m: float = 10.0, crs: str = DEMO_CRS, objects: bool = True,
                          holes=(), nodata: float = -9999.0) -> None:
    """Write the scene's surface as a single-band GeoTIFF of heights above sea level.

    Parameters
    ----------
    path : str or pathlib.Path
    scene : SyntheticScene
    half_size_m : float, default 3000
        Half the side of the square raster about the site [m].
    resolution_m : float, default 10
        Cell size [m].
    crs : str, default "EPSG:32632"
        CRS of the raster grid.
    objects : bool, default True
        Include buildings and trees (a surface model); False gives terrain only.
    holes : sequence of (x, y, radius)
        Discs in the site frame [m] written as nodata (a raster with holes).
    nodata : float
        The nodata value.
    """
    import rasterio
    from rasterio.transform import Affine

    half = check_positive("half_size_m", half_size_m, unit="m")
    res = check_positive("resolution_m", resolution_m, unit="m")
    if res > half:
        raise InputError("resolution_m", "is larger than the raster", value=res,
                         allowed=f"up to {half:g} m")
    e0, n0 = _site_to_file(0.0, 0.0, crs)
    size = round(2 * half / res)
    west, north = e0 - size * res / 2, n0 + size * res / 2
    cols, rows = np.meshgrid(np.arange(size) + 0.5, np.arange(size) + 0.5)
    e = west + cols * res
    n = north - rows * res
    x, y = _file_to_site(e.ravel(), n.ravel(), crs)
    if objects:
        z, _ = scene_surface(scene, x, y)
    else:
        z = scene.ground_at(x, y) + scene.ridge.height_at(x, y)
    z = z + DEMO_GROUND_ALTITUDE_M
    for hx, hy, hr in holes:
        z[(x - hx) ** 2 + (y - hy) ** 2 < hr ** 2] = nodata
    with rasterio.open(path, "w", driver="GTiff", width=size, height=size, count=1,
                       dtype="float32", crs=crs,
                       transform=Affine(res, 0.0, west, 0.0, -res, north),
                       nodata=nodata) as dst:
        dst.write(z.reshape(size, size).astype(np.float32), 1)
