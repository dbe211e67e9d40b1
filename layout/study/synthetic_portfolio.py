"""Invented portfolios for tests and benchmarks: seeded houses with roofs, chimneys and trees.

Each project is a scenario of our own (random sizes, pitches, sites); nothing here describes a
real building. :func:`write_synthetic_portfolio` saves them as project files, the input of
:func:`layout.study.portfolio.run_portfolio`.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..errors import InputError, check_whole
from ..project import FILE_SUFFIX

__all__ = ["synthetic_portfolio", "write_synthetic_portfolio"]


def synthetic_portfolio(n_projects: int, *, seed: int = 0, n_sites: int | None = None,
                        size_m: tuple[float, float] = (8.0, 16.0), step_minutes: int = 60,
                        sky_directions: int = 256) -> list:
    """Make a seeded portfolio of invented projects for tests and benchmarks.

    Each project is one building with a gable or hip roof (random size, pitch, eave height and
    compass rotation), a chimney on half of them, zero to three trees around it (evergreen or
    deciduous), IFC 2021 residential setbacks and a generic 60-cell 400 W module. The sites are
    spread over latitudes 50° S to 60° N (several projects share each site) with a fixed UTC
    offset from their longitude. Clear sky at ``step_minutes``.

    Parameters
    ----------
    n_projects : int
        Number of projects, at least 1.
    seed : int, keyword-only, default 0
        Seed of the random generator; the same seed gives the same portfolio.
    n_sites : int, keyword-only, optional
        Number of distinct sites; default about one per ten projects.
    size_m : (float, float), keyword-only, default (8, 16)
        Range of the footprint's longer side [m]; the shorter side is 0.55 to 0.8 of it.
    step_minutes : int, keyword-only, default 60
        Clear-sky time step [minutes].
    sky_directions : int, keyword-only, default 256
        Directions of the sky-view integral.

    Returns
    -------
    list of layout.project.Project
    """
    from ..fill.rules import ifc_2021_residential
    from ..power.energy import EnergyOptions
    from ..project import Project
    from ..scene.building import gable_roof, hip_roof
    from ..scene.modules import generic_60_cell
    from ..scene.obstructions import Block, Tree
    from ..scene.site import Site

    check_whole("n_projects", n_projects, 1, problem="must be a whole number of at least 1")
    low, high = (float(v) for v in size_m)
    if not 4.0 <= low <= high <= 60.0:
        raise InputError("size_m", "is not a valid range", value=size_m,
                         allowed="low <= high, from 4 to 60 m")
    rng = np.random.default_rng(seed)
    count = n_sites or max(1, round(n_projects / 10))
    sites = []
    for k in range(count):
        latitude = float(np.round(rng.uniform(-50.0, 60.0), 3))
        longitude = float(np.round(rng.uniform(-170.0, 170.0), 3))
        hours = int(np.clip(round(longitude / 15.0), -12, 12))
        sites.append(Site(latitude, longitude, f"UTC{hours:+03d}:00",
                          altitude_m=float(np.round(rng.uniform(0.0, 1500.0))),
                          name=f"synthetic site {k}"))
    module = generic_60_cell(400.0)
    rules = ifc_2021_residential()
    energy = EnergyOptions(step_minutes=step_minutes, sky_directions=sky_directions)
    projects = []
    for n in range(n_projects):
        site = sites[int(rng.integers(count))]
        length = float(np.round(rng.uniform(low, high), 2))
        width = float(np.round(length * rng.uniform(0.55, 0.8), 2))
        pitch = float(np.round(rng.uniform(15.0, 40.0), 1))
        eave = float(np.round(rng.uniform(2.6, 6.5), 2))
        rotation = float(np.round(rng.uniform(0.0, 360.0), 1))
        builder = gable_roof if rng.random() < 0.6 else hip_roof
        building = builder(length, width, pitch, eave, rotation_deg=rotation, name="house")
        obstructions = []
        if rng.random() < 0.5:
            face = building.faces[int(rng.integers(len(building.faces)))]
            centre = _point_inside(face.plan_polygon, rng, margin=0.6)
            if centre is not None:
                roof_z = float(face.height_at(np.array([centre]))[0])
                half = 0.3
                x, y = centre
                obstructions.append(Block(
                    ((x - half, y - half), (x + half, y - half), (x + half, y + half),
                     (x - half, y + half)),
                    top=float(np.round(roof_z + rng.uniform(0.6, 1.5), 2)),
                    kind="chimney", name="chimney"))
        middle = np.asarray(building.footprint.centroid.coords[0])
        reach = 0.5 * math.hypot(length, width)
        hemisphere = "north" if site.latitude >= 0 else "south"
        for t in range(int(rng.integers(0, 4))):
            bearing = math.radians(rng.uniform(0.0, 360.0))
            distance = reach + rng.uniform(2.0, 12.0)
            centre = tuple(float(v) for v in np.round(
                middle + distance * np.array([math.sin(bearing), math.cos(bearing)]), 2))
            height = float(np.round(rng.uniform(5.0, 18.0), 1))
            crown = float(np.round(rng.uniform(1.5, 4.0), 1))
            base = float(np.round(rng.uniform(1.5, min(4.0, height - 2.0)), 1))
            if rng.random() < 0.5:
                tree = Tree.deciduous(centre, height, crown, base, hemisphere=hemisphere,
                                      name=f"tree {t}")
            else:
                tree = Tree(centre, height, crown, base, name=f"tree {t}")
            obstructions.append(tree)
        projects.append(Project(site=site, buildings=(building,), module=module,
                                clearance=rules, obstructions=tuple(obstructions),
                                energy=energy, name=f"synthetic {n:05d}"))
    return projects


def _point_inside(polygon, rng, *, margin: float):
    """Return a random point at least ``margin`` [m] inside ``polygon``, or None."""
    inner = polygon.buffer(-margin)
    if inner.is_empty:
        return None
    x0, y0, x1, y1 = inner.bounds
    import shapely

    for _ in range(100):
        x, y = rng.uniform(x0, x1), rng.uniform(y0, y1)
        if shapely.contains_xy(inner, x, y):
            return (float(np.round(x, 3)), float(np.round(y, 3)))
    return None


def write_synthetic_portfolio(folder, n_projects: int, *, seed: int = 0,
                              **options) -> list[Path]:
    """Save :func:`synthetic_portfolio` projects as ``synthetic-NNNNN.eaveline.json`` files.

    Parameters
    ----------
    folder : str or os.PathLike
        Where to write (created if missing).
    n_projects : int
    seed : int, keyword-only, default 0
    **options
        Passed to :func:`synthetic_portfolio`.

    Returns
    -------
    list of pathlib.Path
        The files written, in project order.
    """
    from ..project import save_project

    folder = Path(folder)
    return [save_project(project, folder / f"synthetic-{n:05d}{FILE_SUFFIX}")
            for n, project in enumerate(synthetic_portfolio(n_projects, seed=seed, **options))]
