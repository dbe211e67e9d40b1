"""Shade per module tile: a module's cells at one sun step, built only where a hit falls.

With one sample point a cell, the shade of a module's cells at a step is a tile of ``C``
values; most tiles hold no hit (on the demo roof 7,046 of 24,947 (module, step) pairs at the
steps with shade). :func:`_tile_shade_rows` builds only the tiles some hit falls in (and
every tile of a step below the far horizon), so that filling, turning beam into shade and
reducing per module and substring run over a few dense rows of ``C`` values instead of every
(point, step) pair; a tile left out is all zeros (no shade). The values are those of
:func:`~layout.shading.groups._group_shade_rows`, bit for bit, with the same operations per
value.
"""

from __future__ import annotations

import numpy as np

from . import groups
from .groups import _row_blocks, _row_numbers, _rows_with_shade, _split_entries

#: Largest beam fraction a crown may let through for a tile's sums to be exact in any order
#: (see :func:`_exact_sums`): shade values are then 0 or at least 2**-20.
_CLEAREST = 1.0 - 2.0 ** -20


def _exact_sums(prepared_hits, n_cells: int) -> bool:
    """Tell whether float64 sums of ``n_cells`` shade values are exact in any order.

    Every shade value is a float32 ``1 - beam``: 1 past an opaque surface, else one minus a
    product of crown factors, each at most the largest factor ``f``, so at least ``1 - f``
    (rounding is monotone). A float32 of at least ``2**-20`` is a multiple of ``2**-43``;
    sums of up to 1,024 values below 1 stay under ``2**10`` and so are multiples of
    ``2**-43`` with at most 53 significant bits: every partial sum is exact, whatever the
    order. True when every crown factor is at most :data:`_CLEAREST` and ``n_cells`` at most
    1,024.
    """
    if n_cells > 1024:
        return False
    return all(entry is None or isinstance(entry[0], str) or entry[2] is None
               or not len(entry[2]) or float(entry[2].max()) <= _CLEAREST
               for entry in prepared_hits)


def _tile_shade_rows(n_steps, n_points, prepared_hits, n_cells, reduce, *, rows=None):
    """Shaded beam fraction of each module's cells, tile by tile, at the steps with shade.

    Parameters
    ----------
    n_steps, n_points : int
        Sun steps and points the hits refer to; point ``p`` is cell ``p % n_cells`` of
        module ``p // n_cells`` (one sample point a cell, modules in order).
    prepared_hits : sequence
        One entry per obstruction, from :func:`~layout.shading.combine._prepare_hits`.
    n_cells : int
        Cells a module.
    reduce : callable
        Called block by block of rows as ``reduce(rows, r0, r1, row, module, values)``:
        tile ``k`` holds the cells of module ``module[k]`` at step ``rows[r0 + row[k]]``,
        ``values[:, k]`` (``values`` float32 (n_cells, K), overwritten afterwards) their
        shaded fractions. Tiles not given are all zeros (a block without a tile is not
        given at all).
    rows : numpy.ndarray of int, optional
        As in :func:`~layout.shading.groups._group_shade_rows`.

    Returns
    -------
    rows : numpy.ndarray of int, shape (R,)
        Increasing sun steps; at every other step no cell has shade.

    Notes
    -----
    Each value is the same float32 as the dense block of
    :func:`~layout.shading.groups._group_shade_rows` holds: the beam starts at 1, an opaque
    hit sets it to 0, a crown hit multiplies it by its factor (obstructions in order), and
    the shade is ``1 - beam``; with only opaque hits the tile holds the shade itself (0 or 1).
    Steps below the far horizon give tiles of 1 for every module.
    """
    horizon, entries = _split_entries(n_steps, prepared_hits)
    if rows is None:
        rows = _rows_with_shade(horizon, entries)
    n_rows, n_mod = len(rows), n_points // n_cells
    if n_rows == 0 or n_mod == 0:
        return rows
    row_of = _row_numbers(n_steps, rows)
    blocked = row_of[np.flatnonzero(horizon)]  # rows below the far horizon
    as_shade = all(factor is None for _, _, factor in entries)
    per = max(1, groups._DENSE_BLOCK // n_points)  # the dense blocks' rows, as there
    for r0, r1, parts in _row_blocks(n_steps, rows, per, entries):
        width = r1 - r0
        used = np.zeros(width * n_mod, dtype=bool)  # (row, module) tiles, row-major
        keyed = []
        for step, point, factor in parts:
            module = point // n_cells  # in the points' own dtype (a fast division)
            key = np.take(row_of, step)  # take: several times faster than row_of[step]
            if r0:                       # for an index of another dtype than intp
                key -= r0
            key *= n_mod
            key += module
            used[key] = True
            module *= n_cells
            keyed.append((key, np.subtract(point, module, out=module), factor))  # the cell
        inside = blocked[(blocked >= r0) & (blocked < r1)] - r0
        used.reshape(width, n_mod)[inside] = True
        tiles = np.flatnonzero(used)
        if not len(tiles):  # no shade in this block
            continue
        tile_of = np.empty(len(used), dtype=np.intp)  # read at used tiles only
        tile_of[tiles] = np.arange(len(tiles))
        n_tiles = len(tiles)
        # cell-major: each cell's values over the tiles contiguous, so that the reductions
        # over a module's cells run over whole rows
        values = np.full((n_cells, n_tiles), 0.0 if as_shade else 1.0, dtype=np.float32)
        flat_values = values.reshape(-1)
        for key, cell, factor in keyed:
            flat = np.take(tile_of, key)
            flat += cell * n_tiles
            if factor is None:
                flat_values[flat] = 1.0 if as_shade else 0.0
            else:
                flat_values[flat] *= factor  # each (step, point) once per obstruction
        if not as_shade:
            np.subtract(np.float32(1.0), values, out=values)
        if len(inside):
            values[:, tile_of[(inside[:, None] * n_mod + np.arange(n_mod)).reshape(-1)]] = 1.0
        tile_row, tile_module = np.divmod(tiles, n_mod)
        reduce(rows, r0, r1, tile_row, tile_module, values)
    return rows
