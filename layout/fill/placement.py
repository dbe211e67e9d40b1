"""Filling roof faces with modules: grid search, sliding rows, mixed orientation, removals.

Frames
------
Modules are placed in a face's roof-plane frame (see :mod:`layout.scene.roof`): ``u`` along the
eave, ``v`` up the slope, both true lengths on the roof, ``u`` growing to the right for a viewer who
stands downhill and faces uphill. A flush-mounted module is an axis-aligned rectangle
``(u_min, v_min, u_max, v_max)`` in that frame.

- **portrait**: the module's long side runs up the slope (along ``v``);
- **landscape**: the long side runs along the eave (along ``u``).

Search
------
Candidate positions lie on a fine lattice whose step is ``1/offset_steps`` of the module pitch
(module size plus gap) on each axis, anchored at the lower-left corner of the usable area's
bounding box. Every candidate rectangle is built in one :func:`shapely.box` call over arrays and
tested in one :func:`shapely.covers` call against the prepared usable area. A grid offset
``(i, j)`` is then the subset of candidates whose lattice indices are ``i`` and ``j`` modulo
``offset_steps``; counting fits per offset is a reshape and a sum, so the search over all
``offset_steps²`` grid offsets costs one geometric test per candidate.

``rows="grid"`` keeps one rigid grid and picks the offset with the most modules. Ties go to the
offset whose modules' bounding box is most centred in the usable area's bounding box (smallest
sum of the distances between the two centres along ``u`` and along ``v``), then to the
smallest offset. ``rows="sliding"`` lets each
row pick its own offset along the eave, the one that fits most modules in that row; a tie goes
to the offset that centres the row's modules on the span where that row can hold modules.
Each connected piece of the usable area is filled on its own with sliding rows.

Candidate rectangles are shrunk by :data:`FIT_TOLERANCE_M` on every side before the fit test,
so that a module that fits exactly is not lost to rounding.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
import shapely

from ..errors import InputError, check_fields, check_finite, check_range
from ..scene.modules import ModuleSpec
from ..scene.roof import RoofFace

__all__ = [
    "FILL_ORIENTATIONS",
    "FIT_TOLERANCE_M",
    "FLAT_FACE_MAX_PITCH_DEG",
    "ORIENTATIONS",
    "ROW_MODES",
    "AreaFill",
    "FillOptions",
    "Layout",
    "PlacedModule",
    "compare_orientations",
    "fill_area",
    "fill_building",
    "fill_building_with_areas",
    "fill_face",
    "module_footprint",
    "pack_rectangles",
]

#: Orientations of a single placed module.
ORIENTATIONS = ("portrait", "landscape")
#: Orientations a fill can ask for; ``"mixed"`` fills portrait first, then landscape in what is
#: left.
FILL_ORIENTATIONS = ("portrait", "landscape", "mixed")
#: Row modes: one rigid grid, or rows sliding independently along the eave.
ROW_MODES = ("grid", "sliding")
#: Slack given to the fit test on every side of a candidate [m].
FIT_TOLERANCE_M = 1e-7


# =========================================================================== placed modules
@dataclass(frozen=True)
class PlacedModule:
    """One module placed on a roof face or on a rack.

    Parameters
    ----------
    id : str
        Unique within a layout, ``"<face>/r<row>c<column>"``.
    face : str
        Name of the roof face the module sits on.
    row : int
        Row number on the face, 0 nearest the eave (for racks: the front row).
    column : int
        Position within the row, counted along the eave from the left of a viewer who stands
        downhill facing uphill (for racks: who stands in front of the modules facing them).
    orientation : {"portrait", "landscape"}
        Portrait: the long side runs up the module's slope; landscape: along its lower edge.
    uv_rect : (float, float, float, float)
        ``(u_min, v_min, u_max, v_max)`` of the module on the face's roof plane [m]. For a
        racked module this is the bounding box of its footprint (see ``uv_corners``).
    corners_3d : tuple of four (x, y, z)
        Corners in the site frame [m], counter-clockwise seen from the module's front:
        lower left, lower right, upper right, upper left.
    tilt_deg : float
        Tilt of the module plane from horizontal [degrees] (the face pitch when flush).
    azimuth_deg : float
        Direction the module's front faces, clockwise from north [degrees] (the face azimuth
        when flush).
    uv_corners : tuple of four (u, v) or None, default None
        Footprint corners on the roof plane [m] when the footprint is not the axis-aligned
        ``uv_rect`` (a rack turned against the face's axes); None for flush modules.
    """

    id: str
    face: str
    row: int
    column: int
    orientation: str
    uv_rect: tuple[float, float, float, float]
    corners_3d: tuple[tuple[float, float, float], ...]
    tilt_deg: float
    azimuth_deg: float
    uv_corners: tuple[tuple[float, float], ...] | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        if not isinstance(self.id, str) or not self.id:
            raise InputError("id", "must be non-empty text", value=self.id)
        if not isinstance(self.face, str):
            raise InputError("face", "must be text", value=self.face)
        if self.orientation not in ORIENTATIONS:
            raise InputError("orientation", "unknown orientation", value=self.orientation,
                             allowed=", ".join(ORIENTATIONS))
        for key in ("row", "column"):
            value = getattr(self, key)
            if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 0:
                raise InputError(key, "must be a whole number from 0", value=value)
            set_(self, key, int(value))
        rect = np.asarray(self.uv_rect, dtype=float)
        if rect.shape != (4,) or not np.isfinite(rect).all() or not (
            rect[2] > rect[0] and rect[3] > rect[1]
        ):
            raise InputError("uv_rect", "must be (u_min, v_min, u_max, v_max) with max > min",
                             value=np.asarray(self.uv_rect, dtype=object).tolist())
        set_(self, "uv_rect", tuple(float(x) for x in rect))
        corners = np.asarray(self.corners_3d, dtype=float)
        if corners.shape != (4, 3) or not np.isfinite(corners).all():
            raise InputError("corners_3d", "must be four (x, y, z) points",
                             allowed="4 corners of 3 finite numbers")
        set_(self, "corners_3d", tuple(tuple(float(x) for x in c) for c in corners))
        set_(self, "tilt_deg", check_range("tilt_deg", self.tilt_deg, 0, 90, unit="degrees"))
        set_(self, "azimuth_deg", check_range("azimuth_deg", self.azimuth_deg, 0, 360,
                                              unit="degrees"))
        if self.uv_corners is not None:
            uvc = np.asarray(self.uv_corners, dtype=float)
            if uvc.shape != (4, 2) or not np.isfinite(uvc).all():
                raise InputError("uv_corners", "must be four (u, v) points or null")
            set_(self, "uv_corners", tuple(tuple(float(x) for x in c) for c in uvc))

    # ----------------------------------------------------------------- geometry
    @property
    def centre_uv(self) -> tuple[float, float]:
        """Centre of the footprint on the roof plane (u, v) [m]."""
        if self.uv_corners is not None:
            c = np.mean(np.asarray(self.uv_corners), axis=0)
            return float(c[0]), float(c[1])
        u0, v0, u1, v1 = self.uv_rect
        return 0.5 * (u0 + u1), 0.5 * (v0 + v1)

    @property
    def centre_3d(self) -> np.ndarray:
        """Centre of the module in the site frame, shape (3,) [m]."""
        return np.mean(np.asarray(self.corners_3d), axis=0)

    @property
    def normal(self) -> np.ndarray:
        """Unit normal of the module's front, shape (3,), from its tilt and azimuth."""
        t, a = math.radians(self.tilt_deg), math.radians(self.azimuth_deg)
        return np.array([math.sin(t) * math.sin(a), math.sin(t) * math.cos(a), math.cos(t)])

    def footprint(self) -> shapely.Polygon:
        """Footprint on the face's roof plane as a shapely polygon [m]."""
        if self.uv_corners is not None:
            return shapely.Polygon(self.uv_corners)
        return shapely.box(*self.uv_rect)

    def covers_uv(self, u: float, v: float) -> bool:
        """Tell whether the roof-plane point (u, v) lies on the module's footprint."""
        if self.uv_corners is not None:
            return bool(shapely.intersects_xy(self.footprint(), u, v))
        u0, v0, u1, v1 = self.uv_rect
        return u0 <= u <= u1 and v0 <= v <= v1

    def cell_points(self, spec: ModuleSpec, samples_per_cell: int = 1):
        """Sample points on the module's cells, in the site frame.

        The points lie **on** the module plane (the plane through ``corners_3d``), not lifted
        off it; a shading engine must ignore the module's own surface when it casts rays.

        In portrait the module's length runs from the lower edge (corners 0-1) to the upper
        edge, so cell row 0 is along the lower edge and cell column 0 along the left edge; in
        landscape the length runs from the left edge (corners 0-3) to the right edge and cell
        column 0 is along the lower edge. With substrings along the length (the usual
        wiring) a shadow along the lower edge therefore touches every substring in portrait
        and only substring 0 in landscape.

        Parameters
        ----------
        spec : ModuleSpec
            The module placed here; its size must match the placed corners within 1 mm.
        samples_per_cell : int, default 1
            Points per cell, a perfect square (see :meth:`ModuleSpec.cell_sample_points`).

        Returns
        -------
        points : numpy.ndarray, shape (n, 3)
            Sample points [m], grouped by cell in cell-index order.
        cell : numpy.ndarray of int, shape (n,)
            Cell index of each point.
        substring : numpy.ndarray of int, shape (n,)
            Substring (bypass diode) index of each point.
        """
        corners = np.asarray(self.corners_3d)
        along = corners[1] - corners[0]  # lower edge, left to right
        up = corners[3] - corners[0]  # left edge, bottom to top
        if self.orientation == "portrait":
            length_axis, width_axis = up, along
        else:
            length_axis, width_axis = along, up
        for name, axis, expected in (("length_m", length_axis, spec.length_m),
                                     ("width_m", width_axis, spec.width_m)):
            if abs(float(np.linalg.norm(axis)) - expected) > 1e-3:
                raise InputError(
                    f"spec.{name}", f"does not match the placed module {self.id!r}",
                    value=expected, allowed=f"{float(np.linalg.norm(axis)):.3f} m",
                )
        ab, cell = spec.cell_sample_points(samples_per_cell)
        fa = ab[:, 0] / spec.length_m
        fb = ab[:, 1] / spec.width_m
        points = corners[0] + fa[:, None] * length_axis + fb[:, None] * width_axis
        return points, cell, spec.substring_of_cell(cell)

    def substring_points(self, spec: ModuleSpec, samples_per_cell: int = 1):
        """Sample points of each substring, in the site frame.

        Returns
        -------
        tuple of numpy.ndarray
            One (n_i, 3) array [m] per bypass-diode substring, in substring order.
        """
        points, _, substring = self.cell_points(spec, samples_per_cell)
        return tuple(points[substring == s] for s in range(spec.bypass_diodes))

    # ----------------------------------------------------------------- data
    def to_dict(self) -> dict:
        """Plain-data form."""
        data = {
            "id": self.id, "face": self.face, "row": self.row, "column": self.column,
            "orientation": self.orientation, "uv_rect": list(self.uv_rect),
            "corners_3d": [list(c) for c in self.corners_3d],
            "tilt_deg": self.tilt_deg, "azimuth_deg": self.azimuth_deg,
        }
        if self.uv_corners is not None:
            data["uv_corners"] = [list(c) for c in self.uv_corners]
        return data

    @classmethod
    def from_dict(cls, data: dict) -> PlacedModule:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("id", "face", "row", "column", "orientation", "uv_rect", "corners_3d",
                 "tilt_deg", "azimuth_deg", "uv_corners")
        check_fields(data, known, required=known[:-1], what="placed module")
        return cls(**{k: data[k] for k in known if k in data})


# =========================================================================== options
#: Faces at or below this pitch take rack rows when :attr:`FillOptions.rack_tilt_deg` is set
#: [degrees]; membrane "flat" roofs drain at about 1/4 in 12 (1.2°), well below it.
FLAT_FACE_MAX_PITCH_DEG = 5.0


@dataclass(frozen=True)
class FillOptions:
    """How to fill a face with modules.

    Parameters
    ----------
    orientation : {"portrait", "landscape", "mixed"}, default "portrait"
        Module orientation; ``"mixed"`` fills portrait first, then landscape modules in the
        strips the portrait fill leaves.
    gap_along_eave_m : float, default 0.02
        Gap between neighbouring modules in a row [m]. 20 mm is the usual mid-clamp gap
        (common practice, from memory; REFERENCES.md).
    gap_up_slope_m : float, default 0.02
        Gap between rows [m].
    rows : {"grid", "sliding"}, default "grid"
        One rigid grid, or rows that slide independently along the eave (fits more on hip
        and trapezoid faces).
    offset_steps : int, default 8
        Grid offsets tried per module pitch on each axis (1 tries only the grid anchored at
        the usable area's lower-left corner). Work grows with its square.
    rack_tilt_deg : float or None, default None
        Tilt of rack rows on flat faces (pitch up to :data:`FLAT_FACE_MAX_PITCH_DEG`)
        [degrees], more than 0 and less than 90; None mounts modules flush on flat faces too.
    rack_azimuth_deg : float, default 180
        Direction the racked modules face, clockwise from north [degrees].
    rack_base_height_m : float, default 0
        Height of each racked module's lower edge above the roof [m], 0 to 10 (a ballasted
        rack on a membrane sits near 0; raising the rows clears a parapet's shadow).
    rack_gcr : float or None, default None
        Ground coverage ratio of the rack rows (module slant length over row pitch), more
        than 0 and at most 1; None spaces the rows by the no-shade window on the winter
        solstice, 9:00 to 15:00 solar time (common practice; see
        :func:`layout.fill.racking.row_pitch_no_shade_window`).
    """

    orientation: str = "portrait"
    gap_along_eave_m: float = 0.02
    gap_up_slope_m: float = 0.02
    rows: str = "grid"
    offset_steps: int = 8
    rack_tilt_deg: float | None = None
    rack_azimuth_deg: float = 180.0
    rack_gcr: float | None = None
    rack_base_height_m: float = 0.0

    def __post_init__(self):
        if self.orientation not in FILL_ORIENTATIONS:
            raise InputError("orientation", "unknown orientation", value=self.orientation,
                             allowed=", ".join(FILL_ORIENTATIONS))
        if self.rows not in ROW_MODES:
            raise InputError("rows", "unknown row mode", value=self.rows,
                             allowed=", ".join(ROW_MODES))
        set_ = object.__setattr__
        set_(self, "gap_along_eave_m",
             check_range("gap_along_eave_m", self.gap_along_eave_m, 0, 1, unit="m"))
        set_(self, "gap_up_slope_m",
             check_range("gap_up_slope_m", self.gap_up_slope_m, 0, 1, unit="m"))
        steps = self.offset_steps
        if isinstance(steps, bool) or not isinstance(steps, (int, np.integer)) or not (
            1 <= steps <= 32
        ):
            raise InputError("offset_steps", "must be a whole number in range", value=steps,
                             allowed="1 to 32")
        set_(self, "offset_steps", int(steps))
        if self.rack_tilt_deg is not None:
            set_(self, "rack_tilt_deg", check_range("rack_tilt_deg", self.rack_tilt_deg, 0, 90,
                                                    unit="degrees", low_open=True,
                                                    high_open=True))
        set_(self, "rack_azimuth_deg", check_range("rack_azimuth_deg", self.rack_azimuth_deg,
                                                   0, 360, unit="degrees"))
        if self.rack_gcr is not None:
            set_(self, "rack_gcr", check_range("rack_gcr", self.rack_gcr, 0, 1, low_open=True))
        set_(self, "rack_base_height_m", check_range("rack_base_height_m",
                                                     self.rack_base_height_m, 0, 10, unit="m"))

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "orientation": self.orientation, "gap_along_eave_m": self.gap_along_eave_m,
            "gap_up_slope_m": self.gap_up_slope_m, "rows": self.rows,
            "offset_steps": self.offset_steps, "rack_tilt_deg": self.rack_tilt_deg,
            "rack_azimuth_deg": self.rack_azimuth_deg, "rack_gcr": self.rack_gcr,
            "rack_base_height_m": self.rack_base_height_m,
        }

    @classmethod
    def from_dict(cls, data: dict) -> FillOptions:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("orientation", "gap_along_eave_m", "gap_up_slope_m", "rows", "offset_steps",
                 "rack_tilt_deg", "rack_azimuth_deg", "rack_gcr", "rack_base_height_m")
        check_fields(data, known, required=(), what="fill option")
        return cls(**data)


def module_footprint(module: ModuleSpec, orientation: str) -> tuple[float, float]:
    """Size of a module on the roof plane: (along the eave, up the slope) [m]."""
    if orientation == "portrait":
        return module.width_m, module.length_m
    if orientation == "landscape":
        return module.length_m, module.width_m
    raise InputError("orientation", "unknown orientation", value=orientation,
                     allowed=", ".join(ORIENTATIONS))


# =========================================================================== packing
def _as_geometry(usable) -> shapely.Geometry:
    """Accept a shapely geometry or an object with a ``.polygon`` (a usable-area result)."""
    geometry = getattr(usable, "polygon", usable)
    if geometry is None:
        return shapely.Polygon()
    if not isinstance(geometry, shapely.Geometry):
        raise InputError("usable", "must be a shapely geometry in roof-plane coordinates",
                         value=type(geometry).__name__)
    polygons = [g for g in shapely.get_parts(geometry)
                if isinstance(g, (shapely.Polygon, shapely.MultiPolygon)) and not g.is_empty]
    if not polygons:
        return shapely.Polygon()
    return polygons[0] if len(polygons) == 1 else shapely.union_all(polygons)


def _first_last(mask: np.ndarray, axis: int) -> tuple[np.ndarray, np.ndarray]:
    """Index of the first and last True along ``axis`` (0 where there is none)."""
    n = mask.shape[axis]
    first = np.argmax(mask, axis=axis)
    last = n - 1 - np.argmax(np.flip(mask, axis=axis), axis=axis)
    return first, last


def _lattice_fits(region, size_u, size_v, pitch_u, pitch_v, steps):
    """Fit test of every candidate on the fine lattice; returns (fits, u0, v0, du, dv).

    ``fits`` has shape (rows, columns), both multiples of ``steps`` (padded with False).
    """
    u_lo, v_lo, u_hi, v_hi = region.bounds
    du, dv = pitch_u / steps, pitch_v / steps
    tol = FIT_TOLERANCE_M
    span_u, span_v = u_hi - u_lo - size_u + 2 * tol, v_hi - v_lo - size_v + 2 * tol
    if span_u < 0 or span_v < 0:
        return np.zeros((0, 0), bool), u_lo, v_lo, du, dv
    nu = math.floor(span_u / du) + 1
    nv = math.floor(span_v / dv) + 1
    us = u_lo + np.arange(nu) * du
    vs = v_lo + np.arange(nv) * dv
    uu, vv = np.meshgrid(us, vs)
    candidates = shapely.box(uu + tol, vv + tol, uu + size_u - tol, vv + size_v - tol)
    shapely.prepare(region)
    fits = shapely.covers(region, candidates)
    padded = np.zeros((-(-nv // steps) * steps, -(-nu // steps) * steps), dtype=bool)
    padded[:nv, :nu] = fits
    return padded, u_lo, v_lo, du, dv


def _anchor_cost(lo, hi, box_lo, box_hi, anchor: str):
    """How far an extent ``lo..hi`` sits from where ``anchor`` wants it in ``box_lo..box_hi``."""
    if anchor == "centre":
        return np.abs(0.5 * (lo + hi) - 0.5 * (box_lo + box_hi))
    if anchor == "low":
        return lo - box_lo
    return box_hi - hi


def _pack_piece(region, size_u, size_v, gap_u, gap_v, rows, steps, anchor) -> np.ndarray:
    """Pack one region (lattice anchored at its bounds); returns (n, 4) rectangles."""
    fits, u_lo, v_lo, du, dv = _lattice_fits(region, size_u, size_v, size_u + gap_u,
                                             size_v + gap_v, steps)
    if not fits.any():
        return np.zeros((0, 4))
    anchor_u, anchor_v = anchor
    nv, nu = fits.shape
    big_r, big_c = nv // steps, nu // steps
    bu0, bv0, bu1, bv1 = region.bounds
    if rows == "grid":
        f4 = fits.reshape(big_r, steps, big_c, steps)  # (R, j, C, i)
        count = f4.sum(axis=(0, 2))  # (j, i)
        c_first, c_last = _first_last(f4.any(axis=0), axis=1)  # (j, i)
        r_first, r_last = _first_last(f4.any(axis=2), axis=0)  # (j, i)
        jj, ii = np.meshgrid(np.arange(steps), np.arange(steps), indexing="ij")
        u_min = u_lo + (c_first * steps + ii) * du
        u_max = u_lo + (c_last * steps + ii) * du + size_u
        v_min = v_lo + (r_first * steps + jj) * dv
        v_max = v_lo + (r_last * steps + jj) * dv + size_v
        cost = (_anchor_cost(u_min, u_max, bu0, bu1, anchor_u)
                + _anchor_cost(v_min, v_max, bv0, bv1, anchor_v))
        cost = np.where(count == count.max(), np.round(cost, 9), np.inf)
        j, i = np.unravel_index(int(np.argmin(cost)), count.shape)
        big_rows, big_cols = np.nonzero(f4[:, j, :, i])
        n_index = big_rows * steps + j
        m_index = big_cols * steps + i
    else:
        f3 = fits.reshape(nv, big_c, steps)  # (n, C, i)
        row_count = f3.sum(axis=1)  # (n, i)
        c_first, c_last = _first_last(f3, axis=1)  # (n, i)
        # the span where each row can hold a module at any offset
        m_first, m_last = _first_last(fits, axis=1)  # (n,)
        span_lo = (u_lo + m_first * du)[:, None]
        span_hi = (u_lo + m_last * du + size_u)[:, None]
        ii = np.arange(steps)[None, :]
        u_min = u_lo + (c_first * steps + ii) * du
        u_max = u_lo + (c_last * steps + ii) * du + size_u
        cost = np.round(_anchor_cost(u_min, u_max, span_lo, span_hi, anchor_u), 9)
        best = row_count.max(axis=1)
        cost = np.where(row_count == best[:, None], cost, np.inf)
        best_i = np.argmin(cost, axis=1)  # (n,)
        # the row offset j: total of the rows n ≡ j (mod steps)
        per_j = best.reshape(big_r, steps)  # (R, j)
        total = per_j.sum(axis=0)
        r_first, r_last = _first_last(per_j > 0, axis=0)  # (j,)
        jj = np.arange(steps)
        v_min = v_lo + (r_first * steps + jj) * dv
        v_max = v_lo + (r_last * steps + jj) * dv + size_v
        cost_v = np.round(_anchor_cost(v_min, v_max, bv0, bv1, anchor_v), 9)
        j = int(np.argmin(np.where(total == total.max(), cost_v, np.inf)))
        chosen_rows = np.arange(j, nv, steps)
        pick = f3[chosen_rows, :, best_i[chosen_rows]]  # (rows, C)
        rr, big_cols = np.nonzero(pick)
        n_index = chosen_rows[rr]
        m_index = big_cols * steps + best_i[n_index]
    u_min = u_lo + m_index * du
    v_min = v_lo + n_index * dv
    return np.stack([u_min, v_min, u_min + size_u, v_min + size_v], axis=1)


_ANCHORS = ("centre", "low", "high")


def pack_rectangles(usable, size_u: float, size_v: float, *, gap_u: float = 0.0,
                    gap_v: float = 0.0, rows: str = "grid", offset_steps: int = 8,
                    anchor: tuple[str, str] = ("centre", "centre")) -> np.ndarray:
    """Place as many equal axis-aligned rectangles as fit inside a region.

    Parameters
    ----------
    usable : shapely geometry
        Region to fill (Polygon or MultiPolygon) [m].
    size_u, size_v : float
        Rectangle size along ``u`` and ``v`` [m].
    gap_u, gap_v : float, default 0
        Clear gap between neighbours along ``u`` and between rows along ``v`` [m].
    rows : {"grid", "sliding"}, default "grid"
        Search mode, see the module docstring.
    offset_steps : int, default 8
        Offsets tried per pitch on each axis.
    anchor : (str, str), default ("centre", "centre")
        Tie rule along ``u`` and along ``v`` among offsets that fit equally many: ``"centre"``
        centres the rectangles' bounding box in the region's (for sliding rows along ``u``:
        on the span where that row can hold rectangles), ``"low"`` pushes it toward the
        smaller coordinate, ``"high"`` toward the larger. With two centred axes the offset
        with the smallest sum of the two centre distances wins; remaining ties go to the
        smallest offset.

    Returns
    -------
    numpy.ndarray, shape (n, 4)
        ``(u_min, v_min, u_max, v_max)`` of each rectangle [m], sorted by ``v`` then ``u``.
    """
    region = _as_geometry(usable)
    if region.is_empty:
        return np.zeros((0, 4))
    if rows not in ROW_MODES:
        raise InputError("rows", "unknown row mode", value=rows, allowed=", ".join(ROW_MODES))
    if len(anchor) != 2 or any(a not in _ANCHORS for a in anchor):
        raise InputError("anchor", "must be two of centre, low, high", value=anchor,
                         allowed="(u anchor, v anchor), each centre, low or high")
    pieces = [region] if rows == "grid" else list(shapely.get_parts(region))
    rects = [_pack_piece(piece, size_u, size_v, gap_u, gap_v, rows, offset_steps, tuple(anchor))
             for piece in pieces]
    out = np.concatenate(rects, axis=0) if rects else np.zeros((0, 4))
    order = np.lexsort((out[:, 0], np.round(out[:, 1], 6)))
    return out[order]


# =========================================================================== area fill
@dataclass(frozen=True, eq=False)
class AreaFill:
    """Modules placed in a usable area, in roof-plane coordinates.

    Attributes
    ----------
    rects : numpy.ndarray, shape (n, 4)
        ``(u_min, v_min, u_max, v_max)`` of each module [m].
    orientation : tuple of str
        ``"portrait"`` or ``"landscape"`` per module.
    row, column : numpy.ndarray of int, shape (n,)
        Row (0 nearest the eave; modules with the same ``v_min`` share a row) and position in
        the row (0 at the left, counted in order along the eave).
    """

    rects: np.ndarray
    orientation: tuple[str, ...]
    row: np.ndarray = field(repr=False)
    column: np.ndarray = field(repr=False)

    @property
    def count(self) -> int:
        """Number of modules."""
        return len(self.rects)

    def polygons(self) -> np.ndarray:
        """Return the modules as an array of shapely boxes."""
        r = self.rects
        return shapely.box(r[:, 0], r[:, 1], r[:, 2], r[:, 3])


def _number_rows(rects: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sort rectangles by (v_min, u_min) and number rows and columns; returns order, row, col."""
    if len(rects) == 0:
        empty = np.zeros(0, dtype=int)
        return empty, empty, empty
    v_key = np.round(rects[:, 1], 6)
    order = np.lexsort((rects[:, 0], v_key))
    _, row = np.unique(v_key[order], return_inverse=True)
    starts = np.r_[0, np.flatnonzero(np.diff(row)) + 1]
    column = np.arange(len(order)) - np.repeat(starts, np.diff(np.r_[starts, len(order)]))
    return order, row.astype(int), column.astype(int)


def fill_area(usable, module: ModuleSpec, options: FillOptions | None = None) -> AreaFill:
    """Place as many modules as fit in a usable area on a roof plane.

    Parameters
    ----------
    usable : shapely geometry or usable-area result
        Usable area in the face's roof-plane coordinates [m] (for instance
        ``layout.fill.clearance.usable_area(...).polygon``).
    module : ModuleSpec
        The module to place.
    options : FillOptions, optional
        Orientation, gaps, row mode and search resolution; defaults to ``FillOptions()``.

    Returns
    -------
    AreaFill
        Module rectangles, orientations, rows and columns, sorted by row then column.

    Notes
    -----
    ``"mixed"`` fills portrait first, removes the portrait modules grown by the gaps from the
    usable area, and fills each remaining piece with landscape modules. Where the portrait
    fill could sit at several offsets with equally many modules, it is tried centred, pushed
    toward the eave or ridge, and pushed to either side (nine placements); the one that leaves
    room for the most landscape modules wins, the centred one on a tie.
    """
    options = options or FillOptions()
    region = _as_geometry(usable)
    gu, gv = options.gap_along_eave_m, options.gap_up_slope_m
    steps = options.offset_steps
    first = "landscape" if options.orientation == "landscape" else "portrait"
    size_u, size_v = module_footprint(module, first)
    if options.orientation != "mixed" or region.is_empty:
        rects = pack_rectangles(region, size_u, size_v, gap_u=gu, gap_v=gv, rows=options.rows,
                                offset_steps=steps)
        kinds = [first] * len(rects)
    else:
        lu, lv = module_footprint(module, "landscape")
        best = None
        for anchor in [(a, b) for a in _ANCHORS for b in _ANCHORS]:
            upright = pack_rectangles(region, size_u, size_v, gap_u=gu, gap_v=gv,
                                      rows=options.rows, offset_steps=steps, anchor=anchor)
            grown = shapely.box(upright[:, 0] - gu, upright[:, 1] - gv, upright[:, 2] + gu,
                                upright[:, 3] + gv)
            rest = shapely.difference(region, shapely.union_all(grown)) if len(upright) \
                else region
            extra = [pack_rectangles(piece, lu, lv, gap_u=gu, gap_v=gv, rows=options.rows,
                                     offset_steps=steps)
                     for piece in shapely.get_parts(_as_geometry(rest)) if not piece.is_empty]
            lying = np.concatenate([upright[:0], *extra], axis=0)
            if best is None or len(lying) > len(best[1]):
                best = (upright, lying)
        rects = np.concatenate(best, axis=0)
        kinds = ["portrait"] * len(best[0]) + ["landscape"] * len(best[1])
    order, row, column = _number_rows(rects)
    return AreaFill(rects=rects[order], orientation=tuple(kinds[k] for k in order), row=row,
                    column=column)


def _removal_entry(entry, index: int) -> tuple[str, float, float]:
    """Normalise a removal to (face, u, v); accepts a sequence or a mapping."""
    field_name = f"removed[{index}]"
    if isinstance(entry, dict):
        check_fields(entry, ("face", "u", "v"), required=("face", "u", "v"), what="removal")
        entry = (entry["face"], entry["u"], entry["v"])
    try:
        face, u, v = entry
    except (TypeError, ValueError):
        raise InputError(field_name, "must be (face, u, v)", value=entry,
                         allowed="a face name and the roof-plane centre (u, v) in metres") from None
    if not isinstance(face, str):
        raise InputError(f"{field_name}.face", "must be a face name", value=face)
    return face, check_finite(f"{field_name}.u", u), check_finite(f"{field_name}.v", v)


def fill_face(face: RoofFace, usable, module: ModuleSpec, options: FillOptions | None = None,
              *, removed: Iterable = ()) -> tuple[PlacedModule, ...]:
    """Fill one roof face with flush-mounted modules.

    Parameters
    ----------
    face : RoofFace
        The face; its name prefixes the module ids and its plane gives the 3D corners.
    usable : shapely geometry or usable-area result
        Usable area in the face's roof-plane coordinates [m].
    module : ModuleSpec
        The module to place.
    options : FillOptions, optional
        Fill options; defaults to ``FillOptions()``.
    removed : iterable of (u, v) or (face, u, v), optional
        Roof-plane points [m]; a module covering one of them (on this face) is left out.

    Returns
    -------
    tuple of PlacedModule
        Modules sorted by row then column, ids ``"<face>/r<row>c<column>"``.
    """
    fill = fill_area(usable, module, options)
    points = []
    for k, entry in enumerate(removed):
        if len(entry) == 2:
            points.append((float(entry[0]), float(entry[1])))
        else:
            name, u, v = _removal_entry(entry, k)
            if name == face.name:
                points.append((u, v))
    label = face.name or "face"
    r = fill.rects
    corners_uv = np.stack([r[:, [0, 1]], r[:, [2, 1]], r[:, [2, 3]], r[:, [0, 3]]], axis=1)
    corners = face.roof_to_3d(corners_uv) if len(r) else np.zeros((0, 4, 3))
    out = []
    for k in range(fill.count):
        u0, v0, u1, v1 = r[k]
        if any(u0 <= u <= u1 and v0 <= v <= v1 for u, v in points):
            continue
        out.append(PlacedModule(
            id=f"{label}/r{fill.row[k]}c{fill.column[k]}", face=face.name, row=int(fill.row[k]),
            column=int(fill.column[k]), orientation=fill.orientation[k], uv_rect=tuple(r[k]),
            corners_3d=tuple(map(tuple, corners[k])), tilt_deg=face.pitch_deg,
            azimuth_deg=face.azimuth_deg,
        ))
    return tuple(out)


# =========================================================================== layouts
@dataclass(frozen=True)
class Layout:
    """Placed modules on one or more faces, with the user's removals.

    A removal is kept as the roof-plane centre ``(face, u, v)`` of the module taken out, not
    as its id, so that it survives a refill: after a refill, any new module whose footprint
    covers a removed centre stays removed.

    Parameters
    ----------
    modules : tuple of PlacedModule
        Every module the fill placed, removed ones included.
    removed : tuple of (str, float, float)
        Removals as (face name, u [m], v [m]).
    notes : tuple of str
        Plain-language notes from the fill (setbacks in force, faces left empty).
    ridge_setback_m : float or None
        Ridge setback the fill used [m], or None when no ridge rule applied.
    """

    modules: tuple[PlacedModule, ...] = ()
    removed: tuple[tuple[str, float, float], ...] = ()
    notes: tuple[str, ...] = ()
    ridge_setback_m: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        modules = tuple(self.modules)
        ids = [m.id for m in modules]
        if len(set(ids)) != len(ids):
            dup = next(i for i in ids if ids.count(i) > 1)
            raise InputError("modules", "module ids must be unique", value=dup)
        set_(self, "modules", modules)
        set_(self, "removed", tuple(_removal_entry(e, i) for i, e in enumerate(self.removed)))
        set_(self, "notes", tuple(str(n) for n in self.notes))
        if self.ridge_setback_m is not None:
            set_(self, "ridge_setback_m",
                 check_range("ridge_setback_m", self.ridge_setback_m, 0, 100, unit="m"))

    # ----------------------------------------------------------------- queries
    def module(self, module_id: str) -> PlacedModule:
        """Return the module with id ``module_id``."""
        for m in self.modules:
            if m.id == module_id:
                return m
        raise InputError("id", "is not a module of this layout", value=module_id)

    def is_removed(self, module: PlacedModule) -> bool:
        """Tell whether a removal lies on the module's footprint."""
        return any(face == module.face and module.covers_uv(u, v)
                   for face, u, v in self.removed)

    @property
    def active_modules(self) -> tuple[PlacedModule, ...]:
        """Modules not removed."""
        return tuple(m for m in self.modules if not self.is_removed(m))

    @property
    def removed_modules(self) -> tuple[PlacedModule, ...]:
        """Modules the user took out."""
        return tuple(m for m in self.modules if self.is_removed(m))

    @property
    def count(self) -> int:
        """Number of active modules."""
        return len(self.active_modules)

    def power_w(self, spec: ModuleSpec) -> float:
        """Rated DC power of the active modules at STC [W]."""
        return self.count * spec.power_w

    def kwp(self, spec: ModuleSpec) -> float:
        """Rated DC power of the active modules at STC [kWp]."""
        return self.power_w(spec) / 1000.0

    def faces(self) -> tuple[str, ...]:
        """Names of the faces that carry modules, in order of first appearance."""
        return tuple(dict.fromkeys(m.face for m in self.modules))

    # ----------------------------------------------------------------- edits
    def remove(self, ids) -> Layout:
        """Return a copy with the modules ``ids`` (one id or several) taken out."""
        ids = [ids] if isinstance(ids, str) else list(ids)
        removed = list(self.removed)
        for module_id in ids:
            module = self.module(module_id)
            if not self.is_removed(module):
                u, v = module.centre_uv
                removed.append((module.face, u, v))
        return replace(self, removed=tuple(removed))

    def restore(self, ids) -> Layout:
        """Return a copy with the modules ``ids`` (one id or several) put back."""
        ids = [ids] if isinstance(ids, str) else list(ids)
        modules = [self.module(i) for i in ids]
        kept = tuple(r for r in self.removed
                     if not any(r[0] == m.face and m.covers_uv(r[1], r[2]) for m in modules))
        return replace(self, removed=kept)

    # ----------------------------------------------------------------- data
    def to_dict(self, *, include_modules: bool = True) -> dict:
        """Plain-data form; ``include_modules=False`` keeps only removals and notes.

        The placed modules can always be recomputed from the project, so a project file
        stores the removals only.
        """
        data = {
            "removed": [[f, u, v] for f, u, v in self.removed],
            "notes": list(self.notes),
            "ridge_setback_m": self.ridge_setback_m,
        }
        if include_modules:
            data["modules"] = [m.to_dict() for m in self.modules]
        return data

    @classmethod
    def from_dict(cls, data: dict) -> Layout:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        check_fields(data, ("removed", "notes", "ridge_setback_m", "modules"), required=(),
                    what="layout")
        modules = []
        for i, entry in enumerate(data.get("modules", [])):
            try:
                modules.append(PlacedModule.from_dict(entry))
            except InputError as err:
                raise err.at(f"modules[{i}]") from None
        notes = data.get("notes", [])
        if not isinstance(notes, list) or not all(isinstance(n, str) for n in notes):
            raise InputError("notes", "must be a list of text")
        return cls(modules=tuple(modules), removed=tuple(data.get("removed", [])),
                   notes=tuple(notes), ridge_setback_m=data.get("ridge_setback_m"))


# =========================================================================== buildings
def _module_fits_somewhere(faces, module: ModuleSpec, options: FillOptions) -> bool:
    """Tell whether the module fits at least one face outline, ignoring every setback."""
    kinds = ORIENTATIONS if options.orientation == "mixed" else (options.orientation,)
    for face in faces:
        for kind in kinds:
            size_u, size_v = module_footprint(module, kind)
            if len(pack_rectangles(face.roof_polygon, size_u, size_v, rows="sliding",
                                   offset_steps=4)):
                return True
    return False


def _takes_racks(face: RoofFace, options: FillOptions) -> bool:
    return options.rack_tilt_deg is not None and face.pitch_deg <= FLAT_FACE_MAX_PITCH_DEG


def _rack_geometry(module: ModuleSpec, options: FillOptions, latitude: float | None):
    """Return the rack orientation and row pitch [m] that ``options`` ask for."""
    from .racking import row_pitch_from_gcr, row_pitch_no_shade_window

    orientation = "landscape" if options.orientation == "landscape" else "portrait"
    slant = module.length_m if orientation == "portrait" else module.width_m
    if options.rack_gcr is not None:
        return orientation, row_pitch_from_gcr(slant, options.rack_gcr)
    if latitude is None:
        raise InputError("latitude", "is needed to space rack rows by the solstice window",
                         allowed="the site latitude in degrees, -90 to 90")
    pitch = row_pitch_no_shade_window(slant, options.rack_tilt_deg, latitude,
                                      rack_azimuth_deg=options.rack_azimuth_deg)
    return orientation, pitch


def _rack_notes(names, module, options, latitude) -> list[str]:
    orientation, pitch = _rack_geometry(module, options, latitude)
    rule = (f"GCR {options.rack_gcr:.2f}" if options.rack_gcr is not None else
            "no row shade 9:00-15:00 solar time on the winter solstice (common practice)")
    text = (f"{', '.join(names)}: racks tilted {options.rack_tilt_deg:g}° facing "
            f"{options.rack_azimuth_deg:g}°, {orientation}, rows {pitch:.3f} m apart ({rule})")
    if options.orientation == "mixed":
        text += "; mixed orientation applies to flush faces only, racks are portrait"
    return [text]


def _fill_racked_face(face, usable, module, options, latitude):
    from .racking import fill_racks  # racking builds on this module's PlacedModule

    orientation, pitch = _rack_geometry(module, options, latitude)
    return fill_racks(face, usable, module, tilt_deg=options.rack_tilt_deg,
                      rack_azimuth_deg=options.rack_azimuth_deg, row_pitch_m=pitch,
                      orientation=orientation, gap_m=options.gap_along_eave_m,
                      base_height_m=options.rack_base_height_m, rows=options.rows,
                      offset_steps=options.offset_steps)


def _plan_share(modules, spec: ModuleSpec, roof_plan_area_m2: float) -> float:
    """Plan area of the modules over the plan-view roof area (plan = true area × cos tilt)."""
    from .clearance import array_share

    plan = sum(spec.area_m2 * math.cos(math.radians(m.tilt_deg)) for m in modules)
    return array_share(min(plan, roof_plan_area_m2), roof_plan_area_m2)


def _array_faces(building, array_faces) -> tuple:
    """Return the faces to fill: all of them, or those named, in the building's order."""
    if array_faces is None:
        return tuple(building.faces)
    wanted = list(array_faces)
    names = [face.name for face in building.faces]
    for name in wanted:
        if name not in names:
            raise InputError("array_faces", "names a face the building does not have",
                             value=name, allowed=", ".join(names))
    return tuple(face for face in building.faces if face.name in wanted)


def fill_building_with_areas(building, module: ModuleSpec, rules,
                             options: FillOptions | None = None, *,
                             obstructions: Iterable = (), removed: Iterable = (),
                             pathway_faces: dict | None = None, latitude: float | None = None,
                             array_faces: Iterable[str] | None = None):
    """Fill a building as :func:`fill_building` does, and return each face's usable area too.

    Returns
    -------
    layout : Layout
        As :func:`fill_building` returns it.
    areas : dict of str to layout.fill.clearance.UsableArea
        Usable area, zones and notes of each array face, as the fill used them (for drawing).
    """
    from .clearance import choose_pathway_faces, ridge_setback_in_force, usable_area

    options = options or FillOptions()
    faces = _array_faces(building, array_faces)
    free = [face for face in building.faces
            if face not in faces and not rules.is_exempt(face.pitch_deg)]
    names = {face.name for face in faces}
    obstructions = tuple(obstructions)
    notes: list[str] = []
    if pathway_faces is None:
        # A face left without modules is a clear path from eave to ridge: it counts as one
        # of the required pathways, and strips are cut into array faces only for the rest.
        strips = max(0, rules.pathway_count - len(free))
        if strips and rules.pathway_width_m > 0 and latitude is None:
            raise InputError("latitude", "is needed to choose the pathway faces",
                             allowed="the site latitude in degrees, -90 to 90")
        pathways = choose_pathway_faces(faces, replace(rules, pathway_count=strips),
                                        latitude=0.0 if latitude is None else latitude)
        if rules.pathway_count and rules.pathway_width_m > 0:
            notes.extend(f"{face.name}: left without modules, so it serves as an access pathway"
                         for face in free[: rules.pathway_count])
    else:
        pathways = {}
        for name, edge in dict(pathway_faces).items():
            if name in names:
                pathways[name] = edge
    removals = [_removal_entry(e, i) for i, e in enumerate(removed)]
    removals = [r for r in removals if r[0] in names]

    racked = {face.name for face in faces if _takes_racks(face, options)}
    if racked:
        notes.extend(_rack_notes(sorted(racked), module, options, latitude))

    def run(share: float):
        areas, placed = {}, []
        for face in faces:
            edges = (pathways[face.name],) if face.name in pathways else ()
            try:
                area = usable_area(face, rules, obstructions, array_share=share,
                                   pathway_edges=edges)
            except InputError as err:
                raise err.at(f"faces[{face.name}]") from None
            areas[face.name] = area
            if face.name in racked:
                placed.extend(_fill_racked_face(face, area, module, options, latitude))
            else:
                placed.extend(fill_face(face, area, module, options))
        layout = Layout(modules=tuple(placed), removed=tuple(removals))
        return areas, layout

    roof_area = building.plan_area_m2
    areas, layout = run(0.0)
    low_m, _ = ridge_setback_in_force(rules, 0.0)
    share = _plan_share(layout.active_modules, module, roof_area)
    ridge_m, ridge_text = ridge_setback_in_force(rules, share)
    if ridge_m != low_m:
        # the array crossed the share threshold: refill with the higher ridge setback
        areas, layout = run(share)
        new_share = _plan_share(layout.active_modules, module, roof_area)
        if ridge_setback_in_force(rules, new_share)[0] != ridge_m:
            ridge_text += (
                f"; with that setback the array covers {new_share:.1%} of the plan-view roof "
                f"area, not above {rules.share_threshold:.0%}, but the higher ridge setback is "
                "kept so that the layout does not switch back and forth"
            )
        share = new_share
    if any("ridge" in face.edge_kinds for face in faces):
        notes.insert(0, ridge_text)
    for face in faces:
        notes.extend(f'{face.name}: {n}' for n in areas[face.name].notes
                     if not n.startswith("ridge setback"))
    counts = {face.name: 0 for face in faces}
    for m in layout.modules:
        counts[m.face] += 1
    if not layout.modules:
        if not _module_fits_somewhere(faces, module, options):
            raise InputError(
                "module",
                f"a {module.length_m:g} m × {module.width_m:g} m module is larger than every "
                "roof face of the building",
                value=module.name or None, allowed="a module that fits on at least one face",
            )
        notes.append("setbacks and clearances leave no room for a single module on any face")
    else:
        notes.extend(f'{name}: no module fits in the usable area'
                     for name, n in counts.items() if n == 0)
    kept = []
    for face_name, u, v in layout.removed:
        if any(m.face == face_name and m.covers_uv(u, v) for m in layout.modules):
            kept.append((face_name, u, v))
        else:
            notes.append(f'{face_name}: the removal at u = {u:.2f} m, v = {v:.2f} m is no longer '
                         "under a module after the refill and was dropped")
    layout = replace(layout, removed=tuple(kept), notes=tuple(dict.fromkeys(notes)),
                     ridge_setback_m=float(ridge_m))
    return layout, areas


def fill_building(building, module: ModuleSpec, rules, options: FillOptions | None = None, *,
                  obstructions: Iterable = (), removed: Iterable = (),
                  pathway_faces: dict | None = None, latitude: float | None = None,
                  array_faces: Iterable[str] | None = None) -> Layout:
    """Fill the faces of a building with flush modules under fire-access setbacks.

    The residential ridge setback depends on how much of the plan-view roof the array covers
    (IFC 2021 §1205.2.1.2). The building is filled with the lower setback first; when the
    array's plan area (module area × cos tilt, active modules only) is above
    ``rules.share_threshold`` of :attr:`Building.plan_area_m2`, it is filled again with the
    higher setback. If that refill falls back below the threshold, the higher setback is kept
    all the same and a note says so: the result never switches back and forth.

    Parameters
    ----------
    building : layout.scene.building.Building
        The roof faces.
    module : ModuleSpec
        The module.
    rules : layout.fill.clearance.ClearanceRules
        Setbacks, clearances and pathways.
    options : FillOptions, optional
        Orientation, gaps and row mode; defaults to ``FillOptions()``.
    obstructions : iterable, optional
        Obstructions of the scene; those standing on a face are cut out with their clearance.
    removed : iterable of (face, u, v), optional
        Removals from an earlier layout (:attr:`Layout.removed`). Each stays in force when a
        new module covers its point and is dropped, with a note, when none does. Removals on
        faces of other buildings are ignored.
    pathway_faces : dict of str to int, optional
        Face name → edge index of each access pathway; None lets
        :func:`layout.fill.clearance.choose_pathway_faces` choose.
    latitude : float, optional
        Site latitude [degrees]; needed when the pathways are chosen automatically.
    array_faces : iterable of str, optional
        Names of the faces that take modules; None fills every face. The other faces stay
        free, and each free face that is not exempt counts as one of the access pathways
        (IFC 2021 §1205.2.1.1 asks for pathways from eave to ridge on separate roof planes), so
        strips are cut into array faces only for the pathways still missing. Whether a free
        plane is adjacent to each array, as that section also asks, is left to the designer.

    Returns
    -------
    Layout
        Modules of the array faces, the removals still in force, notes (ridge setback in force and
        why, exemptions, empty faces, dropped removals) and ``ridge_setback_m``.

    Raises
    ------
    InputError
        If the module does not fit on any face even without setbacks.
    """
    return fill_building_with_areas(building, module, rules, options, obstructions=obstructions,
                          removed=removed, pathway_faces=pathway_faces, latitude=latitude,
                          array_faces=array_faces)[0]


# =========================================================================== comparison
def compare_orientations(target, module: ModuleSpec, *, usable=None, rules=None,
                         options: FillOptions | None = None, obstructions: Iterable = (),
                         pathway_faces: dict | None = None, latitude: float | None = None,
                         array_faces: Iterable[str] | None = None) -> pd.DataFrame:
    """Fill the same roof in each orientation and row mode and tabulate the results.

    Parameters
    ----------
    target : RoofFace or layout.scene.building.Building
        One face, or a whole building (filled with :func:`fill_building`).
    module : ModuleSpec
        The module.
    usable : shapely geometry or usable-area result, optional
        For a face: its usable area. Give this or ``rules``.
    rules : layout.fill.clearance.ClearanceRules, optional
        Setback rules; required for a building.
    options : FillOptions, optional
        Gaps and search resolution; orientation and row mode are varied.
    obstructions, pathway_faces, latitude, array_faces
        As in :func:`fill_building` (they apply to buildings only).

    Returns
    -------
    pandas.DataFrame
        One row per option (portrait, landscape and mixed, each with a rigid grid and with
        sliding rows): ``option``, ``orientation``, ``rows``, ``modules``,
        ``portrait_modules``, ``landscape_modules``, ``power_kwp`` [kWp], ``module_area_m2``
        [m², true area], ``usable_area_m2`` [m², true area] and ``usable_use_pct`` (module
        area over usable area [%]).
    """
    from .clearance import usable_area as usable_area_of

    base = options or FillOptions()
    is_face = isinstance(target, RoofFace)
    if is_face and usable is None:
        if rules is None:
            raise InputError("usable", "give the face's usable area or the rules to compute it")
        usable = usable_area_of(target, rules, obstructions)
    if not is_face and rules is None:
        raise InputError("rules", "are needed to fill a building")
    records = []
    for orientation in FILL_ORIENTATIONS:
        for rows in ROW_MODES:
            opts = replace(base, orientation=orientation, rows=rows)
            if is_face:
                placed = fill_face(target, usable, module, opts)
                area = float(_as_geometry(usable).area)
            else:
                layout, areas = fill_building_with_areas(
                    target, module, rules, opts, obstructions=obstructions,
                    pathway_faces=pathway_faces, latitude=latitude, array_faces=array_faces)
                placed = layout.modules
                area = float(sum(_as_geometry(a).area for a in areas.values()))
            n = len(placed)
            n_portrait = sum(m.orientation == "portrait" for m in placed)
            records.append({
                "option": f"{orientation}, {rows}", "orientation": orientation, "rows": rows,
                "modules": n, "portrait_modules": n_portrait,
                "landscape_modules": n - n_portrait,
                "power_kwp": n * module.power_w / 1000.0,
                "module_area_m2": n * module.area_m2, "usable_area_m2": area,
                "usable_use_pct": 100.0 * n * module.area_m2 / area if area > 0 else 0.0,
            })
    return pd.DataFrame.from_records(records)
