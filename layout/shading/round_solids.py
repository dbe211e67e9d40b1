"""Exact ray tests of round solids: vertical cylinders, tree trunks and tree crowns.

Method
------
* :class:`~layout.scene.obstructions.Cylinder` and a tree trunk: ray against a vertical circular
  cylinder (a quadratic in plan) intersected with the slab between base and top.
* Tree crowns: ray against the spheroid (a sphere after scaling z) or the solid cone (a
  quadratic cone inequality intersected with the slab between crown base and apex).

A tree with a spheroid crown also has kernels (:func:`_tree_kernels`) that tabulate the
per-point and per-step terms once; a cone crown's kernels (:func:`_cone_tree_kernels`) run the
direct tests on the candidate pairs, so that its crown and trunk are culled apart.
"""

from __future__ import annotations

import numpy as np

from ..scene.obstructions import Tree
from .rays import _slab


def _hit_vertical_cylinder(cx, cy, radius, base, top, o, d, start) -> np.ndarray:
    """Exact ray vs closed finite vertical cylinder."""
    fx, fy = o[:, 0] - cx, o[:, 1] - cy
    a = d[:, 0] ** 2 + d[:, 1] ** 2
    b = fx * d[:, 0] + fy * d[:, 1]
    c = fx * fx + fy * fy - radius * radius
    disc = b * b - a * c
    vertical = a <= 1e-24
    root = np.sqrt(np.maximum(disc, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        s1 = np.where(vertical, np.where(c <= 0, -np.inf, np.inf), (-b - root) / a)
        s2 = np.where(vertical, np.where(c <= 0, np.inf, -np.inf), (-b + root) / a)
    s2 = np.where(~vertical & (disc < 0), -np.inf, s2)
    z_in, z_out = _slab(o[:, 2], d[:, 2], base, top)
    return np.maximum(np.maximum(s1, z_in), start) <= np.minimum(s2, z_out)


def _hit_spheroid(cx, cy, cz, radius, semi_z, o, d, start) -> np.ndarray:
    """Exact ray vs closed spheroid, by scaling it to the unit sphere."""
    scale = np.array([radius, radius, semi_z])
    f = (o - np.array([cx, cy, cz])) / scale
    g = d / scale
    a = np.einsum("ij,ij->i", g, g)
    b = np.einsum("ij,ij->i", f, g)
    c = np.einsum("ij,ij->i", f, f) - 1.0
    disc = b * b - a * c
    root = np.sqrt(np.maximum(disc, 0.0))
    s2 = (-b + root) / a
    s1 = (-b - root) / a
    return (disc >= 0) & (np.maximum(s1, start) <= s2)


def _hit_cone(cx, cy, radius, base, apex, o, d, start) -> np.ndarray:
    """Exact ray vs closed solid cone: base disc of ``radius`` at ``base``, apex at ``apex``."""
    k2 = (radius / (apex - base)) ** 2
    fx, fy, fz = o[:, 0] - cx, o[:, 1] - cy, o[:, 2] - apex
    dx, dy, dz = d[:, 0], d[:, 1], d[:, 2]
    # inside the double cone:  A s² + 2 B s + C <= 0
    qa = dx * dx + dy * dy - k2 * dz * dz
    qb = fx * dx + fy * dy - k2 * fz * dz
    qc = fx * fx + fy * fy - k2 * fz * fz
    lo, hi = _slab(o[:, 2], dz, base, apex)
    lo = np.maximum(lo, start)
    scale = dx * dx + dy * dy + k2 * dz * dz
    linear = np.abs(qa) <= 1e-12 * scale
    disc = qb * qb - qa * qc
    root = np.sqrt(np.maximum(disc, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        r1 = (-qb - root) / qa
        r2 = (-qb + root) / qa
        s_lin = -qc / (2 * qb)
    small, big = np.minimum(r1, r2), np.maximum(r1, r2)
    # A > 0: one interval [small, big] when the roots are real
    hit_pos = (disc >= 0) & (np.maximum(lo, small) <= np.minimum(hi, big))
    # A < 0: (-inf, small] U [big, inf), or every s when there is no real root
    hit_neg = (disc < 0) | (lo <= np.minimum(hi, small)) | (np.maximum(lo, big) <= hi)
    # A = 0: a half line (or all / nothing)
    hit_lin = np.where(qb > 0, lo <= np.minimum(hi, s_lin),
                       np.where(qb < 0, np.maximum(lo, s_lin) <= hi, qc <= 0))
    hit = np.where(linear, hit_lin, np.where(qa > 0, hit_pos, hit_neg))
    return hit & (lo <= hi)


def _tree_kernels(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build faster exact kernels for a spheroid tree's crown and trunk, or None.

    Returns ``(crown, trunk)``: ``crown(p, st)`` and ``trunk(p, st)`` give, for (point, step)
    index pairs, whether the ray meets the crown, resp. the trunk (same tests as
    :func:`_hit_spheroid` and :func:`_hit_vertical_cylinder`, with the per-point and per-step
    parts tabulated once); ``trunk`` is None for a tree without one (``crown_base`` 0).
    Applies to a spheroid crown when every step has the sun above the horizon and off the
    zenith; otherwise None.
    """
    horizontal = sun_v[:, 0] ** 2 + sun_v[:, 1] ** 2
    if tree.crown_shape != "spheroid" or (sun_v[:, 2] <= 0).any() or (horizontal <= 1e-24).any():
        return None
    cx, cy = tree.center
    # crown: the spheroid scaled to the unit sphere
    scale = np.array([tree.crown_radius, tree.crown_radius, tree.crown_semi_axis_z])
    f = (pts - np.array([cx, cy, tree.crown_center_z])) / scale  # (N, 3)
    g = sun_v / scale  # (T, 3)
    fx, fy, fz = f.T.copy()
    gx, gy, gz = g.T.copy()
    ga = np.einsum("ij,ij->i", g, g)
    fc = np.einsum("ij,ij->i", f, f) - 1.0
    # Every point at least 2 ray starts outside the crown (scaled): the two roots of a ray
    # have one sign, that of -b, and the far one is at least sqrt(c / a) >= 2 start, so a
    # ray meets the crown exactly when b < 0 and the discriminant is not negative.
    outside = bool((fc >= 4.0 * float(ga.max()) * start * start).all()) if len(fc) else True

    def crown(p, st):
        take = np.take  # faster than fancy indexing, the same values
        a = take(ga, st)
        b = take(fx, p) * take(gx, st)
        b += take(fy, p) * take(gy, st)
        b += take(fz, p) * take(gz, st)
        c = take(fc, p)
        if outside:
            hit = b * b >= a * c
            hit &= b < 0
            return hit
        disc = b * b - a * c
        hit = disc >= 0
        hit &= (-b + np.sqrt(np.maximum(disc, 0.0))) >= start * a
        return hit

    if tree.crown_base <= 0:
        return crown, None
    return crown, _trunk_kernel(tree, pts, sun_v, start)


def _tree_kernel(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build a faster exact kernel for a whole tree over (point, step) index pairs, or None.

    Returns ``(opaque, crown_only)`` per pair, as
    :func:`~layout.shading.ray_tests._ray_effect` does; see :func:`_tree_kernels` for when it
    applies.
    """
    kernels = _tree_kernels(tree, pts, sun_v, start)
    if kernels is None:
        return None
    crown_kernel, trunk_kernel = kernels

    def kernel(p, st):
        crown = crown_kernel(p, st)
        if trunk_kernel is None:
            return np.zeros(len(p), dtype=bool), crown
        trunk = trunk_kernel(p, st)
        return trunk, crown & ~trunk

    return kernel



def _cone_kernel(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build the cone crown test (:func:`_hit_cone`) over (point, step) pairs, tabulated.

    Every term that depends only on the point or only on the step is computed once, in the
    same operations and order as :func:`_hit_cone`, so each pair gets the same answer bit for
    bit. Needs the sun above the horizon at every step (the slab's entry is then the ray's
    crossing of the crown base).
    """
    (cx, cy), ground = tree.center, tree.ground_m
    base, apex = ground + tree.crown_base, ground + tree.height
    k2 = (tree.crown_radius / (apex - base)) ** 2
    fx, fy, fz = pts[:, 0] - cx, pts[:, 1] - cy, pts[:, 2] - apex
    k2fz = k2 * fz
    qc = fx * fx + fy * fy - k2 * fz * fz
    oz = pts[:, 2].copy()
    dx, dy, dz = sun_v[:, 0].copy(), sun_v[:, 1].copy(), sun_v[:, 2].copy()
    qa = dx * dx + dy * dy - k2 * dz * dz
    scale = dx * dx + dy * dy + k2 * dz * dz
    linear = np.abs(qa) <= 1e-12 * scale
    positive = qa > 0

    def crown(p, st):
        dzs = dz[st]
        lo = np.maximum((base - oz[p]) / dzs, start)
        hi = (apex - oz[p]) / dzs
        qb = fx[p] * dx[st] + fy[p] * dy[st] - k2fz[p] * dzs
        a = qa[st]
        disc = qb * qb - a * qc[p]
        root = np.sqrt(np.maximum(disc, 0.0))
        with np.errstate(divide="ignore", invalid="ignore"):
            r1 = (-qb - root) / a  # the smaller root when a > 0, the larger when a < 0
            r2 = (-qb + root) / a
        pos = positive[st]
        small, big = np.where(pos, r1, r2), np.where(pos, r2, r1)
        hit_pos = (disc >= 0) & (np.maximum(lo, small) <= np.minimum(hi, big))
        hit_neg = (disc < 0) | (lo <= np.minimum(hi, small)) | (np.maximum(lo, big) <= hi)
        hit = np.where(pos, hit_pos, hit_neg)
        flat = linear[st]
        if flat.any():  # a ray parallel to the cone's side: the direct test's half line
            hit[flat] = _hit_cone(cx, cy, tree.crown_radius, base, apex, pts[p[flat]],
                                  sun_v[st[flat]], start)
        return hit & (lo <= hi)

    return crown


def _trunk_kernel(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build the trunk test (:func:`_hit_vertical_cylinder`) over (point, step) pairs, tabulated.

    Needs the sun above the horizon and off the zenith at every step.
    """
    cx, cy = tree.center
    horizontal = sun_v[:, 0] ** 2 + sun_v[:, 1] ** 2
    tx, ty = pts[:, 0] - cx, pts[:, 1] - cy
    tc = tx * tx + ty * ty - tree.trunk_radius ** 2
    dx, dy = sun_v[:, 0].copy(), sun_v[:, 1].copy()
    inv_dz = 1.0 / sun_v[:, 2]
    below = tree.ground_m - pts[:, 2]
    above = tree.ground_m + tree.crown_base - pts[:, 2]

    def trunk(p, st):
        a2 = horizontal[st]
        b2 = tx[p] * dx[st] + ty[p] * dy[st]
        disc2 = b2 * b2 - a2 * tc[p]
        root = np.sqrt(np.maximum(disc2, 0.0))
        inv_z = inv_dz[st]
        lo = np.maximum(np.maximum((-b2 - root) / a2, below[p] * inv_z), start)
        hi = np.minimum((-b2 + root) / a2, above[p] * inv_z)
        return (disc2 >= 0) & (lo <= hi)

    return trunk


def _cone_tree_kernels(tree: Tree, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build faster exact kernels for a cone tree's crown and trunk, or None.

    Returns ``(crown, trunk)`` as :func:`_tree_kernels` does: the cone crown tabulated
    (:func:`_cone_kernel`, the same answers as :func:`_hit_cone` bit for bit) and the trunk
    as in :func:`_tree_kernels`. Applies to a cone crown when every step has the sun above
    the horizon and off the zenith; otherwise None.
    """
    horizontal = sun_v[:, 0] ** 2 + sun_v[:, 1] ** 2
    if tree.crown_shape != "cone" or (sun_v[:, 2] <= 0).any() or (horizontal <= 1e-24).any():
        return None
    crown = _cone_kernel(tree, pts, sun_v, start)
    return crown, (_trunk_kernel(tree, pts, sun_v, start) if tree.crown_base > 0 else None)
