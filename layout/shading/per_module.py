"""Beam shade per placed module, by cell and by bypass-diode substring.

:func:`module_shade` ray-tests the cell sample points of placed modules (``PlacedModule.
cell_points``, collected by :func:`module_samples`) against the obstructions and, by default,
against every module as a :class:`~layout.scene.obstructions.Plate` (rows shade rows; a module
never shades itself), and returns the beam shaded fraction per (step, module) and, per
(step, module, substring), the mean and the most shaded cell, tree crowns counted by their
monthly transmittance; per (step, module, cell) too when asked or small. Hits stay sparse
(step, point) lists per obstruction until they are summed per cell in blocks of steps (64 MB
dense at most) and each block is reduced to those figures, so memory grows with the number of
hits and the output, not with the number of rays or of cells; without a cache, modules go in
chunks of at most ``max_rays`` rays. With a :class:`~layout.shading.cache.ShadeCache`, moving
one obstruction recomputes only its hits.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from ..errors import InputError, check_positive
from ..runtime import parallel_map
from .cache import THREADED_RAYS, ShadeCache
from .combine import _check_month, _prepare_hits
from .groups import _group_shade_rows
from .hits import DEFAULT_MAX_PAIRS, Facing, _obstruction_hits
from .module_tiles import _exact_sums, _tile_shade_rows
from .plate_sets import module_casters
from .point_groups import _point_groups
from .rays import RAY_START_M, _check_sun
from .sun_sectors import _sun_order

__all__ = ["CELL_LIMIT_BYTES", "DEFAULT_MAX_RAYS", "ModuleSamples", "ModuleShade",
           "module_samples", "module_shade"]


@dataclass(frozen=True)
class ModuleSamples:
    """Sample points of placed modules, labelled by module, cell and substring.

    Attributes
    ----------
    module_ids : tuple of str
        Id of each module, in the order given.
    points : numpy.ndarray, shape (N, 3)
        Sample points on the module planes, site frame [m], grouped by module then cell.
    module, cell, substring : numpy.ndarray of int, shape (N,)
        Module (position in ``module_ids``), cell and substring (bypass diode) of each point.
    n_cells, n_substrings : int
        Cells and substrings per module.
    normals : numpy.ndarray, shape (N, 3)
        Front normal of the module each point lies on.
    """

    module_ids: tuple[str, ...]
    points: np.ndarray
    module: np.ndarray
    cell: np.ndarray
    substring: np.ndarray
    n_cells: int
    n_substrings: int
    normals: np.ndarray

    @property
    def cell_group(self) -> np.ndarray:
        """Flat cell label of each point, ``module · n_cells + cell``."""
        return self.module * self.n_cells + self.cell


def module_samples(modules, spec, *, samples_per_cell: int = 1) -> ModuleSamples:
    """Collect the cell sample points of placed modules.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The modules, all of type ``spec``.
    spec : layout.scene.modules.ModuleSpec
        The module type; gives cells and substrings.
    samples_per_cell : int, keyword-only, default 1
        Points per cell, a perfect square (see ``PlacedModule.cell_points``).

    Returns
    -------
    ModuleSamples
        Points and labels.
    """
    modules = tuple(modules)
    for k, m in enumerate(modules):
        if not hasattr(m, "cell_points"):
            raise InputError(f"modules[{k}]", "is not a placed module", value=type(m).__name__,
                             allowed="layout.fill.placed.PlacedModule")
    if not modules:
        raise InputError("modules", "is empty", allowed="one or more placed modules")
    # every module at once, as PlacedModule.cell_points places one (the same sums, in the
    # same order): corner 0 + a / length · length axis + b / width · width axis
    corners = np.array([m.corners_3d for m in modules], dtype=float)  # (M, 4, 3)
    along = corners[:, 1] - corners[:, 0]  # lower edge, left to right
    up = corners[:, 3] - corners[:, 0]  # left edge, bottom to top
    portrait = np.array([m.orientation == "portrait" for m in modules])[:, None]
    length_axis = np.where(portrait, up, along)
    width_axis = np.where(portrait, along, up)
    for axis, expected in ((length_axis, spec.length_m), (width_axis, spec.width_m)):
        wrong = np.flatnonzero(np.abs(np.linalg.norm(axis, axis=1) - expected) > 1e-3)
        if len(wrong):
            modules[wrong[0]].cell_points(spec, samples_per_cell)  # raises, naming the field
    ab, cell = spec.cell_sample_points(samples_per_cell)
    fa = ab[:, 0] / spec.length_m
    fb = ab[:, 1] / spec.width_m
    points = corners[:, None, 0] + fa[None, :, None] * length_axis[:, None, :] \
        + fb[None, :, None] * width_axis[:, None, :]  # (M, n, 3)
    n_mod, per = len(modules), len(cell)
    normals = np.array([m.normal for m in modules], dtype=float)
    return ModuleSamples(tuple(m.id for m in modules), points.reshape(-1, 3),
                         np.repeat(np.arange(n_mod, dtype=np.intp), per),
                         np.tile(cell.astype(np.intp), n_mod),
                         np.tile(np.asarray(spec.substring_of_cell(cell), dtype=np.intp), n_mod),
                         int(spec.cell_count), int(spec.bypass_diodes),
                         np.repeat(normals, per, axis=0))


@dataclass(frozen=True, eq=False)
class ModuleShade:
    """Beam shaded fraction of placed modules per sun step, by module, substring and cell.

    Values are fractions from 0 (no shade) to 1 (all of the beam blocked); a tree crown blocks
    ``1 - transmittance`` of the beam where it is met. Only the steps at which some ray is
    blocked are held (:attr:`steps`), module-major, as what the electrical models need: the
    module mean (:attr:`mean_rows`) and each substring's most shaded cell
    (:attr:`worst_rows`). The per-cell fractions (:attr:`by_cell`) and the substring means
    (:attr:`substring_rows`) are kept only when asked for or small (:data:`CELL_LIMIT_BYTES`):
    on a roof of 5,000 modules they would take gigabytes. The dense per-step arrays are built
    when first asked for. float32 carries about 7 significant digits, far below the sampling
    error of a few points a cell.

    Attributes
    ----------
    module_ids : tuple of str
        Id of each module.
    steps : numpy.ndarray of int, shape (R,)
        Increasing sun steps (rows of the sun vectors given) at which some cell may be
        shaded; at every other step no cell is.
    n_steps : int
        Number of sun steps T.
    cell_substring : numpy.ndarray of int, shape (C,)
        Substring (bypass diode) of each cell.
    mean_rows : numpy.ndarray of float64, shape (M, R)
        Mean shaded fraction of each module's cells at :attr:`steps` (cells have equal areas).
    worst_rows : numpy.ndarray of float32, shape (M, S, R)
        Largest shaded fraction of the cells of each substring at :attr:`steps`.
    by_cell : numpy.ndarray of float32, shape (M, C, R), or None
        Shaded fraction of each module's cells at :attr:`steps` (mean over a cell's sample
        points); None when not kept.
    substring_rows : numpy.ndarray of float32, shape (M, S, R), or None
        Mean shaded fraction of the cells of each substring at :attr:`steps`; None when the
        cells are not kept.
    cell : numpy.ndarray of float32, shape (T, M, C)
        Shaded fraction of each cell at every step (needs :attr:`by_cell`).
    substring : numpy.ndarray of float32, shape (T, M, S)
        Shaded fraction of each bypass-diode substring (mean over its cells; needs
        :attr:`substring_rows`).
    """

    module_ids: tuple[str, ...]
    steps: np.ndarray
    n_steps: int
    cell_substring: np.ndarray
    mean_rows: np.ndarray
    worst_rows: np.ndarray
    by_cell: np.ndarray | None = None
    substring_rows: np.ndarray | None = None

    @cached_property
    def cell(self) -> np.ndarray:
        """Shaded fraction of each cell, float32 (T, M, C)."""
        _check_kept(self.by_cell)
        n_mod, n_cells, _ = self.by_cell.shape
        if len(self.steps) == self.n_steps:  # every step held
            return self.by_cell.transpose(2, 0, 1)
        out = np.zeros((self.n_steps, n_mod, n_cells), dtype=np.float32)
        out[self.steps] = self.by_cell.transpose(2, 0, 1)
        return out

    @cached_property
    def substring(self) -> np.ndarray:
        """Shaded fraction of each substring, float32 (T, M, S) (mean over its cells)."""
        _check_kept(self.substring_rows)
        out = np.zeros((self.n_steps, *self.substring_rows.shape[:2]), dtype=np.float32)
        out[self.steps] = self.substring_rows.transpose(2, 0, 1)
        return out

    @property
    def module(self) -> np.ndarray:
        """Shaded fraction of each whole module, float32 (T, M) (cells have equal areas)."""
        out = np.zeros((self.n_steps, self.mean_rows.shape[0]), dtype=np.float32)
        out[self.steps] = self.mean_rows.T
        return out


def _check_kept(held) -> None:
    if held is None:
        raise InputError("keep_cells", "was off: the per-cell shade was not kept",
                         allowed="module_shade(..., keep_cells=True)")


#: Largest per-cell array (modules × cells × sun steps, float32) :func:`module_shade` keeps by
#: default [bytes]; beyond it only the per-module and per-substring reductions are kept.
CELL_LIMIT_BYTES = 1 << 28


class _Reductions:
    """Per-module and per-substring reductions of per-cell shade, filled block by block."""

    def __init__(self, n_mod: int, cell_substring: np.ndarray, keep_cells: bool):
        self.n_mod, self.n_cells, self.keep_cells = n_mod, len(cell_substring), keep_cells
        self.cells = [np.flatnonzero(cell_substring == s)
                      for s in range(int(cell_substring.max()) + 1)]
        self.pattern = _substring_pattern(cell_substring, len(self.cells))
        self.mean = self.substring = self.worst = self.by_cell = None
        self._allocating = threading.Lock()

    def allocate(self, n_rows: int) -> None:
        """Make the arrays for ``n_rows`` steps, once (blocks on threads ask at once)."""
        with self._allocating:
            if self.mean is None:
                self._allocate(n_rows)

    def _allocate(self, n_rows: int) -> None:
        n_mod, n_sub = self.n_mod, len(self.cells)
        # zeros: module tiles (:meth:`at_tiles`) fill only where some cell has shade. Laid
        # out step by step (Fortran order): tiles come step by step, so that their values
        # land close together, and readers take a block of modules at all steps, as a
        # contiguous (steps, modules) transpose
        self.mean = np.zeros((n_mod, n_rows), order="F")
        self.worst = np.zeros((n_mod, n_sub, n_rows), dtype=np.float32, order="F")
        if self.keep_cells:
            self.substring = np.zeros((n_mod, n_sub, n_rows), dtype=np.float32)
            self.by_cell = np.zeros((n_mod, self.n_cells, n_rows), dtype=np.float32)

    def at(self, m0: int):
        """Return the ``reduce`` callback for a block of modules starting at module ``m0``."""
        def reduce(rows, r0, r1, block):
            self.allocate(len(rows))
            cells = block.reshape(-1, self.n_cells, r1 - r0)  # (modules, cells, rows)
            m1 = m0 + len(cells)
            self.mean[m0:m1, r0:r1] = cells.sum(axis=1, dtype=np.float64) / self.n_cells
            if self.pattern is not None and self.substring is None:
                # substrings as a repeated pattern of runs of cells: every substring's
                # worst cell in one reduction over a view, no copy of its cells
                n_sub, run = len(self.cells), self.pattern
                view = cells.reshape(len(cells), -1, n_sub, run, r1 - r0)
                worst = view[:, :, :, 0, :]
                if run > 1:  # the worst of each run first, element-wise (faster than a
                    # reduction over two axes at once)
                    worst = np.maximum(worst, view[:, :, :, 1, :])
                    for k in range(2, run):
                        np.maximum(worst, view[:, :, :, k, :], out=worst)
                self.worst[m0:m1, :, r0:r1] = worst.max(axis=1)
                return
            for s, index in enumerate(self.cells):
                part = cells[:, index, :]
                self.worst[m0:m1, s, r0:r1] = part.max(axis=1)
                if self.substring is not None:
                    self.substring[m0:m1, s, r0:r1] = part.sum(axis=1, dtype=np.float64) \
                        / len(index)
            if self.by_cell is not None:
                self.by_cell[m0:m1, :, r0:r1] = cells
        return reduce

    def at_tiles(self, m0: int):
        """Return the ``reduce`` callback of :func:`_tile_shade_rows` for modules from ``m0``.

        The same figures as :meth:`at` from the tiles alone (the rest stay 0): a module's
        mean and a substring's mean are float64 sums of float32 shade values, exact in any
        order where :func:`_exact_sums` holds, so equal to the dense block's.
        """
        def reduce(rows, r0, r1, tile_row, tile_module, values):
            self.allocate(len(rows))
            module, column = tile_module + m0, tile_row + r0
            self.mean[module, column] = values.sum(axis=0, dtype=np.float64) / self.n_cells
            if self.pattern is not None and self.substring is None:
                # cells as (repeat, substring, run): the worst over repeats, then over runs
                n_sub, run = len(self.cells), self.pattern
                worst = values.reshape(-1, n_sub * run, len(module)).max(axis=0)
                self.worst[module, :, column] = worst.reshape(n_sub, run, -1).max(axis=1).T
                return
            for s, index in enumerate(self.cells):
                part = values[index]
                self.worst[module, s, column] = part.max(axis=0)
                if self.substring is not None:
                    self.substring[module, s, column] = part.sum(axis=0, dtype=np.float64) \
                        / len(index)
            if self.by_cell is not None:
                self.by_cell[module, :, column] = values.T
        return reduce


def _substring_pattern(cell_substring: np.ndarray, n_sub: int) -> int | None:
    """Return the run length k when cells go by substring as (0 × k, 1 × k, ...) repeated.

    Substring ``s`` then holds cells ``j * n_sub * k + s * k + i``; None for another order.
    """
    n_cells = len(cell_substring)
    for run in range(1, n_cells // n_sub + 1):
        if n_cells % (n_sub * run):
            continue
        one = np.repeat(np.arange(n_sub), run)
        if np.array_equal(cell_substring, np.tile(one, n_cells // (n_sub * run))):
            return run
    return None


#: Default largest number of rays (sun steps × sample points) handled per chunk of modules in
#: :func:`module_shade`; bounds the memory of the sparse hit lists.
DEFAULT_MAX_RAYS = 1 << 26


def module_shade(modules, spec, sun, obstructions, *, samples_per_cell: int = 1, month=None,
                 include_modules: bool = True, cache: ShadeCache | None = None,
                 samples: ModuleSamples | None = None,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS,
                 max_rays: int = DEFAULT_MAX_RAYS, keep_cells: bool | None = None
                 ) -> ModuleShade:
    """Compute the beam shaded fraction of each module per sun step, by cell and substring.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The modules, all of type ``spec``.
    spec : layout.scene.modules.ModuleSpec
        The module type.
    sun : array_like, shape (T, 3)
        Vectors toward the sun, site frame (e.g. ``SunSample.vectors``).
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
        Everything that can shade the modules, roof faces of the building included (as
        :class:`~layout.scene.obstructions.Plate`).
    samples_per_cell : int, keyword-only, default 1
        Sample points per cell, a perfect square.
    month : array_like of int, shape (T,), keyword-only, optional
        Month (1-12) of each step; needed when a tree has a crown transmittance.
    include_modules : bool, keyword-only, default True
        Add every module as a :class:`~layout.scene.obstructions.Plate` caster, so rows shade rows.
        A module never shades itself (its points lie in its own plane).
    cache : ShadeCache, keyword-only, optional
        A cache built on ``module_samples(modules, spec, samples_per_cell=...)``'s points and
        normals and the same ``sun``: it is updated with the casters (only new or changed
        ones are ray-tested) and keeps its hits for the next call. Memory is then that of the
        cache.
    samples : ModuleSamples, keyword-only, optional
        The modules' sample points, when already made by ``module_samples(modules, spec,
        samples_per_cell=...)`` (saves making them again).
    ray_start, max_pairs
        As in :func:`layout.shading.shaded`.
    max_rays : int, keyword-only
        Without a cache, modules are handled in chunks of at most this many rays (steps ×
        points, at least one module a chunk), so the sparse hit lists stay bounded.
    keep_cells : bool, keyword-only, optional
        Keep the per-cell fractions (:attr:`ModuleShade.by_cell`); default: only when they
        would take at most :data:`CELL_LIMIT_BYTES`. Without them, the per-cell values are
        reduced to module and substring figures block by block of steps and never held whole.

    Returns
    -------
    ModuleShade
        Shaded fractions by module, substring and cell. At a step when the sun is behind a
        module's plane the module gets no beam, shaded or not: its cells are not ray-tested
        then and count as unshaded (:class:`Facing`).
    """
    modules = tuple(modules)
    if samples is None:
        samples = module_samples(modules, spec, samples_per_cell=samples_per_cell)
    elif samples.module_ids != tuple(m.id for m in modules) \
            or samples.n_cells != spec.cell_count \
            or len(samples.points) != len(modules) * spec.cell_count * samples_per_cell:
        raise InputError("samples", "were made for other modules or another sampling",
                         allowed="module_samples(modules, spec, samples_per_cell=...)")
    sun_v = _check_sun(sun)
    start = check_positive("ray_start", ray_start, unit="m")
    m = None if month is None else _check_month(month, len(sun_v))
    casters = list(obstructions)
    if include_modules:
        casters += module_casters(modules)  # rack rows as plate sets, exact all the same
    n_mod, n_cells = len(modules), samples.n_cells
    cell_substring = np.asarray(spec.substring_of_cell(np.arange(n_cells)), dtype=np.intp)
    if keep_cells is None:
        keep_cells = n_mod * n_cells * len(sun_v) * 4 <= CELL_LIMIT_BYTES
    if cache is not None:
        if cache.points.shape != samples.points.shape \
                or not np.array_equal(cache.points, samples.points):
            raise InputError("cache", "was built on other points",
                             allowed="a ShadeCache on module_samples(...).points")
        if cache.sun.shape != sun_v.shape or not np.allclose(cache.sun, sun_v, atol=1e-12):
            raise InputError("cache", "was built for other sun steps", allowed="the same sun")
        if cache.facing is None:
            raise InputError("cache", "was built without the modules' normals",
                             allowed="ShadeCache(samples.points, sun, normals=samples.normals)")
        cache.update(casters)
        sums = _Reductions(n_mod, cell_substring, keep_cells)
        steps = _reduce_shade(len(sun_v), cache.prepared_hits(), samples.cell_group,
                              n_mod * n_cells, sums, 0)
    else:
        order = _sun_order(sun_v)
        facing = Facing.from_normals(sun_v, samples.normals, samples.points)
        steps = np.arange(len(sun_v))  # chunks of modules: every step held
        sums = _Reductions(n_mod, cell_substring, keep_cells)
        per_module = len(samples.points) // n_mod
        chunk = max(1, int(max_rays) // max(1, per_module * len(sun_v)))
        for m0 in range(0, n_mod, chunk):
            m1 = min(n_mod, m0 + chunk)
            sel = slice(m0 * per_module, m1 * per_module)
            pts = samples.points[sel]
            sub_facing = facing.subset(np.arange(len(samples.points))[sel])
            groups = _point_groups(pts)

            def prepared_hits(ob, pts=pts, sub_facing=sub_facing, groups=groups):
                return _prepare_hits(ob, _obstruction_hits(pts, sun_v, ob, start,
                                                           int(max_pairs), True, order,
                                                           sub_facing, groups), m)
            threads = None if len(pts) * len(sun_v) >= THREADED_RAYS else 1
            prepared = parallel_map(prepared_hits, casters, threads=threads)
            _reduce_shade(len(sun_v), prepared, samples.cell_group[sel] - m0 * n_cells,
                          (m1 - m0) * n_cells, sums, m0, rows=steps)
    sums.allocate(len(steps))  # no row at all: empty arrays
    return ModuleShade(samples.module_ids, steps, len(sun_v), cell_substring, sums.mean,
                       sums.worst, sums.by_cell, sums.substring)


def _reduce_shade(n_steps, prepared, labels, n_groups, sums: _Reductions, m0: int, *,
                  rows=None) -> np.ndarray:
    """Reduce the shade of a run of modules' cells into ``sums``; return the rows held.

    With one sample point a cell (``labels`` 0, 1, 2, ...) and sums that are exact in any
    order (:func:`_exact_sums`), only the tiles of (module, step) with a hit are built
    (:func:`_tile_shade_rows`); otherwise the dense blocks of :func:`_group_shade_rows`.
    """
    n_points, n_cells = len(labels), sums.n_cells
    if n_groups == n_points and np.array_equal(labels, np.arange(n_points)) \
            and _exact_sums(prepared, n_cells):
        return _tile_shade_rows(n_steps, n_points, prepared, n_cells, sums.at_tiles(m0),
                                rows=rows)
    rows, _ = _group_shade_rows(n_steps, n_points, prepared, labels, n_groups, rows=rows,
                                reduce=sums.at(m0))
    return rows
