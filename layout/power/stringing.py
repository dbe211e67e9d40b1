"""Stringing: which modules go in series together, and which tracking input takes each string.

Three ways, all within the lengths of a :class:`~layout.power.string_sizing.StringSizing`:

``"rows"`` (:func:`string_by_rows`)
    On each face, rows from the eave up walked in alternating directions (the way an
    installer runs the wire, as :func:`layout.power.electrical.assign_strings`), cut into the
    fewest strings of allowed length, one more for each tracking input left free, of as
    equal a length as possible.
``"shade"`` (:func:`string_by_shade`)
    The same modules and the same number of strings per face, grouped so that modules shaded
    at the same hours share a string. A string carries one current, so a shaded module in a
    string of sunlit ones either drags their current down or is bypassed; modules shaded
    together lose little by being together. The search walks each face along a few wireable
    paths (rows or columns in a snake, from either side) and cuts each path into strings by
    dynamic programming over the cut points, maximising the strings' summed power through the
    string model (below); it then keeps the better, on the exact annual energy, of its best
    cut and the row stringing, so it never loses to it.
``"project"`` (:func:`check_strings`)
    The user's own strings (clicked on the plan), checked against the sizing.

The search's objective
----------------------
In the string model of bypass diodes (:mod:`layout.power.electrical`) a string working at the
current set by an irradiance level ``g`` delivers ``g/1000 · Σ w_j`` over its substrings
brighter than ``g`` (``w_j`` a substring's power at 1000 W/m²), at its best level. The search
evaluates every run of consecutive modules along a walk at once: with a few candidate levels
per step (the dimmest unshaded substring of the face, and quantiles of the shaded ones), the
sum ``Σ w_j`` of a run at each level is a difference of prefix sums along the walk. A run's
power is the best of its candidates, never above its true best. Only the steps where some
substring on the face gets less than 95 % of the face's brightest are visited (at most
``max_search_steps`` of them, evenly thinned): at the other steps every grouping of the face
gives nearly the same power. The final choice between the search's grouping and the rows is
made on the exact string model over every step.

Wireable strings
----------------
Consecutive modules of a string must be neighbours on one face: centres at most
:data:`NEIGHBOUR_FACTOR` times the module's long side apart (a module beside, above or
diagonal to it). The longest link of each string is reported in :attr:`StringPlan.links_m`;
the row stringing keeps its links as they are, even where a gap in a row makes one long.

Tracking inputs
---------------
Strings of one face and one length share an input, up to the sizing's strings per input
(parallel strings should match in voltage and orientation; common practice). A layout that
needs more inputs than the inverter has is refused with a message naming both counts.

This is a planning aid: the installer's licensed electrician and the inverter maker's tools
decide the wiring (NFPA 70 Article 690).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
import pvlib

from ..errors import InputError
from .electrical import dc_strings
from .string_sizing import StringSizing

__all__ = [
    "NEIGHBOUR_FACTOR",
    "STRINGING_METHODS",
    "StringPlan",
    "assign_inputs",
    "check_strings",
    "split_lengths",
    "string_by_rows",
    "string_by_shade",
    "string_energy_kwh",
]

#: Stringing methods the user can compare.
STRINGING_METHODS = ("rows", "shade", "project")

#: Two modules are neighbours when their centres are at most this many long sides apart.
NEIGHBOUR_FACTOR = 1.5

_MISMATCH = 0.95  # a substring below this share of the face's brightest counts as shaded
_LEVELS = 12  # candidate operating levels per step in the search


@dataclass(frozen=True)
class StringPlan:
    """Strings of a layout and the tracking input of each. Computed; the user's are saved.

    Attributes
    ----------
    method : {"rows", "shade", "project"}
    strings : tuple of tuple of str
        Module ids of each string, in wiring order.
    inputs : tuple of int
        Tracking input of each string (0 to the inverter's inputs − 1).
    unstrung : tuple of str
        Modules in no string (too few left on a face for the shortest string).
    links_m : tuple of float
        Longest distance between consecutive modules of each string [m].
    notes : tuple of str
        What the method did, in words.
    energy_kwh : tuple of float or None
        Annual DC energy of each string through the string model [kWh], when known
        (:func:`string_by_shade` gives it when its ``baseline`` carried the rows' energies).
    """

    method: str
    strings: tuple[tuple[str, ...], ...]
    inputs: tuple[int, ...]
    unstrung: tuple[str, ...] = ()
    links_m: tuple[float, ...] = ()
    notes: tuple[str, ...] = ()
    energy_kwh: tuple[float, ...] | None = None

    @property
    def inputs_used(self) -> int:
        """Number of tracking inputs with a string."""
        return len(set(self.inputs))

    def string_of(self) -> dict[str, int]:
        """Return module id → string index."""
        return {m: i for i, s in enumerate(self.strings) for m in s}


# --------------------------------------------------------------------------- lengths, inputs
def split_lengths(n: int, min_length: int, max_length: int) -> tuple[list[int], int]:
    """Cut ``n`` modules into the fewest strings of allowed length, as equal as possible.

    Parameters
    ----------
    n : int
        Modules in the walk.
    min_length, max_length : int
        Allowed string lengths.

    Returns
    -------
    lengths : list of int
        Length of each string, longest first.
    left_over : int
        Modules that fit no string (the fewest possible).
    """
    for used in range(n, -1, -1):
        if used == 0:
            return [], n
        count = math.ceil(used / max_length)
        if count * min_length <= used:
            base, extra = divmod(used, count)
            return [base + 1] * extra + [base] * (count - extra), n - used
    return [], n  # pragma: no cover - the loop always returns


def assign_inputs(faces, lengths, sizing: StringSizing) -> tuple[int, ...]:
    """Tracking input of each string: one face and one length share an input.

    Parameters
    ----------
    faces : sequence of str
        Face of each string.
    lengths : sequence of int
        Length of each string.
    sizing : StringSizing

    Returns
    -------
    tuple of int

    Raises
    ------
    InputError
        When the strings need more inputs than the inverter has.
    """
    per_input = sizing.strings_per_input
    open_inputs: dict[tuple, tuple[int, int]] = {}
    out, next_input = [], 0
    for key in zip(faces, lengths, strict=True):
        number, used = open_inputs.get(key, (None, per_input))
        if used >= per_input:
            number, used = next_input, 0
            next_input += 1
        open_inputs[key] = (number, used + 1)
        out.append(number)
    available = sizing.inverter.total_inputs
    if next_input > available:
        raise InputError("inverter.mppt_inputs", f"the {len(out)} strings need {next_input} "
                         f"tracking inputs ({per_input} string(s) of one face and length per "
                         "input)", value=available,
                         allowed=f"at least {next_input} inputs (mppt_inputs × count)")
    return tuple(out)


def _centres(modules) -> np.ndarray:
    return np.array([m.centre_3d for m in modules]).reshape(-1, 3)


def _links(modules, strings_idx) -> tuple[float, ...]:
    centres = _centres(modules)
    out = []
    for members in strings_idx:
        if len(members) < 2:
            out.append(0.0)
            continue
        steps = np.diff(centres[np.asarray(members)], axis=0)
        out.append(float(np.linalg.norm(steps, axis=1).max()))
    return tuple(out)


def _neighbour_limit(modules) -> float:
    sides = [max(m.uv_rect[2] - m.uv_rect[0], m.uv_rect[3] - m.uv_rect[1]) for m in modules]
    return NEIGHBOUR_FACTOR * max(sides, default=0.0)


# --------------------------------------------------------------------------- walks
def _by_face(modules) -> dict[str, list[int]]:
    faces: dict[str, list[int]] = {}
    for i, m in enumerate(modules):
        faces.setdefault(m.face, []).append(i)
    return faces


def _row_walk(modules, indices, *, from_left: bool = True) -> list[int]:
    rows: dict[int, list[int]] = {}
    for i in indices:
        rows.setdefault(modules[i].row, []).append(i)
    walk = []
    for turn, row in enumerate(sorted(rows)):
        ordered = sorted(rows[row], key=lambda i: modules[i].column)
        forward = (turn % 2 == 0) == from_left
        walk.extend(ordered if forward else ordered[::-1])
    return walk


def _column_walk(modules, indices, *, from_left: bool = True) -> list[int]:
    widths = [modules[i].uv_rect[2] - modules[i].uv_rect[0] for i in indices]
    step = float(np.median(widths)) if widths else 1.0
    columns: dict[int, list[int]] = {}
    for i in indices:
        columns.setdefault(round(modules[i].centre_uv[0] / step), []).append(i)
    keys = sorted(columns) if from_left else sorted(columns, reverse=True)
    walk = []
    for turn, key in enumerate(keys):
        ordered = sorted(columns[key], key=lambda i: modules[i].centre_uv[1])
        walk.extend(ordered if turn % 2 == 0 else ordered[::-1])
    return walk


def _rows_layout(modules, sizing):
    """Per face: the row walk, the strung part of it and its string lengths.

    Each face first gets the fewest strings of allowed length; while the inverter has a
    tracking input without a string, the face with the longest strings that can take one
    more gets it (a string on its own input is tracked on its own; common practice).
    """
    walks, counts, used = {}, {}, {}
    for face, indices in _by_face(modules).items():
        walk = _row_walk(modules, indices)
        lengths, left = split_lengths(len(walk), sizing.min_length, sizing.max_length)
        walks[face], counts[face], used[face] = walk, len(lengths), len(walk) - left
    while sum(counts.values()) < sizing.inverter.total_inputs:
        open_faces = [f for f in walks if counts[f] and (counts[f] + 1) * sizing.min_length
                      <= used[f]]
        if not open_faces:
            break
        face = max(open_faces, key=lambda f: used[f] / counts[f])
        counts[face] += 1
    out = {}
    for face, walk in walks.items():
        count, n = counts[face], used[face]
        base, extra = divmod(n, count) if count else (0, 0)
        lengths = [base + 1] * extra + [base] * (count - extra)
        out[face] = (walk[:n], walk[n:], lengths)
    return out


def _plan(method, modules, strings_idx, faces, sizing, unstrung_idx, notes) -> StringPlan:
    inputs = assign_inputs(faces, [len(s) for s in strings_idx], sizing)
    return StringPlan(method=method,
                      strings=tuple(tuple(modules[i].id for i in s) for s in strings_idx),
                      inputs=inputs, unstrung=tuple(modules[i].id for i in unstrung_idx),
                      links_m=_links(modules, strings_idx), notes=tuple(notes))


def _left_over_notes(modules, layout, sizing) -> list[str]:
    notes = []
    for face, (_, left, _) in layout.items():
        if left:
            notes.append(f"{len(left)} module(s) on face {face!r} fit no string of "
                         f"{sizing.min_length} to {sizing.max_length}: left unstrung "
                         f"({', '.join(modules[i].id for i in left[:4])}"
                         f"{', …' if len(left) > 4 else ''})")
    return notes


def string_by_rows(modules, sizing: StringSizing) -> StringPlan:
    """Wire each face row by row, within the allowed lengths.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The active modules.
    sizing : layout.power.string_sizing.StringSizing

    Returns
    -------
    StringPlan
        Method ``"rows"``; modules at the end of a face's walk that fit no string of an
        allowed length are left unstrung (and named in the notes).
    """
    modules = tuple(modules)
    layout = _rows_layout(modules, sizing)
    strings, faces, unstrung = [], [], []
    for face, (walk, left, lengths) in layout.items():
        start = 0
        for length in lengths:
            strings.append(walk[start:start + length])
            faces.append(face)
            start += length
        unstrung.extend(left)
    return _plan("rows", modules, strings, faces, sizing, unstrung,
                 _left_over_notes(modules, layout, sizing))


# --------------------------------------------------------------------------- shade search
def _levels(g: np.ndarray, shaded: np.ndarray, count: int) -> np.ndarray:
    """Candidate operating levels of a face's strings at each step [W/m²], shape (t, count).

    The dimmest of the unshaded substrings (every unshaded substring carries current there)
    and ``count - 1`` quantiles of the shaded substrings' irradiance.
    """
    top = g.max(axis=(1, 2))
    out = np.empty((len(g), count))
    for t in range(len(g)):
        values = g[t].ravel()
        dim = values < _MISMATCH * top[t]
        out[t, 0] = values[~dim].min() if (~dim).any() else top[t]
        out[t, 1:] = (np.quantile(values[dim], np.linspace(0.0, 1.0, count - 1))
                      if dim.any() else out[t, 0])
    return out


def _run_losses(levels, weight, walk, lengths_range, link_ok, feasible):
    """Minus the power of every run walk[i:i+L] summed over the steps; inf where unwireable.

    ``weight[t, m, q]`` is module m's substring power per unit irradiance that carries a
    current set by level q (its substrings at least that bright); a run's power at level q
    is ``level · Σ weight``, found for every run at once from prefix sums along the walk, and
    the run works at its best level (one of the candidates, so never above its true best).
    """
    n = len(walk)
    lo, hi = lengths_range
    loss = np.full((n + 1, hi + 1), np.inf)
    if levels is not None:
        ordered = weight[:, np.asarray(walk)]  # (t, n, Q)
        prefix = np.concatenate([np.zeros_like(ordered[:, :1]), np.cumsum(ordered, axis=1)],
                                axis=1)
        levels = levels[:, None, :].astype(prefix.dtype)
    for length in range(lo, min(hi, n) + 1):
        if not feasible(length):
            continue
        count = n - length + 1
        power = np.zeros(count)  # no shade on the face: every grouping gives the same
        if levels is not None:
            # every run at once: prefix differences over contiguous slices (no index copies)
            total = prefix[:, length:length + count] - prefix[:, :count]  # (t, B, Q)
            total *= levels
            power = total.max(axis=2).sum(axis=0, dtype=float)
        wireable = np.ones(count, dtype=bool)
        if length > 1:
            window = np.lib.stride_tricks.sliding_window_view(link_ok, length - 1)
            wireable = window.all(axis=1)
        loss[:count, length] = np.where(wireable, -power, np.inf)
    return loss


def _best_cut(loss, n, count, lo, hi):
    """Cut n modules into exactly ``count`` runs of lo..hi with the least total loss."""
    best = np.full((count + 1, n + 1), np.inf)
    back = np.zeros((count + 1, n + 1), dtype=int)
    best[0, 0] = 0.0
    for j in range(1, count + 1):
        for end in range(j * lo, n + 1):
            for length in range(lo, min(hi, end) + 1):
                value = best[j - 1, end - length] + loss[end - length, length]
                if value < best[j, end]:
                    best[j, end], back[j, end] = value, length
    if not np.isfinite(best[count, n]):
        return None, np.inf
    cuts, end = [], n
    for j in range(count, 0, -1):
        length = back[j, end]
        cuts.append((end - length, length))
        end -= length
    return cuts[::-1], float(best[count, n])


def string_energy_kwh(plan: StringPlan, module_ids, substring_irradiance, temp_cell,
                      pdc0: float, *, gamma_pdc: float, step_minutes: float) -> np.ndarray:
    """Annual DC energy of each string of a plan through the string model [kWh].

    Parameters
    ----------
    plan : StringPlan
    module_ids : sequence of str
        Ids of the columns of the arrays below.
    substring_irradiance : array_like, shape (T, M, S)
        Irradiance of each substring's most shaded cell [W/m²].
    temp_cell : array_like, shape (T, M)
        Cell temperature [°C].
    pdc0 : float
        Module power at STC [W].
    gamma_pdc : float, keyword-only
        Power temperature coefficient [1/°C].
    step_minutes : float, keyword-only
        Length of a time step [minutes].

    Returns
    -------
    numpy.ndarray, shape (n_strings,)
    """
    position = {m: i for i, m in enumerate(module_ids)}
    columns = [position[m] for s in plan.strings for m in s]
    if not columns:
        return np.zeros(0)
    g = np.asarray(substring_irradiance)[:, columns]
    t = np.asarray(temp_cell)[:, columns]
    groups, start = [], 0
    for s in plan.strings:
        groups.append(np.arange(start, start + len(s)))
        start += len(s)
    _, string_w = dc_strings(g, t, pdc0, groups, gamma_pdc=gamma_pdc)
    return string_w.sum(axis=0) * step_minutes / 60.0 / 1000.0


def string_by_shade(modules, sizing: StringSizing, substring_irradiance, temp_cell,
                    pdc0: float, *, gamma_pdc: float, step_minutes: float = 60.0,
                    max_search_steps: int = 500, baseline: StringPlan | None = None
                    ) -> StringPlan:
    """Group modules that are shaded alike into strings, never doing worse than by rows.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The active modules, in the column order of the arrays.
    sizing : layout.power.string_sizing.StringSizing
    substring_irradiance : array_like, shape (T, M, S)
        Irradiance of each substring's most shaded cell [W/m²].
    temp_cell : array_like, shape (T, M)
        Cell temperature [°C].
    pdc0 : float
        Module power at STC [W].
    gamma_pdc : float, keyword-only
        Power temperature coefficient [1/°C].
    step_minutes : float, keyword-only, default 60
        Length of a time step [minutes], for the final energy comparison.
    baseline : StringPlan, keyword-only, optional
        The row stringing of the same modules and sizing, when the caller has it; with its
        ``energy_kwh`` the returned plan carries its own, and only the strings the two
        plans do not share are evaluated.
    max_search_steps : int, keyword-only, default 500
        Most shaded steps the search visits per face (evenly thinned beyond that; the final
        choice is on every step).

    Returns
    -------
    StringPlan
        Method ``"shade"``: the same modules strung as by :func:`string_by_rows`, in the same
        number of strings per face, grouped by the search (see the module docstring).
    """
    modules = tuple(modules)
    g_all = np.asarray(substring_irradiance, dtype=float)
    temp_all = np.asarray(temp_cell, dtype=float)
    if g_all.ndim != 3 or g_all.shape[1] != len(modules) or temp_all.shape != g_all.shape[:2]:
        raise InputError("substring_irradiance", "must be (time, module, substring) for the "
                         "modules given, with temp_cell (time, module)", value=g_all.shape)
    rows = baseline if baseline is not None else string_by_rows(modules, sizing)
    layout = _rows_layout(modules, sizing)
    limit = _neighbour_limit(modules)
    centres = _centres(modules)
    s = g_all.shape[2]
    strings, faces, notes = [], [], []
    for face, (walk, _, lengths) in layout.items():
        if not lengths:
            continue
        members = np.array(sorted(walk))
        g_face = g_all[:, members]
        top = g_face.max(axis=(1, 2))
        shaded = (g_face.min(axis=2) < _MISMATCH * top[:, None]) & (top[:, None] > 0)
        steps = np.flatnonzero(shaded.any(axis=1))
        if len(steps) > max_search_steps:
            steps = steps[np.linspace(0, len(steps) - 1, max_search_steps).astype(int)]
        g = g_face[steps]
        w = np.asarray(pvlib.pvsystem.pvwatts_dc(1000.0, temp_all[steps][:, members], pdc0 / s,
                                                 gamma_pdc)) * 0.001
        levels = weight = None
        if len(steps):
            levels = _levels(g, shaded[steps], _LEVELS)
            # (t, M, Q): a module's substring power per W/m² that carries each level's current
            carries = g[:, :, :, None] >= levels[:, None, None, :] * (1 - 1e-12)
            weight = (carries.sum(axis=2) * w[:, :, None]).astype(np.float32)
        local = {int(m): k for k, m in enumerate(members)}
        lo, hi = sizing.min_length, sizing.max_length
        count = len(lengths)

        n_walk = len(walk)

        def feasible(length, n=n_walk, count=count, lo=lo, hi=hi):
            # the other count - 1 strings must take the rest
            return (count - 1) * lo <= n - length <= (count - 1) * hi

        best_cuts, best_walk, best_loss = None, None, np.inf
        walks = [_row_walk(modules, walk, from_left=True),
                 _row_walk(modules, walk, from_left=False),
                 _column_walk(modules, walk, from_left=True),
                 _column_walk(modules, walk, from_left=False)]
        for turn, candidate in enumerate(walks):
            order = [local[i] for i in candidate]
            gaps = np.linalg.norm(np.diff(centres[candidate], axis=0), axis=1)
            link_ok = gaps <= limit + 1e-9
            loss = _run_losses(levels, weight, order, (lo, hi), link_ok, feasible)
            if turn == 0:  # the row walk: where nothing is to gain, keep the rows' cuts
                start = 0
                for length in lengths:
                    loss[start, length] -= 1e-9 * max(1.0, abs(loss[start, length]))
                    start += length
            cuts, total = _best_cut(loss, len(order), count, lo, hi)
            if cuts is not None and total < best_loss - 1e-9:
                best_cuts, best_walk, best_loss = cuts, candidate, total
        if best_cuts is None:
            notes.append(f"face {face!r}: no wireable grouping found; strung by rows")
            start = 0
            for length in lengths:
                strings.append(walk[start:start + length])
                faces.append(face)
                start += length
            continue
        for start, length in best_cuts:
            strings.append(best_walk[start:start + length])
            faces.append(face)
    try:
        shade = _plan("shade", modules, strings, faces, sizing,
                      _unstrung_idx(modules, rows), notes)
    except InputError:
        return _as_shade(rows, "the shade-aware grouping needs more tracking inputs than the "
                               "inverter has; the row stringing is kept")
    # the exact energy of the strings the two plans do not share decides between them
    ids = [m.id for m in modules]
    complete = rows.energy_kwh is not None  # then the shared strings' energies are known
    known = ({frozenset(x): e for x, e in zip(rows.strings, rows.energy_kwh, strict=True)}
             if complete else {})
    shared = {frozenset(x) for x in rows.strings} & {frozenset(x) for x in shade.strings}
    needed = {frozenset(x): x for x in (*rows.strings, *shade.strings)
              if frozenset(x) not in known and frozenset(x) not in shared}
    if needed:
        values = string_energy_kwh(dataclasses.replace(rows, strings=tuple(needed.values())),
                                   ids, g_all, temp_all, pdc0, gamma_pdc=gamma_pdc,
                                   step_minutes=step_minutes)
        known.update(zip(needed, values.tolist(), strict=True))
    differs = {plan.method: sum(known[frozenset(x)] for x in plan.strings
                                if frozenset(x) not in shared) for plan in (rows, shade)}
    energy = {plan.method: tuple(known[frozenset(x)] for x in plan.strings) if complete
              else None for plan in (rows, shade)}
    if differs["shade"] + 1e-9 < differs["rows"]:
        return dataclasses.replace(
            _as_shade(rows, "no grouping beat the row stringing on the year's energy; the "
                            "row stringing is kept"), energy_kwh=energy["rows"])
    return dataclasses.replace(shade, energy_kwh=energy["shade"])


def _unstrung_idx(modules, plan):
    position = {m.id: i for i, m in enumerate(modules)}
    return [position[m] for m in plan.unstrung]


def _as_shade(rows: StringPlan, note: str) -> StringPlan:
    return dataclasses.replace(rows, method="shade", notes=(*rows.notes, note))


# --------------------------------------------------------------------------- user strings
def check_strings(strings, modules, sizing: StringSizing, *, inputs=None) -> StringPlan:
    """Check the user's strings against the sizing and return them as a plan.

    Parameters
    ----------
    strings : sequence of sequence of str
        Module ids of each string, in wiring order.
    modules : sequence of layout.fill.placed.PlacedModule
        The active modules.
    sizing : layout.power.string_sizing.StringSizing
    inputs : sequence of int, optional
        Tracking input of each string; None assigns them (one face and length per input).

    Returns
    -------
    StringPlan
        Method ``"project"``; modules in no string are listed as unstrung.

    Raises
    ------
    InputError
        Naming the string and the limit: a string longer than the Voc limit allows or shorter
        than the tracking window allows, a module in two strings, an unknown module id, more
        strings on an input than it takes, an input the inverter does not have.
    """
    modules = tuple(modules)
    position = {m.id: i for i, m in enumerate(modules)}
    if isinstance(strings, (str, bytes)) or not hasattr(strings, "__iter__"):
        raise InputError("strings", "must be a list of lists of module ids", value=strings)
    strings = [tuple(s) for s in strings]
    seen: dict[str, int] = {}
    for i, string in enumerate(strings):
        for module_id in string:
            if module_id not in position:
                raise InputError(f"strings[{i}]", "names a module not in the layout",
                                 value=module_id)
            if module_id in seen:
                raise InputError(f"strings[{i}]", f"repeats a module already in "
                                 f"strings[{seen[module_id]}]", value=module_id)
            seen[module_id] = i
        if len(string) > sizing.max_length:
            raise InputError(f"strings[{i}]", "is longer than the voltage limits allow",
                             value=len(string), allowed=f"at most {sizing.max_length} modules "
                                                        f"({sizing.max_length_limit})")
        if len(string) < sizing.min_length:
            raise InputError(f"strings[{i}]", "is shorter than the tracking window allows",
                             value=len(string), allowed=f"at least {sizing.min_length} modules "
                                                        f"({sizing.min_length_limit})")
    strings_idx = [[position[m] for m in s] for s in strings]
    faces = [modules[s[0]].face for s in strings_idx]
    if inputs is None:
        chosen = assign_inputs(faces, [len(s) for s in strings], sizing)
    else:
        chosen = tuple(inputs)
        if len(chosen) != len(strings):
            raise InputError("inputs", "must give one input per string", value=len(chosen),
                             allowed=f"{len(strings)}")
        available = sizing.inverter.total_inputs
        for i, number in enumerate(chosen):
            if not 0 <= number < available:
                raise InputError(f"inputs[{i}]", "is not an input of the inverter",
                                 value=number, allowed=f"0 to {available - 1}")
        for number in set(chosen):
            count = chosen.count(number)
            if count > sizing.strings_per_input:
                raise InputError(f"inputs[{chosen.index(number)}]",
                                 f"puts {count} strings on input {number}", value=count,
                                 allowed=f"at most {sizing.strings_per_input} "
                                         f"({sizing.strings_per_input_limit})")
    unstrung = tuple(m.id for m in modules if m.id not in seen)
    notes = [f"{len(unstrung)} module(s) in no string"] if unstrung else []
    links = _links(modules, strings_idx)
    limit = _neighbour_limit(modules)
    for i, members in enumerate(strings_idx):
        faces_of = sorted({modules[k].face for k in members})
        if len(faces_of) > 1:
            notes.append(f"S{i + 1} spans faces {', '.join(faces_of)}: modules facing other "
                         "ways in one string lose to mismatch")
        if links[i] > limit + 1e-9:
            notes.append(f"S{i + 1} has a {links[i]:.1f} m jump between consecutive modules "
                         "(a run of wire longer than to a neighbour)")
    return StringPlan(method="project", strings=tuple(strings), inputs=tuple(chosen),
                      unstrung=unstrung, links_m=links, notes=tuple(notes))
