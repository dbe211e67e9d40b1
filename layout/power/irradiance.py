"""Irradiance on each module: pvlib's transposition per orientation, then shade per component.

Steps
-----
1. **Transposition, once per orientation.** Modules are grouped by their (tilt, azimuth); each
   group's plane is split into beam (``poa_direct``), circumsolar, isotropic and horizon-band
   sky diffuse, and ground-reflected (``poa_ground_diffuse``) [W/m²] by
   :mod:`layout.power.transposition` (pvlib, Perez 1990 by default).
2. **Shade, per component** (``f`` is the beam shaded fraction of a cell, 0 to 1, tree
   transmittance included; ``s`` is the module's sky-view ratio, 0 to 1):

   ==================  =========================================================
   component           shaded value
   ==================  =========================================================
   beam                ``poa_direct · (1 − f)``
   circumsolar         ``poa_circumsolar · (1 − f)``: it comes from around the sun
   isotropic sky       ``poa_isotropic · s``
   horizon band        ``poa_horizon · s`` (rule: a band just above the horizon is
                       hidden in the same share as the sky dome; Perez may make it
                       negative, which the rule keeps)
   ground-reflected    ``poa_ground_diffuse``, unchanged (rule: an obstruction that
                       hides some ground reflects about as much itself)
   ==================  =========================================================

   The **sky-view ratio** ``s`` of a module is the isotropic sky diffuse its plane receives with
   the obstructions present divided by what the same plane receives with none, i.e. divided by
   the unobstructed view factor ``(1 + cos tilt) / 2``. An unobstructed module has ``s = 1``
   whatever its tilt; ``s`` is not the raw view factor to the sky.
3. **Incidence-angle losses** (IAM), per component, also by :mod:`layout.power.transposition`
   (the ``"physical"`` model by default, Marion's (2017) integrated diffuse IAM for the
   diffuse parts); ``iam_model=None`` skips IAM: the effective irradiance then equals the
   plane-of-array irradiance.
4. **Cell temperature** from the Sandia array performance model
   (:func:`pvlib.temperature.sapm_cell`, King et al. 2004) with the module-mean shaded
   plane-of-array irradiance. The default mount ``"close_mount_glass_glass"`` is the SAPM
   configuration measured on a close roof mount: the nearest of pvlib's sets to a flush array
   on standoffs, which sits a few kelvin hotter than an open rack because its back is barely
   ventilated. Tilted racks on flat roofs suit ``"open_rack_glass_polymer"``.

Per-cell shade and substrings
-----------------------------
``beam_shaded`` is an array (T, M, K): K columns per module, either cells (give
``cell_substring``, the substring of each cell) or substrings. The module-mean beam shaded
fraction is the mean over the K columns (cells and substrings have equal areas). A substring's
current is set by its most shaded cell, so a substring's irradiance uses the **largest** cell
fraction within it. Per-substring input that is already a mean over the substring's points
gives an optimistic substring irradiance.

References
----------
The transposition and incidence-angle models' papers are listed in
:mod:`layout.power.transposition`.

.. [1] D. King, W. Boyson and J. Kratochvil, "Photovoltaic Array Performance Model",
   SAND2004-3535, Sandia National Laboratories, 2004.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import pandas as pd
import pvlib

from ..errors import InputError
from ..runtime import even_block, parallel_map
from ..sky.weather import Weather
from .transposition import _check_model, plane_components

__all__ = [
    "MOUNTS",
    "ModuleIrradiance",
    "SubstringLight",
    "module_irradiance",
    "orientation_groups",
    "substring_shade",
]

#: Mounts offered for the cell temperature: pvlib's SAPM parameter sets.
MOUNTS = tuple(pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"])

#: Orientations closer than this are one group [degrees].
ORIENTATION_DECIMALS = 6


def orientation_groups(surface_tilt, surface_azimuth) -> tuple[np.ndarray, np.ndarray]:
    """Group modules by orientation so that each orientation is transposed once.

    Parameters
    ----------
    surface_tilt, surface_azimuth : array_like, shape (M,)
        Tilt and azimuth of each module [degrees].

    Returns
    -------
    orientations : numpy.ndarray, shape (O, 2)
        Distinct (tilt, azimuth) pairs [degrees], rounded to 1e-6°.
    group : numpy.ndarray of int, shape (M,)
        Row of ``orientations`` of each module.
    """
    tilt = np.atleast_1d(np.asarray(surface_tilt, dtype=float))
    azimuth = np.atleast_1d(np.asarray(surface_azimuth, dtype=float))
    if tilt.shape != azimuth.shape or tilt.ndim != 1:
        raise InputError("surface_azimuth", "needs one azimuth per module",
                         value=azimuth.shape, allowed=f"shape {tilt.shape}")
    pairs = np.round(np.column_stack([tilt, azimuth % 360.0]), ORIENTATION_DECIMALS)
    orientations, group = np.unique(pairs, axis=0, return_inverse=True)
    return orientations, group.reshape(-1)


#: Values per (step, module) temporary when modules are worked a block at a time.
_BLOCK_VALUES = 1 << 21

#: Plane components a module's shaded irradiance is made of (:func:`plane_components`).
_SHADED_PARTS = ("beam", "beam_eff", "sky", "sky_eff", "ground", "ground_eff")


# --------------------------------------------------------------------------- shade inputs
def _expand_steps(array: np.ndarray, weather: Weather, field: str) -> np.ndarray:
    """Accept values over all steps or over the sun-up steps only (zero at night)."""
    n_all = len(weather.data)
    up = weather.solar_position["sun_up"].to_numpy()
    if array.shape[0] == n_all:
        return array
    if array.shape[0] == int(up.sum()):
        out = np.zeros((n_all, *array.shape[1:]), dtype=array.dtype)
        out[up] = array
        return out
    raise InputError(field, "has the wrong number of time steps", value=array.shape[0],
                     allowed=f"{n_all} (every step) or {int(up.sum())} (sun-up steps)")


def _substring_labels(cell_substring, n_substrings, k: int):
    """Check the substring of each of ``k`` columns; return (labels, S, cells per substring)."""
    if cell_substring is None:
        labels = np.arange(k)
    else:
        labels = np.asarray(cell_substring)
        if labels.shape != (k,) or not np.issubdtype(labels.dtype, np.integer) \
                or (k and labels.min() < 0):
            raise InputError("cell_substring", "needs one substring number (from 0) per cell",
                             value=labels.shape, allowed=f"{k} whole numbers >= 0")
    s = int(n_substrings) if n_substrings is not None else int(labels.max()) + 1
    if k and labels.max() >= s:
        raise InputError("cell_substring", "names a substring beyond n_substrings",
                         value=int(labels.max()), allowed=f"0 to {s - 1}")
    counts = np.bincount(labels, minlength=s)
    if (counts == 0).any():
        raise InputError("cell_substring", "leaves a substring without cells",
                         value=int(np.flatnonzero(counts == 0)[0]))
    return labels, s, counts


def _row_shade(shade_rows, n_steps: int, n_modules: int, cell_substring, n_substrings):
    """Check shade held at some steps only and reduce it to module means and worst cells.

    ``shade_rows`` is ``(steps, by_cell)``: increasing step indices (R,) and cell-major
    fractions (M, K, R); or ``(steps, mean_rows, worst_rows)``: the same already reduced to
    the module mean (M, R) and each substring's most shaded cell (M, S, R) (as
    :class:`layout.shading.ModuleShade` holds them). Returns ``(steps, mean_rows,
    worst_rows)``, the latter float32, still held at the given steps only.
    """
    try:
        steps, *held = shade_rows
    except (TypeError, ValueError):
        held = []
    if len(held) not in (1, 2):
        raise InputError("shade_rows", "must be (steps, by_cell) or (steps, mean, worst)",
                         allowed="(steps (R,), fractions (M, K, R)) or (steps (R,), "
                                 "means (M, R), worst cells (M, S, R))")
    steps = np.asarray(steps)
    first = np.asarray(held[0])
    if len(held) == 1 and (first.ndim != 3 or first.shape[0] != n_modules or steps.ndim != 1
                           or first.shape[2] != len(steps)):
        raise InputError("shade_rows", "must hold fractions (module, cell, step) at its steps",
                         value=first.shape, allowed=f"({n_modules}, K, {len(steps)})")
    if len(held) == 2:
        worst_rows = np.asarray(held[1])
        if first.shape != (n_modules, len(steps)) or steps.ndim != 1 \
                or worst_rows.ndim != 3 or worst_rows.shape[0] != n_modules \
                or worst_rows.shape[2] != len(steps):
            raise InputError("shade_rows", "must hold means (module, step) and worst cells "
                             "(module, substring, step) at its steps",
                             value=(first.shape, worst_rows.shape),
                             allowed=f"({n_modules}, {len(steps)}) and "
                                     f"({n_modules}, S, {len(steps)})")
    if len(steps) and (not np.issubdtype(steps.dtype, np.integer) or steps[0] < 0
                       or steps[-1] >= n_steps or (np.diff(steps) <= 0).any()):
        raise InputError("shade_rows", "needs increasing step numbers",
                         allowed=f"whole numbers from 0 to {n_steps - 1}, increasing")
    if len(held) == 2:
        s = worst_rows.shape[1] if n_substrings is None else int(n_substrings)
        if worst_rows.shape[1] != s:
            raise InputError("shade_rows", "holds another number of substrings",
                             value=worst_rows.shape[1], allowed=str(s))
        if len(steps) and worst_rows.size and not (
                np.isfinite(first).all() and first.min() >= 0 and first.max() <= 1
                and worst_rows.min() >= 0 and worst_rows.max() <= 1):
            raise InputError("shade_rows", "must hold fractions from 0 to 1", allowed="0 to 1")
        return steps, first, worst_rows.astype(np.float32, copy=False)
    by_cell = first
    labels, s, _ = _substring_labels(cell_substring, n_substrings, by_cell.shape[1])
    worst_rows = np.zeros((n_modules, s, len(steps)), dtype=np.float32)
    if not len(steps) or not by_cell.size:
        return steps, np.zeros((n_modules, len(steps))), worst_rows
    if by_cell.dtype != np.float32:
        by_cell = by_cell.astype(float)
    # reductions over the cell axis combine whole contiguous (module, step) rows
    mean_rows = by_cell.sum(axis=1, dtype=np.float64) / by_cell.shape[1]  # (M, R)
    for substring in range(s):
        cells = np.flatnonzero(labels == substring)
        highest = by_cell[:, cells[0], :].copy()
        for c in cells[1:]:
            np.maximum(highest, by_cell[:, c, :], out=highest)
        worst_rows[:, substring] = highest
    if not (np.isfinite(mean_rows).all() and worst_rows.max() <= 1 and by_cell.min() >= 0):
        raise InputError("shade_rows", "must hold fractions from 0 to 1", allowed="0 to 1")
    return steps, mean_rows, worst_rows


def substring_shade(beam_shaded, *, cell_substring=None, n_substrings: int | None = None,
                    chunk: int = 32) -> tuple[np.ndarray, np.ndarray]:
    """Reduce per-cell beam shaded fractions to the module mean and each substring's worst cell.

    Parameters
    ----------
    beam_shaded : array_like, shape (T, M, K)
        Beam shaded fraction of each of K cells (or substrings) of each module [fraction].
    cell_substring : array_like of int, shape (K,), keyword-only, optional
        Substring of each column; default: the columns are the substrings.
    n_substrings : int, keyword-only, optional
        Number of substrings; default ``cell_substring.max() + 1``.
    chunk : int, keyword-only, default 32
        Modules handled at once, to bound temporary memory.

    Returns
    -------
    mean : numpy.ndarray, shape (T, M)
        Module-mean beam shaded fraction.
    worst : numpy.ndarray of float32, shape (T, M, S)
        Largest cell fraction in each substring (single precision: it is the largest array).
    """
    f = np.asarray(beam_shaded)
    if f.ndim != 3:
        raise InputError("beam_shaded", "must be an array (time, module, cell)",
                         value=f.shape, allowed="3 dimensions")
    k = f.shape[2]
    labels, s, counts = _substring_labels(cell_substring, n_substrings, k)
    order = np.argsort(labels, kind="stable")
    in_order = bool((order == np.arange(k)).all())  # cells already grouped by substring
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]])
    t, m = f.shape[:2]
    if f.dtype != np.float32:
        f = f.astype(float, copy=False)
    mean = np.zeros((t, m))
    worst = np.zeros((t, m, s), dtype=np.float32)
    # most steps leave every cell in the sun: reduce only the steps with some shade
    row_max = f.reshape(t, -1).max(axis=1, initial=0.0)
    shaded_steps = np.flatnonzero(row_max > 0)
    shaded = f[shaded_steps]
    if not (np.isfinite(row_max).all() and row_max.max(initial=0.0) <= 1
            and f.min(initial=0.0) >= 0):
        raise InputError("beam_shaded", "must be fractions from 0 to 1", allowed="0 to 1")
    for lo in range(0, m, chunk):
        part = shaded[:, lo:lo + chunk]
        mean[shaded_steps, lo:lo + chunk] = part.mean(axis=2, dtype=np.float64)
        worst[shaded_steps, lo:lo + chunk] = np.maximum.reduceat(
            part if in_order else np.take(part, order, axis=2), starts, axis=2)
    return mean, worst


# --------------------------------------------------------------------------- result
@dataclass(frozen=True, eq=False)
class SubstringLight:
    """What the most shaded cell of each substring receives, made a block of modules at a time.

    The (T, M, S) array of :attr:`ModuleIrradiance.substring_effective` is the largest of an
    evaluation (518 MB on a roof of 4,930 modules). This holds what it is made of, so that
    the power of each module can be worked out a block of modules at a time without it
    (:meth:`block`), and the array itself is made only when it is read.

    Attributes
    ----------
    n_steps : int
        Steps of the weather, T.
    lit_steps : numpy.ndarray of int, shape (L,)
        Increasing steps where some plane has light; at the others every substring receives
        nothing.
    group : numpy.ndarray of int, shape (M,)
        Plane of each module.
    beam_eff, sky_eff, ground_eff : numpy.ndarray, shape (L, O)
        Each plane's beam (with circumsolar), sky and ground-reflected irradiance after
        incidence-angle losses at the lit steps [W/m²].
    sky_view : numpy.ndarray, shape (M,)
        Sky-view ratio of each module.
    worst_rows : numpy.ndarray of float32, shape (M, S, R)
        Each substring's most shaded cell at the steps that have shade [fraction].
    shade_at : numpy.ndarray of int, shape (R',)
        Position among the lit steps of each step that has shade (those without light left
        out, see ``shade_kept``).
    shade_kept : numpy.ndarray of bool, shape (R,), or None
        Which steps with shade have light; None when all do.
    """

    n_steps: int
    lit_steps: np.ndarray
    group: np.ndarray
    beam_eff: np.ndarray
    sky_eff: np.ndarray
    ground_eff: np.ndarray
    sky_view: np.ndarray
    worst_rows: np.ndarray
    shade_at: np.ndarray
    shade_kept: np.ndarray | None

    @property
    def n_substrings(self) -> int:
        """Substrings per module, S."""
        return self.worst_rows.shape[1]

    def block(self, part: slice) -> np.ndarray:
        """Irradiance of each substring's most shaded cell, modules ``part``, lit steps only.

        ``(1 - worst) · beam + sky · sky_view + ground`` after incidence-angle losses, in
        single precision [W/m²].

        Parameters
        ----------
        part : slice
            A block of modules (columns), step 1.

        Returns
        -------
        numpy.ndarray of float32, shape (L, width, S)
            The values of ``substring_effective[lit_steps, part]``.
        """
        g = self.group[part]
        width, n_sub = len(g), self.n_substrings
        if width and (g == g[0]).all():  # one plane: its columns broadcast, no gather
            g = slice(g[0], g[0] + 1)
        out = np.zeros((len(self.lit_steps), width, n_sub), dtype=np.float32)
        if len(self.shade_at):
            worst = self.worst_rows[part]
            if self.shade_kept is not None:
                worst = worst[:, :, self.shade_kept]
            out[self.shade_at] = worst.transpose(2, 0, 1)
        diffuse = self.sky_eff[:, g] * self.sky_view[part]
        diffuse += self.ground_eff[:, g]
        # (1 - worst) · beam + diffuse in single precision, one substring at a time (a
        # broadcast over the short last axis is slow)
        np.subtract(np.float32(1.0), out, out=out)
        beam32, diffuse32 = self.beam_eff[:, g].astype(np.float32), diffuse.astype(np.float32)
        for s in range(n_sub):
            one = out[:, :, s]
            one *= beam32
            one += diffuse32
        return out


@dataclass(frozen=True, eq=False)
class ModuleIrradiance:
    """Irradiance and cell temperature of each module at each step. Computed, never saved.

    The unshaded figures depend on a module's plane only: they are held per plane
    (``plane_*``, (T, O)) and gathered into (T, M) arrays each time they are read, so a
    roof of thousands of modules on a few planes does not hold them per module. The
    irradiance of each substring's most shaded cell is made from :attr:`substring_light`
    when first read.

    Attributes
    ----------
    times : pandas.DatetimeIndex
        Sun times of the weather, T steps.
    poa_global : numpy.ndarray, shape (T, M)
        Module-mean plane-of-array irradiance before incidence-angle losses, with shade
        [W/m²].
    poa_global_unshaded : numpy.ndarray, shape (T, M)
        The same without shade; it equals pvlib's ``poa_global`` for the module's plane
        (gathered from :attr:`plane_poa_global` on each read).
    effective, effective_unshaded : numpy.ndarray, shape (T, M)
        Module-mean irradiance reaching the cells (after IAM), with and without shade [W/m²]
        (the unshaded one gathered from :attr:`plane_effective` on each read).
    substring_effective : numpy.ndarray of float32, shape (T, M, S)
        Irradiance reaching the most shaded cell of each substring (after IAM) [W/m²]; single
        precision, as the largest array of the evaluation; made from
        :attr:`substring_light` on the first read and kept.
    temp_cell, temp_cell_unshaded : numpy.ndarray, shape (T, M)
        Cell temperature from the shaded and the unshaded irradiance [°C] (the unshaded one
        gathered from :attr:`plane_temp_cell` on each read).
    orientations : numpy.ndarray, shape (O, 2)
        Distinct (tilt, azimuth) planes transposed [degrees].
    group : numpy.ndarray of int, shape (M,)
        Plane of each module.
    settings : dict
        Sky model, IAM model and mount used.
    plane_poa_global, plane_effective, plane_temp_cell : numpy.ndarray, shape (T, O)
        Unshaded ``poa_global``, effective irradiance [W/m²] and cell temperature [°C] of
        each plane.
    substring_light : SubstringLight
        What :attr:`substring_effective` is made of, a block of modules at a time.
    """

    times: pd.DatetimeIndex
    poa_global: np.ndarray
    effective: np.ndarray
    temp_cell: np.ndarray
    orientations: np.ndarray
    group: np.ndarray
    settings: dict
    plane_poa_global: np.ndarray
    plane_effective: np.ndarray
    plane_temp_cell: np.ndarray
    substring_light: SubstringLight

    @cached_property
    def substring_effective(self) -> np.ndarray:
        """Irradiance of each substring's most shaded cell, (T, M, S) float32 [W/m²]."""
        light = self.substring_light
        n_modules, lit = len(self.group), light.lit_steps
        out = np.zeros((light.n_steps, n_modules, light.n_substrings), dtype=np.float32)
        rows = slice(None) if len(lit) == light.n_steps else lit
        block = even_block(n_modules, _BLOCK_VALUES // max(1, len(lit)))

        def fill(lo: int) -> None:  # zero where no light
            out[rows, lo:lo + block] = light.block(slice(lo, lo + block))

        parallel_map(fill, range(0, n_modules, block))
        return out

    @property
    def poa_global_unshaded(self) -> np.ndarray:
        """Unshaded plane-of-array irradiance of each module, (T, M) [W/m²]."""
        return self.plane_poa_global[:, self.group]

    @property
    def effective_unshaded(self) -> np.ndarray:
        """Unshaded irradiance reaching the cells of each module, (T, M) [W/m²]."""
        return self.plane_effective[:, self.group]

    @property
    def temp_cell_unshaded(self) -> np.ndarray:
        """Cell temperature of each module from the unshaded irradiance, (T, M) [°C]."""
        return self.plane_temp_cell[:, self.group]


def module_irradiance(weather: Weather, surface_tilt, surface_azimuth, *, beam_shaded=None,
                      shade_rows=None, cell_substring=None, n_substrings: int | None = None,
                      sky_view=None,
                      model: str = "perez", iam_model: str | None = "physical",
                      mount: str = "close_mount_glass_glass",
                      plane_cache: dict | None = None) -> ModuleIrradiance:
    """Compute each module's irradiance with shade applied per component, and its temperature.

    Parameters
    ----------
    weather : layout.sky.weather.Weather
        Weather and sun of the site.
    surface_tilt, surface_azimuth : array_like, shape (M,)
        Plane of each module [degrees] (e.g. :attr:`PlacedModule.tilt_deg`, ``azimuth_deg``).
    beam_shaded : array_like, shape (T, M, K), keyword-only, optional
        Beam shaded fraction per cell (or per substring) [fraction]; T is every step of the
        weather or only its sun-up steps (``weather.solar_position["sun_up"]``, the same steps
        as :func:`layout.sky.sun.sun_above_horizon`). Default: no beam shade, one cell per
        substring.
    shade_rows : tuple, keyword-only, optional
        The same fractions held only at the steps that have shade, instead of
        ``beam_shaded``: ``(steps, by_cell)`` with ``steps`` (R,) increasing indices into
        every step of the weather and ``by_cell`` (M, K, R) the fractions cell-major (as
        :attr:`layout.shading.ModuleShade.by_cell`); every other step is unshaded. Or
        ``(steps, mean_rows, worst_rows)``: the module mean (M, R) and each substring's most
        shaded cell (M, S, R), as :class:`layout.shading.ModuleShade` holds them (then
        ``cell_substring`` is not needed).
    cell_substring : array_like of int, shape (K,), keyword-only, optional
        Substring of each of the K columns (e.g. ``ModuleSpec.substring_of_cell``); default:
        the columns are substrings.
    n_substrings : int, keyword-only, optional
        Number of substrings (``ModuleSpec.bypass_diodes``); default from ``cell_substring``,
        or 3 without ``beam_shaded``.
    sky_view : array_like, shape (M,), keyword-only, optional
        Sky-view ratio of each module (isotropic sky diffuse with obstructions over without, 0
        to 1, see the module docstring); default 1.
    model : {"perez", "haydavies", "isotropic"}, keyword-only, default "perez"
        Sky diffuse model.
    iam_model : {"physical", "ashrae"} or None, keyword-only, default "physical"
        Incidence-angle model; None skips incidence-angle losses.
    mount : str, keyword-only, default "close_mount_glass_glass"
        SAPM temperature parameter set, one of :data:`MOUNTS`.
    plane_cache : dict, keyword-only, optional
        A dict the caller keeps for one ``weather``: the unshaded components of each plane
        (:func:`plane_components`) are stored in it and reused by later calls, which then
        only apply shade. Give a new dict when the weather changes.

    Returns
    -------
    ModuleIrradiance
    """
    if not isinstance(weather, Weather):
        raise InputError("weather", "must be a layout.sky.weather.Weather",
                         value=type(weather).__name__)
    model = _check_model(model)
    if mount not in MOUNTS:
        raise InputError("mount", "unknown mount for the cell temperature", value=mount,
                         allowed=", ".join(MOUNTS))
    orientations, group = orientation_groups(surface_tilt, surface_azimuth)
    n_steps, n_modules = len(weather.data), len(group)

    if beam_shaded is not None and shade_rows is not None:
        raise InputError("shade_rows", "cannot be given together with beam_shaded",
                         allowed="one of beam_shaded and shade_rows")
    # the shade as (steps, module mean (M, R), each substring's worst cell (M, S, R)) at the
    # steps R that have some
    if shade_rows is not None:
        steps, mean_rows, worst_rows = _row_shade(shade_rows, n_steps, n_modules,
                                                  cell_substring, n_substrings)
    elif beam_shaded is None:
        s = 3 if n_substrings is None else int(n_substrings)
        steps = np.zeros(0, dtype=np.intp)
        mean_rows = np.zeros((n_modules, 0))
        worst_rows = np.zeros((n_modules, s, 0), dtype=np.float32)
    else:
        f = np.asarray(beam_shaded)
        if f.ndim != 3 or f.shape[1] != n_modules:
            raise InputError("beam_shaded", "must be an array (time, module, cell)",
                             value=f.shape, allowed=f"(T, {n_modules}, K)")
        mean_f, worst_f = substring_shade(f, cell_substring=cell_substring,
                                          n_substrings=n_substrings)
        steps = np.arange(n_steps)
        mean_rows = _expand_steps(mean_f, weather, "beam_shaded").T
        worst_rows = _expand_steps(worst_f, weather, "beam_shaded").transpose(1, 2, 0)
    if sky_view is None:
        svf = np.ones(n_modules)
    else:
        svf = np.asarray(sky_view, dtype=float).reshape(-1)
        if svf.shape != (n_modules,) or not np.isfinite(svf).all() \
                or (svf < 0).any() or (svf > 1 + 1e-9).any():
            raise InputError("sky_view", "needs one ratio from 0 to 1 per module",
                             value=svf.shape if svf.shape != (n_modules,) else None,
                             allowed=f"{n_modules} values from 0 to 1")
        svf = np.minimum(svf, 1.0)

    # per plane (T, O): transposition and IAM once per orientation
    n_planes = len(orientations)
    parts = {name: np.empty((n_steps, n_planes)) for name in
             ("beam", "beam_eff", "sky", "sky_eff", "ground", "ground_eff", "poa_global")}
    for o, (tilt, azimuth) in enumerate(orientations):
        key = (float(tilt), float(azimuth), model, iam_model)
        plane = plane_cache.get(key) if plane_cache is not None else None
        if plane is None:
            plane = plane_components(weather, tilt, azimuth, model=model, iam_model=iam_model)
            if plane_cache is not None:
                plane_cache[key] = plane
        for name, values in plane.items():
            parts[name][:, o] = values
    # per module (T, M): gather the module's plane, then shade; a block of modules at a time
    # (every value is the module's own), so the temporaries stay a few (T, block) arrays.
    # Only the rows where some plane has light are worked: at the others every component is
    # zero, so each module's irradiance is zero (whatever its shade) and its cells sit at the
    # air temperature (SAPM at zero irradiance), which the arrays are filled with.
    params = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][mount]
    temp_air = weather.data["temp_air"].to_numpy()[:, None]
    wind = weather.data["wind_speed"].to_numpy()[:, None]
    lit_steps = np.logical_or.reduce([parts[name] != 0 for name in _SHADED_PARTS]).any(axis=1)
    lit_rows = np.flatnonzero(lit_steps)
    every_row = len(lit_rows) == n_steps
    rows = slice(None) if every_row else lit_rows
    here_parts = {name: parts[name] if every_row else parts[name][lit_rows]
                  for name in _SHADED_PARTS}
    temp_air_lit, wind_lit = temp_air[rows], wind[rows]
    poa, eff = np.zeros((n_steps, n_modules)), np.zeros((n_steps, n_modules))
    temp = np.empty((n_steps, n_modules))  # every block fills its columns, dark rows too
    dark_rows = np.flatnonzero(~lit_steps)
    # where each step with shade falls among the lit rows (a step without light drops out:
    # no light, however shaded)
    position = np.full(n_steps, -1)
    position[lit_rows] = np.arange(len(lit_rows))
    at = position[steps]
    kept = None if (at >= 0).all() else at >= 0
    at = at if kept is None else at[kept]
    block = even_block(n_modules, _BLOCK_VALUES // max(1, len(lit_rows)))

    def shade_block(lo: int) -> None:  # modules lo to lo + block, their columns only
        part = slice(lo, lo + block)
        g = group[part]
        width = len(g)
        if (g == g[0]).all():  # one plane: its columns broadcast, no gather
            g = slice(g[0], g[0] + 1)
        # the block's shade on the lit rows, zero where it has none
        mean_here = np.zeros((len(lit_rows), width))
        if len(at):
            mean_held = mean_rows[part]
            mean_here[at] = (mean_held if kept is None else mean_held[:, kept]).T
        lit = 1.0 - mean_here
        here = here_parts["beam"][:, g] * lit
        here += here_parts["sky"][:, g] * svf[part]
        here += here_parts["ground"][:, g]
        poa[rows, part] = here
        temp[rows, part] = pvlib.temperature.sapm_cell(here, temp_air_lit, wind_lit, **params)
        if len(dark_rows):
            temp[dark_rows, part] = temp_air[dark_rows]  # SAPM at zero irradiance
        diffuse_eff = here_parts["sky_eff"][:, g] * svf[part]
        diffuse_eff += here_parts["ground_eff"][:, g]
        here = here_parts["beam_eff"][:, g] * lit
        here += diffuse_eff
        eff[rows, part] = here

    parallel_map(shade_block, range(0, n_modules, block))
    # each substring's most shaded cell: made a block of modules at a time where it is needed
    light = SubstringLight(
        n_steps=n_steps, lit_steps=lit_rows, group=group, beam_eff=here_parts["beam_eff"],
        sky_eff=here_parts["sky_eff"], ground_eff=here_parts["ground_eff"], sky_view=svf,
        worst_rows=worst_rows, shade_at=at, shade_kept=kept)
    # unshaded, once per plane
    plane_eff = parts["beam_eff"] + parts["sky_eff"]
    plane_eff += parts["ground_eff"]
    plane_temp = np.asarray(pvlib.temperature.sapm_cell(parts["poa_global"], temp_air, wind,
                                                        **params))
    settings = {"model": model, "iam_model": iam_model, "mount": mount}
    return ModuleIrradiance(
        times=weather.times, poa_global=poa, effective=eff, temp_cell=temp,
        orientations=orientations, group=group, settings=settings,
        plane_poa_global=parts["poa_global"], plane_effective=plane_eff,
        plane_temp_cell=plane_temp, substring_light=light)
