"""DC power of shaded modules: irradiance only, bypass diodes per module, bypass diodes in strings.

Power at uniform irradiance is pvlib's PVWatts model (:func:`pvlib.pvsystem.pvwatts_dc`,
Dobos 2014): ``pdc = G/1000 · pdc0 · (1 + γ (T_cell − 25 °C))`` with ``pdc0`` the module's STC
power (:attr:`ModuleSpec.power_w`) and ``γ`` the power temperature coefficient, by default
:data:`DEFAULT_GAMMA_PDC`. Optional inverter losses are pvlib's PVWatts inverter
(:func:`pvlib.inverter.pvwatts`). What is ours is how shade splits a module or a string into
parts that PVWatts then rates.

The three shade models
----------------------
``"irradiance"``
    Power follows the module-mean shaded irradiance, as if every cell could carry its own
    current. Holds for a shadow spread evenly over all cells (a soft, uniform shade, sky-view
    loss alone); optimistic for a hard shadow on part of a module, where the most shaded cell
    of each substring sets its current.
``"module"``
    Bypass diodes with module-level power electronics (micro-inverters, optimisers): each
    module works at its own best point. Holds for modules that each have their own tracker.
``"string"``
    Bypass diodes with a string inverter: the modules of a string carry one current and the
    string works at its best point. Holds for series strings on one tracker; a module's shadow
    can then cost power in the other modules of its string.

Bypass-diode model and its best point
-------------------------------------
Each substring ``j`` (the cells behind one bypass diode) is rated by its most shaded cell: its
current is proportional to that cell's irradiance ``G_j`` (photocurrent is proportional to
irradiance) and its voltage is a fixed share of the module's (the logarithmic dependence of
voltage on irradiance is ignored). At a series current set by an irradiance ``g``, every
substring with ``G_j ≥ g`` carries the current at its share of the voltage, and every substring
with ``G_j < g`` cannot and is bypassed (it contributes no voltage; the diode's drop is
ignored). The series power is therefore

``P(g) = Σ_{j : G_j ≥ g} p_j(g)``, with ``p_j(g) = pvwatts_dc(g, T_j, pdc0 / S, γ)``

for S substrings per module. ``P`` grows with ``g`` between two consecutive ``G_j`` (the same
substrings carry more current) and drops where ``g`` passes a ``G_j`` (that substring is
bypassed), so its maximum is at one of the ``G_j``: with ``n`` substrings in series the best
point is one of ``n`` candidates. Sorting ``G`` in decreasing order, ``G_(1) ≥ … ≥ G_(n)``,
candidate ``k`` keeps the ``k`` brightest substrings at current ``G_(k)``:

``P_k = G_(k) / 1000 · Σ_{i ≤ k} w_(i)``, with ``w_j = pvwatts_dc(1000, T_j, pdc0 / S, γ)``

(PVWatts is linear in irradiance). For one module at uniform temperature this is
``P = max_k (k / S) · pvwatts_dc(G_(k), T)``. Unshaded (all ``G_j`` equal) it is PVWatts of
the module. The model is checked in the tests against a full I-V solution of cells in reverse
bias with bypass diodes (pvlib's ``bishop88``).

Strings
-------
Modules are assigned to strings by the user (lists of module ids) or by :func:`assign_strings`:
on each face in turn, rows from the eave up, each row walked in alternating directions (the way
an installer runs the wire), cut into ``ceil(n / max_length)`` strings of as equal a length as
possible.

References
----------
.. [1] A. Dobos, "PVWatts Version 5 Manual", NREL/TP-6A20-62641, 2014.
.. [2] J. Bishop, "Computer simulation of the effects of electrical mismatches in photovoltaic
   cell interconnection circuits", Solar Cells 25(1):73-89, 1988.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import pandas as pd
import pvlib

from ..errors import InputError, check_range
from ..runtime import even_block, parallel_map
from ..scene.modules import ModuleSpec
from .irradiance import ModuleIrradiance

__all__ = [
    "DEFAULT_GAMMA_PDC",
    "DEFAULT_MAX_STRING_LENGTH",
    "SHADE_MODELS",
    "DcPower",
    "ElectricalOptions",
    "assign_strings",
    "dc_irradiance_only",
    "dc_module_level",
    "dc_power",
    "dc_strings",
]

#: Shade models offered, see the module docstring.
SHADE_MODELS = ("irradiance", "module", "string")

#: Power temperature coefficient of crystalline-silicon modules [1/°C] (common practice;
#: datasheets give -0.0029 to -0.0045/°C; use the datasheet value when known).
DEFAULT_GAMMA_PDC = -0.0037

#: Longest string built automatically (common practice for residential string inverters;
#: the inverter's voltage window sets the real limit).
DEFAULT_MAX_STRING_LENGTH = 12

_OPTION_FIELDS = ("shade_model", "gamma_pdc", "max_string_length", "strings",
                  "inverter_efficiency")


@dataclass(frozen=True)
class ElectricalOptions:
    """How shade turns into DC (and optionally AC) power.

    Parameters
    ----------
    shade_model : {"irradiance", "module", "string"}, default "module"
        See the module docstring.
    gamma_pdc : float, default -0.0037
        Power temperature coefficient [1/°C], -0.01 to 0.
    max_string_length : int, default 12
        Longest automatic string [modules], 1 to 100 (``"string"`` model only).
    strings : tuple of tuple of str, optional
        The user's strings as module ids; None assigns them automatically.
    inverter_efficiency : float, optional
        Nominal inverter efficiency for :func:`pvlib.inverter.pvwatts` [fraction], 0.5 to 1;
        None reports DC power only.
    """

    shade_model: str = "module"
    gamma_pdc: float = DEFAULT_GAMMA_PDC
    max_string_length: int = DEFAULT_MAX_STRING_LENGTH
    strings: tuple[tuple[str, ...], ...] | None = None
    inverter_efficiency: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        if self.shade_model not in SHADE_MODELS:
            raise InputError("shade_model", "unknown shade model", value=self.shade_model,
                             allowed=", ".join(SHADE_MODELS))
        set_(self, "gamma_pdc", check_range("gamma_pdc", self.gamma_pdc, -0.01, 0.0,
                                            unit="1/°C"))
        set_(self, "max_string_length", _whole("max_string_length", self.max_string_length,
                                               1, 100))
        if self.strings is not None:
            set_(self, "strings", _check_string_ids(self.strings))
        if self.inverter_efficiency is not None:
            set_(self, "inverter_efficiency", check_range(
                "inverter_efficiency", self.inverter_efficiency, 0.5, 1.0))

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "shade_model": self.shade_model, "gamma_pdc": self.gamma_pdc,
            "max_string_length": self.max_string_length,
            "strings": None if self.strings is None else [list(s) for s in self.strings],
            "inverter_efficiency": self.inverter_efficiency,
        }

    @classmethod
    def from_dict(cls, data: dict) -> ElectricalOptions:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        if not isinstance(data, dict):
            raise InputError("electrical", "must be a mapping of fields",
                             value=type(data).__name__)
        unknown = sorted(set(data) - set(_OPTION_FIELDS))
        if unknown:
            raise InputError(unknown[0], "is not an electrical option",
                             allowed=", ".join(_OPTION_FIELDS))
        return cls(**data)


def _whole(field: str, value, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer, float)) \
            or value != int(value) or not low <= value <= high:
        raise InputError(field, "must be a whole number in range", value=value,
                         allowed=f"{low} to {high}")
    return int(value)


def _check_string_ids(strings) -> tuple[tuple[str, ...], ...]:
    if isinstance(strings, (str, bytes)) or not hasattr(strings, "__iter__"):
        raise InputError("strings", "must be a list of lists of module ids")
    out, seen = [], set()
    for i, string in enumerate(strings):
        if isinstance(string, (str, bytes)) or not hasattr(string, "__iter__"):
            raise InputError(f"strings[{i}]", "must be a list of module ids", value=string)
        ids = tuple(string)
        if not ids:
            raise InputError(f"strings[{i}]", "is empty", allowed="at least one module id")
        for module_id in ids:
            if not isinstance(module_id, str):
                raise InputError(f"strings[{i}]", "must hold module ids (text)",
                                 value=module_id)
            if module_id in seen:
                raise InputError(f"strings[{i}]", "repeats a module already in a string",
                                 value=module_id)
            seen.add(module_id)
        out.append(ids)
    return tuple(out)


# --------------------------------------------------------------------------- strings
def assign_strings(modules, *, max_length: int = DEFAULT_MAX_STRING_LENGTH
                   ) -> tuple[tuple[str, ...], ...]:
    """Assign modules to series strings, row by row on each face.

    Faces in order of first appearance; on each face rows from the eave (row 0) up, walked
    left to right, then right to left, and so on. Each face's sequence of ``n`` modules is cut
    into ``ceil(n / max_length)`` consecutive strings whose lengths differ by at most one.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The active modules.
    max_length : int, keyword-only, default 12
        Most modules in one string.

    Returns
    -------
    tuple of tuple of str
        Module ids of each string.
    """
    max_length = _whole("max_length", max_length, 1, 100)
    faces: dict[str, list] = {}
    for m in modules:
        faces.setdefault(m.face, []).append(m)
    strings = []
    for face_modules in faces.values():
        rows: dict[int, list] = {}
        for m in face_modules:
            rows.setdefault(m.row, []).append(m)
        walk = []
        for turn, row in enumerate(sorted(rows)):
            ordered = sorted(rows[row], key=lambda m: m.column)
            walk.extend(ordered if turn % 2 == 0 else ordered[::-1])
        count = math.ceil(len(walk) / max_length)
        base, extra = divmod(len(walk), count)
        start = 0
        for i in range(count):
            size = base + (1 if i < extra else 0)
            strings.append(tuple(m.id for m in walk[start:start + size]))
            start += size
    return tuple(strings)


def _string_index(strings, module_ids) -> list[np.ndarray]:
    """Return the module positions of each string; every module must be in exactly one."""
    position = {module_id: i for i, module_id in enumerate(module_ids)}
    out, used = [], set()
    for i, string in enumerate(_check_string_ids(strings)):
        for module_id in string:
            if module_id not in position:
                raise InputError(f"strings[{i}]", "names a module not in the layout",
                                 value=module_id)
        used.update(string)
        out.append(np.array([position[m] for m in string], dtype=np.intp))
    missing = [m for m in module_ids if m not in used]
    if missing:
        raise InputError("strings", "leave modules out of every string", value=missing[:5],
                         allowed="every active module in one string")
    return out


# --------------------------------------------------------------------------- kernels
def dc_irradiance_only(effective, temp_cell, pdc0: float, *,
                       gamma_pdc: float = DEFAULT_GAMMA_PDC) -> np.ndarray:
    """DC power that follows the module-mean irradiance (PVWatts, optimistic under hard shade).

    Parameters
    ----------
    effective : array_like, shape (T, M)
        Module-mean irradiance reaching the cells [W/m²].
    temp_cell : array_like, shape (T, M)
        Cell temperature [°C].
    pdc0 : float
        Module power at STC [W].
    gamma_pdc : float, keyword-only
        Power temperature coefficient [1/°C].

    Returns
    -------
    numpy.ndarray, shape (T, M)
        DC power of each module [W].
    """
    return np.asarray(pvlib.pvsystem.pvwatts_dc(np.asarray(effective, dtype=float),
                                                np.asarray(temp_cell, dtype=float),
                                                pdc0, gamma_pdc))


#: Values per (step, module) temporary when a model works a block of modules at a time.
_BLOCK_VALUES = 1 << 21
#: Substring values (steps × modules × substrings) from which the string model works its
#: blocks on threads (:func:`layout.runtime.parallel_map`).
_THREADED_STRING_VALUES = 1 << 22


def dc_module_level(substring_irradiance, temp_cell, pdc0: float, *,
                    gamma_pdc: float = DEFAULT_GAMMA_PDC) -> np.ndarray:
    """DC power of modules with bypass diodes, each at its own best point.

    Parameters
    ----------
    substring_irradiance : array_like, shape (T, M, S)
        Irradiance of each substring's most shaded cell [W/m²].
    temp_cell : array_like, shape (T, M)
        Cell temperature [°C].
    pdc0 : float
        Module power at STC [W].
    gamma_pdc : float, keyword-only
        Power temperature coefficient [1/°C].

    Returns
    -------
    numpy.ndarray, shape (T, M)
        ``max_k (k / S) · pvwatts_dc(G_(k), T)`` [W], see the module docstring.
    """
    g = np.asarray(substring_irradiance)
    if g.ndim != 3:
        raise InputError("substring_irradiance", "must be an array (time, module, substring)",
                         value=g.shape)
    s = g.shape[2]
    temp = np.asarray(temp_cell, dtype=float)
    if s == 0:
        return np.zeros(g.shape[:2])
    if temp.shape != g.shape[:2]:
        temp = np.broadcast_to(temp, g.shape[:2])
    # no light at a step on any module: no power; the rest (about half a year of hours) are
    # worked on alone, each value as it would be among all the steps
    lit = _lit_steps(g)
    return _module_level_power(g.shape[1], lit, lambda part: g[lit, part], temp, pdc0,
                               gamma_pdc, n_steps=len(g))


def _module_level_power(n_modules: int, lit, lit_block, temp, pdc0: float, gamma_pdc: float,
                        *, n_steps: int) -> np.ndarray:
    """:func:`dc_module_level` from the substrings' irradiance at the steps ``lit`` (L,).

    ``lit_block(part)`` gives the (L, width, S) irradiance of the modules ``part`` (a slice)
    at those steps; every other step has no power. Returns (T, M) [W].
    """
    # The k-th brightest substring G_(k) is the substring j that has k substrings at least
    # as bright (ties share the largest k), so the candidates (k / S) G_(k) are
    # rank_j / S * G_j, found with S² whole-array comparisons instead of a sort along the
    # short substring axis. pvwatts_dc is G times a factor of the temperature: the best
    # candidate is the largest while that factor is positive, the smallest otherwise.
    out = np.zeros((n_steps, n_modules))
    # a block of modules at a time (every step is reduced within its module): the
    # temporaries stay a few (T, block) arrays on a roof of thousands of modules
    block = even_block(n_modules, _BLOCK_VALUES // max(1, len(lit)))

    def block_power(lo: int) -> None:  # modules lo to lo + block, their columns only
        part = slice(lo, lo + block)
        temp_lit = temp[lit, part]
        lit_g = lit_block(part)
        s = lit_g.shape[2]
        substrings = [np.ascontiguousarray(lit_g[:, :, j]) for j in range(s)]  # S × (T, m)
        highest = lowest = None
        for brightness in substrings:
            rank = np.greater_equal(substrings[0], brightness).view(np.uint8)
            for other in substrings[1:]:
                rank = rank + np.greater_equal(other, brightness).view(np.uint8)
            candidate = np.multiply(rank, brightness / s, dtype=np.float64)
            if highest is None:
                highest, lowest = candidate, candidate.copy()
            else:
                np.maximum(highest, candidate, out=highest)
                np.minimum(lowest, candidate, out=lowest)
        # pvwatts_dc(G, T, pdc0, γ) = G · 0.001 · pdc0 · (1 + γ (T − 25)), in pvlib's order
        factor = pvlib.pvsystem.pvwatts_dc(1000.0, temp_lit, 1.0, gamma_pdc)
        best = np.where(factor >= 0, highest, lowest)
        best *= 0.001
        best *= pdc0
        best *= factor
        out[lit, part] = best

    parallel_map(block_power, range(0, n_modules, block))
    return out


def _gather_columns(values: np.ndarray, columns: np.ndarray) -> np.ndarray:
    """Return ``values[:, columns]``, gathered a block of columns at a time on threads.

    On a roof of thousands of modules the (T, M) result is hundreds of megabytes, and
    touching fresh memory for the first time is most of the cost: the threads share it. The
    result is laid out column by column, as numpy lays out ``values[:, columns]``, so that
    sums over the steps take the same order and give the same figures bit for bit.
    """
    out = np.empty((len(values), len(columns)), dtype=values.dtype, order="F")
    block = even_block(len(columns), _BLOCK_VALUES // max(1, len(values)))

    def gather(lo: int) -> None:
        out[:, lo:lo + block] = values[:, columns[lo:lo + block]]

    parallel_map(gather, range(0, len(columns), block))
    return out


def _lit_steps(g: np.ndarray) -> np.ndarray:
    """Return the indices of the steps where some substring has light."""
    return np.flatnonzero(np.asarray(g).reshape(len(g), -1).max(axis=1, initial=0.0) > 0)


def _series_best(g: np.ndarray, w: np.ndarray):
    """Best point of substrings in series: g, w (T, B, n) → power (T, B), current level (T, B)."""
    order = np.argsort(-g, axis=2)
    g_sorted = np.take_along_axis(g, order, axis=2)
    w_cum = np.cumsum(np.take_along_axis(w, order, axis=2), axis=2)
    candidates = g_sorted * w_cum * 0.001  # P_k of the module docstring
    best = np.argmax(candidates, axis=2)[..., None]
    power = np.take_along_axis(candidates, best, axis=2)[..., 0]
    level = np.take_along_axis(g_sorted, best, axis=2)[..., 0]
    return power, level


def dc_strings(substring_irradiance, temp_cell, pdc0: float, strings, *,
               gamma_pdc: float = DEFAULT_GAMMA_PDC, chunk_steps: int = 2048):
    """DC power of series strings with bypass diodes, each string at its best point.

    Parameters
    ----------
    substring_irradiance : array_like, shape (T, M, S)
        Irradiance of each substring's most shaded cell [W/m²].
    temp_cell : array_like, shape (T, M)
        Cell temperature [°C].
    pdc0 : float
        Module power at STC [W].
    strings : sequence of array_like of int
        Module positions (0 to M - 1) of each string; every module in exactly one.
    gamma_pdc : float, keyword-only
        Power temperature coefficient [1/°C].
    chunk_steps : int, keyword-only, default 2048
        Time steps handled at once, to bound memory.

    Returns
    -------
    module_power : numpy.ndarray, shape (T, M)
        Each module's share of its string's power at the string's operating point [W]: its
        substrings that carry the string current times their voltage share.
    string_power : numpy.ndarray, shape (T, n_strings)
        Power of each string [W]; the sum of its modules' shares.
    """
    g_all = np.asarray(substring_irradiance)
    if g_all.ndim != 3:
        raise InputError("substring_irradiance", "must be an array (time, module, substring)",
                         value=g_all.shape)
    n_steps, n_modules, s = g_all.shape
    temp_all = np.asarray(temp_cell, dtype=float)
    strings = [np.asarray(x, dtype=np.intp) for x in strings]
    flat = np.concatenate(strings) if strings else np.zeros(0, np.intp)
    if len(flat) != n_modules or len(np.unique(flat)) != n_modules \
            or (n_modules and (flat.min() < 0 or flat.max() >= n_modules)):
        raise InputError("strings", "must hold every module exactly once",
                         allowed=f"positions 0 to {n_modules - 1}")
    module_power = np.zeros((n_steps, n_modules))
    string_power = np.zeros((n_steps, len(strings)))
    lengths = np.array([len(x) for x in strings])
    lit = _lit_steps(g_all)  # steps with any light: nights cost nothing

    by_length = {}  # length -> the strings of that length and their modules (B, L)
    for length in np.unique(lengths):
        which = np.flatnonzero(lengths == length)
        by_length[length] = which, np.stack([strings[i] for i in which])

    def string_block(work) -> None:  # the strings of one length, at one block of steps
        length, lo = work
        which, members = by_length[length]
        steps = lit[lo:lo + chunk_steps]
        g = g_all[steps][:, members, :]  # (t, B, L, S)
        # w: substring power at 1000 W/m² and the module's temperature (PVWatts)
        w_module = np.asarray(pvlib.pvsystem.pvwatts_dc(1000.0, temp_all[steps][:, members],
                                                        pdc0 / s, gamma_pdc))
        w = np.broadcast_to(w_module[..., None], g.shape)
        t, b = g.shape[:2]
        power, level = _series_best(g.reshape(t, b, length * s), w.reshape(t, b, length * s))
        string_power[np.ix_(steps, which)] = power
        carries = g >= level[:, :, None, None]
        if s <= 3:
            # a module's substrings share one w, so the sum of the k that carry is k · w,
            # rounded once, as numpy's sum of k copies of w is for k <= 3
            carried = np.count_nonzero(carries, axis=3) * w_module
        else:
            carried = (carries * w).sum(axis=3)
        share = carried * level[:, :, None] * 0.001  # (t, B, L)
        module_power[np.ix_(steps, members.reshape(-1))] = share.reshape(t, b * length)

    # the blocks write their own steps of their own strings: on threads for a large roof
    work = [(length, lo) for length in by_length for lo in range(0, len(lit), chunk_steps)]
    parallel_map(string_block, work, threads=None if g_all.size >= _THREADED_STRING_VALUES else 1)
    return module_power, string_power


# --------------------------------------------------------------------------- result
@dataclass(frozen=True, eq=False)
class DcPower:
    """Power of each module at each step under one shade model. Computed, never saved.

    Attributes
    ----------
    times : pandas.DatetimeIndex
        Sun times, T steps.
    module_ids : tuple of str
        M module ids, in column order.
    options : ElectricalOptions
        The settings used.
    dc_w : numpy.ndarray, shape (T, M)
        DC power with shade [W] (for strings: each module's share).
    unshaded_w : numpy.ndarray, shape (T, P) or (T, M)
        DC power without shade [W]: of each plane, module ``m`` lying in plane ``group[m]``;
        or, with ``group`` None, of each module (strings: their unshaded power still depends
        on their modules). :attr:`dc_unshaded_w` gives it per module.
    group : numpy.ndarray of int, shape (M,), or None
        Plane of each module (a column of ``unshaded_w``), or None.
    strings : tuple of tuple of str or None
        The strings used (``"string"`` model only).
    string_dc_w : numpy.ndarray, shape (T, n_strings) or None
        DC power of each string [W].
    ac_w, ac_unshaded_w : numpy.ndarray, shape (T, M) or None
        AC power after pvlib's PVWatts inverter, when an efficiency is set [W]; for strings
        each module's share of its string inverter's output.
    """

    times: pd.DatetimeIndex
    module_ids: tuple[str, ...]
    options: ElectricalOptions
    dc_w: np.ndarray
    unshaded_w: np.ndarray
    group: np.ndarray | None = None
    strings: tuple[tuple[str, ...], ...] | None = None
    string_dc_w: np.ndarray | None = None
    ac_w: np.ndarray | None = None
    ac_unshaded_w: np.ndarray | None = None

    @cached_property
    def dc_unshaded_w(self) -> np.ndarray:
        """DC power of each module without shade [W], (T, M), gathered on first reading.

        Laid out column by column, so that sums over the steps give each module the same
        figure as the sums of its plane's column (:func:`layout.power.metrics.module_table`
        sums the planes, and a roof of thousands of modules never holds this array unless a
        monthly or hourly table asks for it).
        """
        if self.group is None:
            return self.unshaded_w
        return _gather_columns(self.unshaded_w, self.group)


def _ac_share(dc: np.ndarray, groups, pdc0_each: float, efficiency: float) -> np.ndarray:
    """AC power per module: one PVWatts inverter per group, rated at the group's STC power."""
    ac = np.zeros_like(dc)
    for members in groups:
        total = dc[:, members].sum(axis=1)
        rated = pdc0_each * len(members)
        out = np.asarray(pvlib.inverter.pvwatts(total, rated, eta_inv_nom=efficiency))
        with np.errstate(invalid="ignore", divide="ignore"):
            ratio = np.where(total > 0, out / total, 0.0)
        ac[:, members] = dc[:, members] * ratio[:, None]
    return ac


def dc_power(irradiance: ModuleIrradiance, spec: ModuleSpec,
             options: ElectricalOptions | None = None, *, modules=None,
             module_ids=None) -> DcPower:
    """Turn module irradiance into DC power with the chosen shade model.

    Parameters
    ----------
    irradiance : layout.power.irradiance.ModuleIrradiance
        Irradiance and temperatures of M modules.
    spec : layout.scene.modules.ModuleSpec
        The module: ``power_w`` is PVWatts' ``pdc0``; ``bypass_diodes`` must match the
        substrings of ``irradiance``.
    options : ElectricalOptions, optional
        Shade model and parameters; default ``ElectricalOptions()`` (module-level).
    modules : sequence of layout.fill.placed.PlacedModule, keyword-only, optional
        The M modules in column order: their ids, and rows for automatic strings.
    module_ids : sequence of str, keyword-only, optional
        Ids of the M modules when ``modules`` is not given (user strings only).

    Returns
    -------
    DcPower
    """
    options = options or ElectricalOptions()
    if not isinstance(irradiance, ModuleIrradiance):
        raise InputError("irradiance", "must be a layout.power.irradiance.ModuleIrradiance",
                         value=type(irradiance).__name__)
    if not isinstance(spec, ModuleSpec):
        raise InputError("spec", "must be a layout.scene.modules.ModuleSpec",
                         value=type(spec).__name__)
    n_modules = irradiance.effective.shape[1]
    if modules is not None:
        module_ids = tuple(m.id for m in modules)
    elif module_ids is None:
        module_ids = tuple(f"m{i}" for i in range(n_modules))
    module_ids = tuple(module_ids)
    if len(module_ids) != n_modules:
        raise InputError("modules", "must give one module per irradiance column",
                         value=len(module_ids), allowed=f"{n_modules}")
    light = irradiance.substring_light
    if light.n_substrings != spec.bypass_diodes:
        raise InputError("spec.bypass_diodes", "does not match the substrings of the irradiance",
                         value=spec.bypass_diodes, allowed=f"{light.n_substrings}")
    pdc0, gamma = spec.power_w, options.gamma_pdc
    # unshaded power depends on the plane only: once per plane, gathered per module on reading
    unshaded = dc_irradiance_only(irradiance.plane_effective, irradiance.plane_temp_cell, pdc0,
                                  gamma_pdc=gamma)
    group = irradiance.group
    strings = string_dc = None
    groups = [np.array([i]) for i in range(n_modules)]
    if options.shade_model == "irradiance":
        dc = dc_irradiance_only(irradiance.effective, irradiance.temp_cell, pdc0,
                                gamma_pdc=gamma)
    elif options.shade_model == "module":
        # a block of modules at a time from what the substrings' irradiance is made of,
        # without the (T, M, S) array (dc_module_level's values, bit for bit)
        dc = _module_level_power(n_modules, light.lit_steps, light.block,
                                 np.asarray(irradiance.temp_cell, dtype=float), pdc0, gamma,
                                 n_steps=len(irradiance.times))
    else:
        if options.strings is not None:
            strings = options.strings
        elif modules is not None:
            strings = assign_strings(modules, max_length=options.max_string_length)
        else:
            raise InputError("modules", "are needed to assign strings automatically",
                             allowed="the placed modules, or strings in the options")
        groups = _string_index(strings, module_ids)
        dc, string_dc = dc_strings(irradiance.substring_effective, irradiance.temp_cell, pdc0,
                                   groups, gamma_pdc=gamma)
        # unshaded strings still mismatch when their modules face different ways
        unshaded, _ = dc_strings(irradiance.effective_unshaded[:, :, None],
                                 irradiance.temp_cell_unshaded, pdc0 * 1.0, groups,
                                 gamma_pdc=gamma)
        group = None  # per module already
    ac = ac_un = None
    if options.inverter_efficiency is not None:
        if group is not None:  # the inverters need each module's: gathered once, kept
            unshaded, group = _gather_columns(unshaded, group), None
        ac = _ac_share(dc, groups, pdc0, options.inverter_efficiency)
        ac_un = _ac_share(unshaded, groups, pdc0, options.inverter_efficiency)
    return DcPower(times=irradiance.times, module_ids=module_ids, options=options, dc_w=dc,
                   unshaded_w=unshaded, group=group, strings=strings, string_dc_w=string_dc,
                   ac_w=ac, ac_unshaded_w=ac_un)
