"""What a fill produces: placed modules, their footprints, and a layout with its removals.

Frames
------
Modules are placed in a face's roof-plane frame (see :mod:`layout.scene.roof`): ``u`` along the
eave, ``v`` up the slope, both true lengths on the roof, ``u`` growing to the right for a viewer who
stands downhill and faces uphill. A flush-mounted module is an axis-aligned rectangle
``(u_min, v_min, u_max, v_max)`` in that frame.

- **portrait**: the module's long side runs up the slope (along ``v``);
- **landscape**: the long side runs along the eave (along ``u``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import shapely

from ..errors import InputError, check_fields, check_finite, check_range, check_whole
from ..scene.modules import ModuleSpec

__all__ = ["ORIENTATIONS", "Layout", "PlacedModule", "module_footprint", "removal_entry"]

#: Orientations of a single placed module.
ORIENTATIONS = ("portrait", "landscape")


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
            set_(self, key, check_whole(key, getattr(self, key), 0,
                                        problem="must be a whole number from 0"))
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


def module_footprint(module: ModuleSpec, orientation: str) -> tuple[float, float]:
    """Size of a module on the roof plane: (along the eave, up the slope) [m]."""
    if orientation == "portrait":
        return module.width_m, module.length_m
    if orientation == "landscape":
        return module.length_m, module.width_m
    raise InputError("orientation", "unknown orientation", value=orientation,
                     allowed=", ".join(ORIENTATIONS))


def removal_entry(entry, index: int) -> tuple[str, float, float]:
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
        set_(self, "removed", tuple(removal_entry(e, i) for i, e in enumerate(self.removed)))
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
