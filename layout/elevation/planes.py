"""Planar roof faces in a cloud of roof points: RANSAC, then a least-squares fit per plane.

A roof is a few planes; a point cloud of it is those planes plus noise, chimneys and the odd
stray return. Planes are taken out one at a time, the best-supported first, by RANSAC
(Fischler & Bolles 1981): many candidate planes through three points each (the second and
third drawn near the first, since a face is a compact patch), the one with the most points
within ``tolerance_m`` wins. Its inliers are then refitted by orthogonal least squares
(the plane through their centroid normal to the direction of least spread: the smallest
singular vector of the centred points) and split into connected patches, so that two faces
of the same slope on either side of a ridge are never taken for one. A patch smaller than
``min_area_m2`` ends the search; what is left (chimneys, vents, strays) goes back to the
caller.

Own RANSAC with numpy rather than a library: Open3D's ``segment_plane`` does the same
sampling but is a 400 MB wheel, and scikit-learn's ``RANSACRegressor`` fits z on (x, y)
(vertical residuals) without the connectivity split; a few hundred candidates over a few
thousand roof points cost milliseconds.

References
----------
.. [1] Fischler, M. A., Bolles, R. C. (1981). Random sample consensus: a paradigm for model
   fitting with applications to image analysis and automated cartography. Communications of
   the ACM 24(6), 381-395.
.. [2] Golub, G. H., Van Loan, C. F. (2013). Matrix Computations, 4th ed., section 6.3
   (total least squares through the singular value decomposition).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree

from ..errors import InputError

__all__ = ["Plane", "fit_plane", "segment_planes"]


@dataclass(frozen=True)
class Plane:
    """A plane fitted to points: ``normal · (p - centroid) = 0``, normal pointing up.

    Parameters
    ----------
    normal : tuple of 3 float
        Upward unit normal (x east, y north, z up).
    centroid : tuple of 3 float
        A point of the plane: the centroid of its points [m].
    rms_m : float
        Root-mean-square distance of its points from the plane [m].
    count : int
        Number of points.
    """

    normal: tuple[float, float, float]
    centroid: tuple[float, float, float]
    rms_m: float
    count: int

    @property
    def pitch_deg(self) -> float:
        """Slope from horizontal [degrees]."""
        return math.degrees(math.acos(min(1.0, abs(self.normal[2]))))

    @property
    def azimuth_deg(self) -> float:
        """Compass direction the slope faces (downhill), clockwise from north [degrees].

        The upward normal leans toward the downhill side, so its plan part points downhill.
        A level plane gives 180.
        """
        nx, ny = self.normal[0], self.normal[1]
        if math.hypot(nx, ny) < 1e-9:
            return 180.0
        return math.degrees(math.atan2(nx, ny)) % 360.0

    def height_at(self, x, y) -> np.ndarray:
        """Height of the plane over plan points [m]."""
        nx, ny, nz = self.normal
        cx, cy, cz = self.centroid
        return cz - (nx * (np.asarray(x) - cx) + ny * (np.asarray(y) - cy)) / nz

    def distance(self, x, y, z) -> np.ndarray:
        """Signed distance of points from the plane, positive above [m]."""
        n = self.normal
        c = self.centroid
        return n[0] * (x - c[0]) + n[1] * (y - c[1]) + n[2] * (z - c[2])


def fit_plane(x, y, z) -> Plane:
    """Fit a plane to points by orthogonal (total) least squares.

    Parameters
    ----------
    x, y, z : array_like
        At least 3 points not on one line [m].

    Returns
    -------
    Plane

    Raises
    ------
    InputError
        Fewer than 3 points, or a vertical plane (a wall, not a roof).

    References
    ----------
    .. [1] Golub & Van Loan (2013), Matrix Computations, section 6.3.
    """
    pts = np.column_stack([np.asarray(x, float), np.asarray(y, float), np.asarray(z, float)])
    if len(pts) < 3:
        raise InputError("points", "a plane needs at least 3 points", value=len(pts))
    centroid = pts.mean(axis=0)
    centred = pts - centroid
    _, s, vt = np.linalg.svd(centred, full_matrices=False)
    normal = vt[-1]
    if normal[2] < 0:
        normal = -normal
    if normal[2] < 1e-6:
        raise InputError("points", "the points lie in a vertical plane, not a roof")
    rms = float(s[-1] / math.sqrt(len(pts)))
    return Plane(tuple(map(float, normal)), tuple(map(float, centroid)), rms, len(pts))


def _candidates(pts, tree, rng, n, reach_m):
    """``n`` candidate planes (normals, offsets) through a seed point and two neighbours."""
    seeds = rng.integers(0, len(pts), n)
    neighbours = tree.query_ball_point(pts[seeds], reach_m)
    counts = np.array([len(near) for near in neighbours])
    ok = counts >= 3
    seeds = seeds[ok]
    picks = [rng.choice(near, 2, replace=False)
             for near, good in zip(neighbours, ok, strict=True) if good]
    if not picks:
        return np.empty((0, 3)), np.empty(0)
    a, b = np.asarray(picks).T
    normals = np.cross(pts[a] - pts[seeds], pts[b] - pts[seeds])
    length = np.linalg.norm(normals, axis=1)
    keep = length > 1e-6
    normals = normals[keep] / length[keep, None]
    normals *= np.where(normals[:, 2] < 0, -1.0, 1.0)[:, None]
    keep = normals[:, 2] >= 0.25  # steeper than 75°: a wall
    normals = normals[keep]
    offsets = np.einsum("ij,ij->i", normals, pts[seeds[length > 1e-6][keep]])
    return normals, offsets


def _largest_patch(pts, link_m):
    """Return the largest connected patch (points closer than ``link_m`` are linked)."""
    tree = cKDTree(pts[:, :2])
    pairs = tree.query_pairs(link_m, output_type="ndarray")
    from scipy.sparse import coo_matrix

    n = len(pts)
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    biggest = np.bincount(labels).argmax()
    return np.flatnonzero(labels == biggest)


def segment_planes(x, y, z, *, tolerance_m: float = 0.15, min_area_m2: float = 4.0,
                   density: float | None = None, iterations: int = 300, seed: int = 0,
                   max_planes: int = 20) -> tuple[list[Plane], np.ndarray]:
    """Split roof points into planes.

    Parameters
    ----------
    x, y, z : array_like
        Roof points, site frame [m].
    tolerance_m : float, default 0.15
        Largest distance of a point from its plane [m]; about three times the vertical noise
        of aerial LiDAR (5 cm, common practice).
    min_area_m2 : float, default 4
        Smallest face, in plan [m²]; smaller patches are left over (chimneys, vents).
    density : float, optional
        Points per m²; measured from the points' plan extent when not given.
    iterations : int, default 300
        RANSAC candidates per plane.
    seed : int, default 0
        Seed of the sampler (the result is reproducible).
    max_planes : int, default 20

    Returns
    -------
    planes : list of Plane
        Largest first.
    labels : numpy.ndarray of int
        Index into ``planes`` per point, -1 for points in no plane.

    References
    ----------
    .. [1] Fischler & Bolles (1981), Commun. ACM 24(6):381 (RANSAC).
    """
    pts = np.column_stack([np.asarray(x, float), np.asarray(y, float), np.asarray(z, float)])
    labels = np.full(len(pts), -1, dtype=int)
    if len(pts) < 3:
        return [], labels
    if density is None:
        span = np.ptp(pts[:, 0]) * np.ptp(pts[:, 1])
        density = len(pts) / max(span, 1.0)
    spacing = 1.0 / math.sqrt(density)
    min_points = max(10, int(min_area_m2 * density * 0.8))
    link = 2.5 * spacing
    rng = np.random.default_rng(seed)
    planes: list[Plane] = []
    free = np.arange(len(pts))
    while len(free) >= min_points and len(planes) < max_planes:
        sub = pts[free]
        tree = cKDTree(sub)
        normals, offsets = _candidates(sub, tree, rng, iterations, max(1.5, 4 * spacing))
        if len(normals) == 0:
            break
        dist = np.abs(sub @ normals.T - offsets)  # (points, candidates)
        best = int(np.argmax((dist <= tolerance_m).sum(axis=0)))
        inliers = np.flatnonzero(dist[:, best] <= tolerance_m)
        for _ in range(3):  # refit on the inliers, then take the inliers of the refit
            if len(inliers) < 3:
                break
            plane = fit_plane(*sub[inliers].T)
            inliers = np.flatnonzero(np.abs(plane.distance(*sub.T)) <= tolerance_m)
        if len(inliers) < min_points:
            break
        patch = inliers[_largest_patch(sub[inliers], link)]
        if len(patch) < min_points:
            break
        plane = fit_plane(*sub[patch].T)
        labels[free[patch]] = len(planes)
        planes.append(plane)
        free = np.delete(free, patch)
    return planes, labels
