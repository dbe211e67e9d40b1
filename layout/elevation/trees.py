"""Individual trees from vegetation points: treetops, crowns, and a Tree for each.

The vegetation points' heights above ground make a canopy height model on a fine grid (the
highest point of each cell, its pits filled, lightly smoothed). Treetops are its local maxima
above ``min_height_m`` that stand highest within half the crown width expected of their
height (the variable window of Popescu & Wynne 2004); each crown is the basin of its treetop
in a marker-controlled watershed of the inverted canopy (scipy's image foresting transform),
so two touching crowns split along the low ground between them. Each crown's points then give its
:class:`~layout.scene.obstructions.Tree`:

- centre: the mean plan position of the crown's points (seen from above, a crown's points
  spread evenly over its disc);
- height: the mean of its three highest points (the apex is sampled within a few centimetres
  at usual densities; one point alone carries the full noise);
- crown radius: for points spread evenly over a disc of radius R, the share within d of the
  centre is d²/R², so R = d_q / √q with d_q the q-quantile of the distances (q = 0.9), which
  stray edge points do not inflate;
- crown base: the third lowest of its points (pulses that went into the crown reach its
  underside near the trunk); with no such return it is taken at a third of the height
  (common practice for broadleaf trees, from memory).

References
----------
.. [1] Popescu, S. C., Wynne, R. H. (2004). Seeing the trees in the forest: using lidar and
   multispectral data fusion with local filtering and variable window size for estimating tree
   height. Photogrammetric Engineering & Remote Sensing 70(5), 589-604 (local maxima of the
   canopy height model).
.. [2] Falcão, A. X., Stolfi, J., Lotufo, R. A. (2004). The image foresting transform:
   theory, algorithms, and applications. IEEE TPAMI 26(1), 19-29
   (``scipy.ndimage.watershed_ift``).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import ndimage

from ..scene.obstructions import Tree

__all__ = ["find_trees"]

#: Lowest tree worth keeping [m]; shrubs below this shade no roof (common practice).
MIN_TREE_HEIGHT_M = 2.0


def crown_width_m(height_m: float) -> float:
    """Return the expected crown width of a broadleaf tree of a given height [m].

    ``CW = 3.09632 + 0.00895 · h²`` for deciduous trees, Popescu & Wynne (2004) (from
    memory); the window of the treetop search.
    """
    return 3.09632 + 0.00895 * height_m * height_m


def find_trees(x, y, height, *, ground_m=None, cell_m: float = 0.5,
               min_height_m: float = MIN_TREE_HEIGHT_M, min_points: int = 10) -> list[Tree]:
    """Find individual trees among vegetation points.

    Parameters
    ----------
    x, y : array_like
        Vegetation points, site frame [m].
    height : array_like
        Their heights above the ground under them [m].
    ground_m : array_like, optional
        Ground under each point above the site's z = 0 [m]; sets each tree's ``ground_m``.
    cell_m : float, default 0.5
        Canopy grid cell [m].
    min_height_m : float, default 2
        Lowest treetop kept [m].
    min_points : int, default 10
        Fewest points a crown needs.

    Returns
    -------
    list of Tree
        Tallest first, named "tree 1", "tree 2", ...

    References
    ----------
    .. [1] Popescu & Wynne (2004), PE&RS 70(5):589 (treetops as local maxima).
    .. [2] Falcão et al. (2004), IEEE TPAMI 26(1):19 (watershed by image foresting transform).
    """
    x, y, h = (np.asarray(a, dtype=float) for a in (x, y, height))
    g = np.zeros_like(x) if ground_m is None else np.asarray(ground_m, dtype=float)
    keep = h > 0.5
    x, y, h, g = x[keep], y[keep], h[keep], g[keep]
    if len(x) < min_points:
        return []
    x0, y0 = float(x.min()) - cell_m, float(y.min()) - cell_m
    cols = ((x - x0) / cell_m).astype(int)
    rows = ((y - y0) / cell_m).astype(int)
    shape = (rows.max() + 2, cols.max() + 2)
    chm = np.zeros(shape)
    np.maximum.at(chm, (rows, cols), h)
    # pits: cells no point fell in, or that a pulse into the crown marks low, take the
    # closing of their neighbours (a "pit-free" canopy model)
    chm = np.maximum(chm, np.where(chm < ndimage.grey_closing(chm, size=(3, 3)) - 1.0,
                                   ndimage.grey_closing(chm, size=(3, 3)), chm))
    smooth = ndimage.gaussian_filter(chm, sigma=1.0)
    candidates = np.argwhere((smooth == ndimage.maximum_filter(smooth, size=3))
                             & (smooth >= min_height_m))
    order = np.argsort(-smooth[candidates[:, 0], candidates[:, 1]])
    tops: list[np.ndarray] = []
    for rc in candidates[order]:
        # a treetop stands highest within half its crown width (Popescu & Wynne's window)
        reach = 0.5 * crown_width_m(float(chm[rc[0], rc[1]])) / cell_m
        if all(np.hypot(*(rc - t)) > reach for t in tops):
            tops.append(rc)
    if not tops:
        return []
    markers = np.zeros(shape, dtype=np.int32)
    for k, (r, c) in enumerate(tops, start=1):
        markers[r, c] = k
    count = len(tops)
    canopy = smooth > 0.5 * min_height_m * 0.5
    top = smooth.max()
    levels = np.round((top - smooth) / max(top, 1e-9) * 65000).astype(np.uint16)
    markers[~canopy] = -1  # the background is a basin of its own
    basins = ndimage.watershed_ift(levels, markers)
    owner = basins[rows, cols]
    trees = []
    for k in range(1, count + 1):
        mine = owner == k
        if mine.sum() < min_points:
            continue
        hk = h[mine]
        tallest = float(np.mean(np.sort(hk)[-3:]))
        if tallest < min_height_m:
            continue
        crown = hk > 0.5 * tallest  # the crown, not the trunk or the shrubs under it
        cx, cy = float(np.mean(x[mine][crown])), float(np.mean(y[mine][crown]))
        d = np.hypot(x[mine][crown] - cx, y[mine][crown] - cy)
        radius = float(np.quantile(d, 0.9) / math.sqrt(0.9))
        base = float(np.sort(hk)[min(2, len(hk) - 1)])  # the third lowest: one stray less
        if base >= 0.9 * tallest or base < 0.5:
            base = tallest / 3.0
        foot = float(np.median(g[mine]))
        trees.append(Tree((cx, cy), tallest, max(radius, 0.3), base, ground_m=foot))
    trees.sort(key=lambda t: -t.height)
    return [Tree(t.center, t.height, t.crown_radius, t.crown_base, ground_m=t.ground_m,
                 name=f"tree {i + 1}") for i, t in enumerate(trees)]
