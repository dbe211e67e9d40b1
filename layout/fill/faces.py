"""Filling one usable area or one roof face with flush modules, in one or mixed orientations.

A face is filled in its roof-plane frame (``u`` along the eave, ``v`` up the slope, true
lengths; see :mod:`layout.fill.placed`) by packing module-sized rectangles
(:mod:`layout.fill.packing`). ``"mixed"`` fills portrait first and landscape modules in what
the portrait fill leaves.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
import shapely

from ..errors import InputError, check_fields, check_range, check_whole
from ..scene.modules import ModuleSpec
from ..scene.roof import RoofFace
from .packing import ANCHORS, ROW_MODES, as_region, number_rows, pack_rectangles, rectangle_bound
from .placed import PlacedModule, module_footprint, removal_entry

__all__ = [
    "FILL_ORIENTATIONS",
    "FLAT_FACE_MAX_PITCH_DEG",
    "AreaFill",
    "FillOptions",
    "fill_area",
    "fill_bound",
    "fill_face",
]

#: Orientations a fill can ask for; ``"mixed"`` fills portrait first, then landscape in what is
#: left.
FILL_ORIENTATIONS = ("portrait", "landscape", "mixed")

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
        check_whole("offset_steps", steps, 1, 32, problem="must be a whole number in range")
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


def fill_area(usable, module: ModuleSpec, options: FillOptions | None = None) -> AreaFill:
    """Place as many modules as fit in a usable area on a roof plane.

    Parameters
    ----------
    usable : shapely geometry or usable-area result
        Usable area in the face's roof-plane coordinates [m] (for instance
        ``layout.fill.usable.usable_area(...).polygon``).
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
    region = as_region(usable)
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
        for anchor in [(a, b) for a in ANCHORS for b in ANCHORS]:
            upright = pack_rectangles(region, size_u, size_v, gap_u=gu, gap_v=gv,
                                      rows=options.rows, offset_steps=steps, anchor=anchor)
            grown = shapely.box(upright[:, 0] - gu, upright[:, 1] - gv, upright[:, 2] + gu,
                                upright[:, 3] + gv)
            rest = shapely.difference(region, shapely.union_all(grown)) if len(upright) \
                else region
            extra = [pack_rectangles(piece, lu, lv, gap_u=gu, gap_v=gv, rows=options.rows,
                                     offset_steps=steps)
                     for piece in shapely.get_parts(as_region(rest)) if not piece.is_empty]
            lying = np.concatenate([upright[:0], *extra], axis=0)
            if best is None or len(lying) > len(best[1]):
                best = (upright, lying)
        rects = np.concatenate(best, axis=0)
        kinds = ["portrait"] * len(best[0]) + ["landscape"] * len(best[1])
    order, row, column = number_rows(rects)
    return AreaFill(rects=rects[order], orientation=tuple(kinds[k] for k in order), row=row,
                    column=column)


def fill_bound(usable, module: ModuleSpec, options: FillOptions | None = None) -> int:
    """Most flush modules any fill of a usable area could place with these options.

    Parameters
    ----------
    usable : shapely geometry or usable-area result
        Usable area in a face's roof-plane coordinates [m].
    module : ModuleSpec
        The module.
    options : FillOptions, optional
        Orientation and gaps (row mode and search resolution do not matter: the bound holds for
        every placement); defaults to ``FillOptions()``.

    Returns
    -------
    int
        An upper bound on the count (:func:`layout.fill.packing.rectangle_bound`). For
        ``"mixed"``, every module is at least a module width along each axis, so the line
        bounds are taken with width-by-width squares, beside the area bound of whole modules.
        ``count / bound`` says how close a fill comes to the most that could fit.
    """
    options = options or FillOptions()
    gaps = {"gap_u": options.gap_along_eave_m, "gap_v": options.gap_up_slope_m}
    if options.orientation != "mixed":
        return rectangle_bound(usable, *module_footprint(module, options.orientation), **gaps)
    area = as_region(usable).area
    side = min(module.width_m, module.length_m)
    return min(math.floor(area / module.area_m2 + 1e-9),
               rectangle_bound(usable, side, side, **gaps))


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
            name, u, v = removal_entry(entry, k)
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
