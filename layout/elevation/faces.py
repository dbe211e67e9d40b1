"""Roof faces from fitted planes: outlines bounded by the footprint and the neighbouring planes.

Two neighbouring planes of a roof meet along the line where their heights are equal; that
line, seen from above, is the edge between the two faces. Where the roof turns down across
the edge (a ridge or a hip), each face is the part of the footprint where its own plane is the
lower of the two; where it turns up (a valley), the higher. So each face's outline is the
footprint cut by one half-plane per neighbour, exact wherever the planes are, whatever the
scatter of the points near the edge. Neighbours are the planes whose points come within a few
point spacings of each other.

Edge kinds come from the neighbours: an edge shared with a neighbour is a ridge when it is
level and at the top of the face, a hip when it rises across a convex turn, a valley across a
concave one; an edge on the footprint is an eave when it is level at the bottom of the face
and a rake otherwise. They are written as the face's edge overrides, so the planner shows them
as set and the user can change any of them.
"""

from __future__ import annotations

import math

import numpy as np
import shapely
from scipy.spatial import cKDTree

from ..errors import InputError
from ..scene.building import Building, compass_name
from ..scene.roof import RoofFace
from .planes import Plane

__all__ = ["faces_from_planes", "level_eaves", "neighbour_pairs"]

#: An edge within this angle of level counts as level (eave, ridge) [degrees]; wider than the
#: roof model's 1° since fitted planes carry a few tenths of a degree of error.
LEVEL_TOL_DEG = 5.0
#: Points of two planes closer than this many point spacings make them neighbours.
NEIGHBOUR_SPACINGS = 3.0


def neighbour_pairs(x, y, labels, *, spacing_m: float) -> set[tuple[int, int]]:
    """Pairs ``(i, j)``, ``i < j``, of plane labels whose points come close in plan."""
    keep = labels >= 0
    pts = np.column_stack([x[keep], y[keep]])
    lab = labels[keep]
    tree = cKDTree(pts)
    pairs = tree.query_pairs(NEIGHBOUR_SPACINGS * spacing_m, output_type="ndarray")
    a, b = lab[pairs[:, 0]], lab[pairs[:, 1]]
    differ = a != b
    lo, hi = np.minimum(a, b)[differ], np.maximum(a, b)[differ]
    counts: dict[tuple[int, int], int] = {}
    for i, j in zip(lo.tolist(), hi.tolist(), strict=True):
        counts[(i, j)] = counts.get((i, j), 0) + 1
    return {pair for pair, n in counts.items() if n >= 3}


def _half_plane(p: Plane, q: Plane, below: bool, box: shapely.Polygon) -> shapely.Geometry:
    """Part of ``box`` where plane ``p`` is below (or above) plane ``q``."""
    xmin, ymin, xmax, ymax = box.bounds
    # p(x, y) - q(x, y) = a x + b y + c, linear; clip the box by a x + b y + c <= 0
    def diff(x, y):
        return p.height_at(x, y) - q.height_at(x, y)

    c0 = float(diff(0.0, 0.0))
    a = float(diff(1.0, 0.0)) - c0
    b = float(diff(0.0, 1.0)) - c0
    if not below:
        a, b, c0 = -a, -b, -c0
    norm = math.hypot(a, b)
    if norm < 1e-9:
        return box if c0 <= 0 else shapely.Polygon()
    # a rectangle on the kept side of the line, large enough to hold the box
    size = 4.0 * max(xmax - xmin, ymax - ymin, 1.0) + math.hypot(xmin, ymin) + math.hypot(xmax,
                                                                                        ymax)
    nx, ny = a / norm, b / norm
    px, py = -nx * c0 / norm, -ny * c0 / norm  # the point of the line nearest the origin
    tx, ty = -ny, nx
    corners = [(px + tx * size, py + ty * size), (px - tx * size, py - ty * size),
               (px - tx * size - nx * size, py - ty * size - ny * size),
               (px + tx * size - nx * size, py + ty * size - ny * size)]
    return shapely.intersection(box, shapely.Polygon(corners))


def _largest(geom) -> shapely.Polygon | None:
    polys = [g for g in getattr(geom, "geoms", [geom]) if isinstance(g, shapely.Polygon)
             and not g.is_empty]
    return max(polys, key=lambda g: g.area) if polys else None


def _edge_kinds(outline, plane: Plane, shared, concave, level_tol_deg: float):
    """Kind of each outline edge from the neighbours: shared → ridge/hip/valley."""
    pts = np.asarray(outline)
    z = plane.height_at(pts[:, 0], pts[:, 1])
    z_low, z_high = float(z.min()), float(z.max())
    kinds = []
    for i in range(len(pts)):
        j = (i + 1) % len(pts)
        run = math.hypot(*(pts[j] - pts[i]))
        rise = abs(z[j] - z[i])
        level = math.degrees(math.atan2(rise, max(run, 1e-9))) <= level_tol_deg
        mid_z = (z[i] + z[j]) / 2
        if shared[i]:
            if concave[i]:
                kinds.append("valley")
            elif level and mid_z > (z_low + z_high) / 2:
                kinds.append("ridge")
            else:
                kinds.append("hip")
        elif level and mid_z < (z_low + z_high) / 2:
            kinds.append("eave")
        elif level and z_high - z_low > 0.05:
            kinds.append("ridge")  # the top of a shed face against nothing: a free ridge
        elif level:
            kinds.append("eave")
        else:
            kinds.append("rake")
    return tuple(kinds)


def faces_from_planes(planes, labels, x, y, z, footprint, *, spacing_m: float,
                      name: str = "building") -> Building:
    """Turn the planes of one roof into a :class:`Building` of :class:`RoofFace`.

    Parameters
    ----------
    planes : list of Plane
        Planes of one roof, heights above the site's ground [m].
    labels : numpy.ndarray of int
        Plane index per point, -1 for none.
    x, y, z : numpy.ndarray
        The roof points [m] (z above the site's ground).
    footprint : shapely.Polygon
        The building's plan outline [m].
    spacing_m : float
        Mean spacing of the points [m].
    name : str
        Building name; faces are named after their compass direction.

    Returns
    -------
    Building

    Raises
    ------
    InputError
        When no plane gives a face inside the footprint.
    """
    pairs = neighbour_pairs(x, y, labels, spacing_m=spacing_m)
    box = footprint.envelope.buffer(1.0)
    polygons: list[shapely.Polygon | None] = []
    relation: dict[tuple[int, int], bool] = {}  # (i, j) -> concave
    for i, p in enumerate(planes):
        region = footprint
        mine = labels == i
        for j, q in enumerate(planes):
            if i == j or (min(i, j), max(i, j)) not in pairs:
                continue
            # convex (ridge, hip): my points lie where my plane is below the other's
            below = float(np.median(p.height_at(x[mine], y[mine])
                                    - q.height_at(x[mine], y[mine]))) <= 0
            relation[(i, j)] = not below
            region = shapely.intersection(region, _half_plane(p, q, below, box))
        poly = _largest(region)
        polygons.append(poly)
    # no two faces over the same ground: a later (smaller) plane gives way
    taken = shapely.Polygon()
    faces = []
    used_names: dict[str, int] = {}
    for i, (p, poly) in enumerate(zip(planes, polygons, strict=True)):
        if poly is None:
            continue
        # 0.1 mm grid: overlays of faces that share edges stay robust
        poly = shapely.set_precision(poly.simplify(0.05), 1e-4)
        if shapely.intersection(poly, taken).area > 0.01 * poly.area:
            poly = _largest(shapely.set_precision(shapely.difference(poly, taken), 1e-4))
        if poly is None or poly.area < 0.5:
            continue
        poly = shapely.orient_polygons(poly)
        taken = shapely.union(taken, poly, grid_size=1e-4)
        outline = list(poly.exterior.coords)[:-1]
        shared, concave = [], []
        for k in range(len(outline)):
            a, b = np.asarray(outline[k]), np.asarray(outline[(k + 1) % len(outline)])
            mid = (a + b) / 2
            on_rim = footprint.exterior.distance(shapely.Point(mid)) < 0.05
            neighbour = None
            if not on_rim:
                diffs = [(abs(float(p.height_at(*mid) - planes[j].height_at(*mid))), j)
                         for j in range(len(planes)) if j != i and (i, j) in relation]
                neighbour = min(diffs)[1] if diffs else None
            shared.append(neighbour is not None)
            concave.append(bool(neighbour is not None and relation[(i, neighbour)]))
        kinds = _edge_kinds(outline, p, shared, concave, LEVEL_TOL_DEG)
        zs = p.height_at(np.array([c[0] for c in outline]), np.array([c[1] for c in outline]))
        eave = max(0.0, float(np.min(zs)))
        label = compass_name(p.azimuth_deg) if p.pitch_deg >= 2.0 else "flat"
        used_names[label] = used_names.get(label, 0) + 1
        if used_names[label] > 1:
            label = f"{label} {used_names[label]}"
        faces.append(RoofFace(outline, round(p.pitch_deg, 6), round(p.azimuth_deg, 6) % 360.0,
                              eave, name=f"{name} {label}", edge_overrides=kinds))
    if not faces:
        raise InputError("points", "no roof face could be fitted inside the footprint",
                         value=name)
    return Building(tuple(faces), name=name)


def level_eaves(footprint: shapely.Polygon, planes, *, tolerance_m: float = 0.25,
                min_pitch_deg: float = 5.0) -> shapely.Polygon:
    """Move the eave sides of a rectangular footprint found from points to one eave level.

    Each side of a footprint traced from points carries the sampling error of the points near
    it. Where two or more sides are eaves (the face over them slopes down across them) and
    their heights agree within ``tolerance_m``, they are taken to be at one level, as the
    eaves of most houses are (common practice): the level is their mean, and each eave side
    moves out or in until its face's plane reaches that level there. The mean of several
    sides' heights carries less error than any one side, and the faces' planes are known far
    better than the points' extent. Rakes and sides of a level face are left where they are.

    Parameters
    ----------
    footprint : shapely.Polygon
        A rectangle (four corners) [m].
    planes : sequence of Plane
        The roof's planes (heights above the site's ground).
    tolerance_m : float, default 0.25
        Largest spread of the eave heights taken as one level [m].
    min_pitch_deg : float, default 5
        Faces flatter than this have no eave to level.

    Returns
    -------
    shapely.Polygon
        The footprint with its eave sides moved; the one given when there is nothing to do.
    """
    corners = np.asarray(footprint.exterior.coords)[:-1]
    if len(corners) != 4 or not planes:
        return footprint
    centre = corners.mean(axis=0)
    sides = []
    for k in range(4):
        a, b = corners[k], corners[(k + 1) % 4]
        along = (b - a) / np.linalg.norm(b - a)
        normal = np.array([along[1], -along[0]])
        mid = (a + b) / 2
        if normal @ (mid - centre) < 0:
            normal = -normal
        probe = mid - 0.5 * normal  # just inside: the face over this side
        plane = min(planes, key=lambda p: float(p.height_at(*probe)))
        grad = -np.array(plane.normal[:2]) / plane.normal[2]  # dz/dx, dz/dy
        descent = -float(grad @ normal)  # height lost per metre outward
        eave = (plane.pitch_deg >= min_pitch_deg
                and descent >= 0.95 * float(np.hypot(*grad)))
        sides.append((a, along, normal, float(plane.height_at(*mid)), descent, eave))
    levels = [s[3] for s in sides if s[5]]
    if len(levels) < 2 or max(levels) - min(levels) > tolerance_m:
        return footprint
    level = float(np.mean(levels))
    lines = []
    for a, along, normal, height, descent, eave in sides:
        shift = (height - level) / descent if eave else 0.0
        lines.append((a + shift * normal, along))
    out = []
    for k in range(4):
        (p, d), (q, e) = lines[k - 1], lines[k]
        # corner k: where side k-1 meets side k
        t = np.linalg.solve(np.column_stack([d, -e]), q - p)
        out.append(tuple(map(float, p + t[0] * d)))
    return shapely.orient_polygons(shapely.Polygon(out))
