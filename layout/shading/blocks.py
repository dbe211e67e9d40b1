"""Exact ray test of a block: a prism over a plan footprint between two heights.

Method
------
:class:`~layout.scene.obstructions.Block`: the footprint is split into convex parts (the footprint
itself if convex, otherwise a constrained Delaunay triangulation; :mod:`layout.shading.convex`);
each part with the two horizontal planes is a convex polyhedron, clipped against the ray by the
Cyrus-Beck method [1]. :func:`_hit_block` tests rays one by one, array-wide;
:func:`_block_kernel` is the same test with the terms that depend only on the point or only on
the sun step tabulated once, for the many (point, step) pairs of a sun path.

References
----------
.. [1] M. Cyrus and J. Beck, "Generalized two- and three-dimensional clipping", Computers &
   Graphics 3(1):23-28, 1978.
"""

from __future__ import annotations

import functools

import numpy as np

from ..scene.obstructions import Block
from .convex import _convex_parts
from .rays import _slab


@functools.lru_cache(maxsize=4096)
def _block_planes(block: Block) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of the footprint's convex parts."""
    return _convex_parts(block.footprint_polygon)


def _hit_block(block: Block, o: np.ndarray, d: np.ndarray, start: float) -> np.ndarray:
    """Exact ray vs closed prism, Cyrus-Beck clipping per convex part [1]."""
    normal, offset = _block_planes(block)
    s_in, s_out = _slab(o[:, 2], d[:, 2], block.base, block.top)
    s_in = np.maximum(s_in, start)
    # (M, P, K): inside the half-plane n·x <= c  <=>  s (n·d) <= c - n·o
    denom = d[:, None, None, 0] * normal[None, ..., 0] + d[:, None, None, 1] * normal[None, ..., 1]
    num = offset[None] - (o[:, None, None, 0] * normal[None, ..., 0]
                          + o[:, None, None, 1] * normal[None, ..., 1])
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = num / denom
    lower = np.where(denom < 0, ratio, np.where((denom == 0) & (num < 0), np.inf, -np.inf))
    upper = np.where(denom > 0, ratio, np.inf)
    lo = np.maximum(lower.max(axis=2), s_in[:, None])
    hi = np.minimum(upper.min(axis=2), s_out[:, None])
    return (lo <= hi).any(axis=1)


def _block_kernel(block: Block, pts: np.ndarray, sun_v: np.ndarray, start: float):
    """Build a faster exact kernel for a block over (point, step) index pairs, or None.

    Same test as :func:`_hit_block`, with everything that depends only on the point or only
    on the sun step computed once into per-edge tables, so a pair costs per edge a few
    gathers, two multiplications and a running max/min (``fmax``/``fmin`` skip the NaN that
    marks an edge the ray leaves, resp. enters, through). Applies when every step has the sun
    above the horizon and no sun direction is parallel to a footprint edge (the general case
    of a sun path); otherwise None, and the caller uses :func:`_hit_block`.
    """
    normal, offset = _block_planes(block)
    # n · d and n · p term by term (as _hit_block sums them; einsum gives the same sums,
    # slower on these small contractions)
    den = normal[..., 0, None] * sun_v[:, 0] + normal[..., 1, None] * sun_v[:, 1]  # (P, K, T)
    if (sun_v[:, 2] <= 0).any() or (den == 0).any():
        return None
    with np.errstate(divide="ignore"):
        inv = 1.0 / den
    inv_enter = np.where(den < 0, inv, np.nan)  # the ray enters the half-plane: lower bound
    inv_leave = np.where(den > 0, inv, np.nan)  # it leaves: upper bound
    room = offset[..., None] - (normal[..., 0, None] * pts[:, 0]
                                + normal[..., 1, None] * pts[:, 1])  # (P, K, N)
    inv_dz = 1.0 / sun_v[:, 2]
    below = block.base - pts[:, 2]
    above = block.top - pts[:, 2]
    n_parts, n_edges = offset.shape

    def kernel(p, st):
        # the same operations as above, in place (np.take, out=): fewer temporaries
        inv_z = inv_dz.take(st)
        s_in = below.take(p)
        s_in *= inv_z
        np.maximum(s_in, start, out=s_in)
        s_out = above.take(p)
        s_out *= inv_z
        hit = np.zeros(len(p), dtype=bool)
        term = np.empty(len(p))
        for i in range(n_parts):
            lo, hi = (s_in, s_out) if n_parts == 1 else (s_in.copy(), s_out.copy())
            for k in range(n_edges):
                r = room[i, k].take(p)
                np.multiply(r, inv_enter[i, k].take(st), out=term)
                np.fmax(lo, term, out=lo)
                np.multiply(r, inv_leave[i, k].take(st), out=term)
                np.fmin(hi, term, out=hi)
            hit |= lo <= hi
        return hit, np.zeros(len(p), dtype=bool)

    return kernel
