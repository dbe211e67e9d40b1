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

import itertools

import numpy as np

from ..runtime import parallel_map, worker_threads
from . import groups
from .groups import _row_blocks, _row_numbers, _rows_with_shade, _split_entries, _step_window

#: Rows of a block of tiles, in rows of a dense block (:data:`groups._DENSE_BLOCK` values):
#: tiles hold the modules a step shades, a quarter of them or fewer on a rack roof.
_TILE_ROWS = 4
#: (point, step) values from which blocks of tiles are built on threads
#: (:func:`layout.runtime.parallel_map`); below it the interpreter's lock makes threads slower.
THREADED_VALUES = 1 << 24
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
    n_mod = n_points // n_cells
    as_shade = all(factor is None for _, _, factor in entries)
    per = max(1, _TILE_ROWS * groups._DENSE_BLOCK // max(1, n_points))  # rows a block
    if rows is None and n_steps <= per and n_mod:
        # every step in one block: the rows are the steps of the tiles, found with them
        tiles = _block_tiles(entries, 0, n_steps, n_mod, n_cells, np.flatnonzero(horizon),
                             as_shade)
        if tiles is None:
            return np.zeros(0, dtype=np.intp)
        tile_step, tile_module, values = tiles
        first = np.r_[True, tile_step[1:] != tile_step[:-1]]
        rows = tile_step[first]
        reduce(rows, 0, len(rows), np.cumsum(first) - 1, tile_module, values)
        return rows
    if rows is None:
        rows = _rows_with_shade(horizon, entries)
    if not len(rows) or not n_mod:
        return rows
    row_of = _row_numbers(n_steps, rows)

    def one_block(block) -> None:  # its own rows r0..r1 of the reductions
        r0, r1, parts = block
        lo, held = rows[r0], rows[r0:r1]
        tiles = _block_tiles(parts, lo, rows[r1 - 1] - lo + 1, n_mod, n_cells,
                             held[horizon[held]] - lo, as_shade)
        if tiles is not None:
            tile_step, tile_module, values = tiles
            reduce(rows, r0, r1, row_of[tile_step] - r0, tile_module, values)

    # blocks on threads, as many at a time as there are threads (each holds its hits and
    # tiles); a roof of a few modules is one block on one thread
    threads = worker_threads() if n_points * len(rows) >= THREADED_VALUES else 1
    blocks = _row_blocks(n_steps, rows, per, entries, _step_window(n_points))
    while batch := list(itertools.islice(blocks, threads)):
        parallel_map(one_block, batch, threads=threads)
    return rows


def _block_tiles(parts, lo: int, span: int, n_mod: int, n_cells: int, below, as_shade: bool):
    """Build the tiles of the hits at steps ``lo`` to ``lo + span - 1``.

    ``below`` are the steps (less ``lo``) below the far horizon: each gets a tile of 1 for
    every module. Returns ``(step, module, values)`` per tile, tiles by step then module,
    ``values`` (n_cells, K) float32, or None when no tile has a hit.
    """
    used = np.zeros(span * n_mod, dtype=bool)  # (step, module) tiles, step-major
    keyed = []
    for step, point, factor in parts:
        module = point // n_cells  # in the points' own dtype (a fast division)
        key = step.astype(np.intp)
        if lo:
            key -= lo
        key *= n_mod
        key += module
        used[key] = True
        module *= n_cells
        keyed.append((key, np.subtract(point, module, out=module), factor))  # the cell
    used.reshape(span, n_mod)[below] = True
    tiles = np.flatnonzero(used)
    n_tiles = len(tiles)
    if not n_tiles:
        return None
    tile_of = np.empty(len(used), dtype=np.intp)  # read at used tiles only
    tile_of[tiles] = np.arange(n_tiles)
    # cell-major: each cell's values over the tiles contiguous, so that the reductions over
    # a module's cells run over whole rows
    values = np.full((n_cells, n_tiles), 0.0 if as_shade else 1.0, dtype=np.float32)
    flat_values = values.reshape(-1)
    # the first crown's factors are set, not multiplied into the ones (1 · f is f), before
    # every other entry: an opaque hit sets 0 whenever it comes (0 · f is 0 too), and the
    # crowns after it multiply in their order, so every value is the same bit for bit
    first = next((k for k, (_, _, factor) in enumerate(keyed) if factor is not None), None)
    if first:
        keyed.insert(0, keyed.pop(first))
    for number, (key, cell, factor) in enumerate(keyed):
        # in place, no new arrays (a fresh one costs its page faults); take is faster than
        # tile_of[key], and writes over the keys read (every key is in range)
        flat = np.take(tile_of, key, out=key, mode="clip")
        cell *= n_tiles  # below n_cells · n_tiles, at most a dense block: fits int32
        flat += cell
        if factor is None:
            flat_values[flat] = 1.0 if as_shade else 0.0
        elif number == 0:
            flat_values[flat] = factor
        else:
            flat_values[flat] *= factor  # each (step, point) once per obstruction
    if not as_shade:
        np.subtract(np.float32(1.0), values, out=values)
    if len(below):
        values[:, tile_of[(below[:, None] * n_mod + np.arange(n_mod)).reshape(-1)]] = 1.0
    tile_step, tile_module = np.divmod(tiles, n_mod)
    if lo:
        tile_step += lo
    return tile_step, tile_module, values
