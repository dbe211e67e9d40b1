"""Tilted racks in rows on flat roofs: row spacing and placement.

Frames
------
A rack row faces ``rack_azimuth_deg`` (the compass direction of the modules' fronts, clockwise
from north). In plan the rack frame has ``p`` along the row, to the right for a viewer standing
in front of the modules and facing them, and ``q`` horizontal toward the back of the rack (away
from the direction the modules face). Rows follow one another in ``q``. A module of slant length
``L`` tilted by ``β`` covers a plan depth ``L·cos β`` and its upper edge stands ``L·sin β``
above its lower edge.

Row spacing
-----------
The row pitch is the horizontal distance between the lower edges of consecutive rows. The
common-practice rule keeps the rows free of shade between two solar times on the winter
solstice: the gap between the back of one row's footprint and the front of the next is
``D = H·cos(γs − γ) / tan α`` with ``H = L·sin β`` (α solar altitude, γs solar azimuth, γ rack
azimuth), taken at its worst over the window, and the pitch is ``D + L·cos β``. The rule assumes
a level roof and infinitely long rows.
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from ..errors import InputError, check_positive, check_range
from ..scene.modules import ModuleSpec
from ..scene.roof import RoofFace
from .packing import ROW_MODES, as_region, number_rows, pack_rectangles, rectangle_bound
from .placed import ORIENTATIONS, PlacedModule

__all__ = [
    "SOLSTICE_DECLINATION_DEG",
    "fill_racks",
    "gcr_from_row_pitch",
    "rack_bound",
    "row_pitch_from_gcr",
    "row_pitch_no_shade_window",
    "sun_from_hour_angle",
]

#: Magnitude of the solar declination at the solstices [degrees] (obliquity of the ecliptic,
#: Duffie & Beckman, Solar Engineering of Thermal Processes; REFERENCES.md).
SOLSTICE_DECLINATION_DEG = 23.44


def sun_from_hour_angle(latitude, declination_deg, hour_angle_deg):
    """Solar altitude and azimuth from latitude, declination and hour angle (geometry only).

    The sun's unit vector in east-north-up axes is
    ``E = −cos δ sin h``, ``N = sin δ cos φ − cos δ sin φ cos h``,
    ``U = sin δ sin φ + cos δ cos φ cos h`` (spherical astronomy; Duffie & Beckman eq. 1.6.5
    for the altitude). No refraction, no equation of time: the hour angle is solar time.

    Parameters
    ----------
    latitude : numeric
        Latitude φ [degrees north].
    declination_deg : numeric
        Solar declination δ [degrees].
    hour_angle_deg : numeric
        Hour angle h [degrees], 15° per hour from solar noon, negative in the morning.

    Returns
    -------
    altitude_deg : numeric
        Solar altitude above the horizon [degrees].
    azimuth_deg : numeric
        Solar azimuth clockwise from north [degrees], 0 to 360.
    """
    phi, delta, h = (np.radians(np.asarray(x, dtype=float))
                     for x in (latitude, declination_deg, hour_angle_deg))
    east = -np.cos(delta) * np.sin(h)
    north = np.sin(delta) * np.cos(phi) - np.cos(delta) * np.sin(phi) * np.cos(h)
    up = np.sin(delta) * np.sin(phi) + np.cos(delta) * np.cos(phi) * np.cos(h)
    altitude = np.degrees(np.arcsin(np.clip(up, -1.0, 1.0)))
    azimuth = np.degrees(np.arctan2(east, north)) % 360.0
    if altitude.ndim == 0:
        return float(altitude), float(azimuth)
    return altitude, azimuth


def row_pitch_from_gcr(slant_length_m: float, gcr: float) -> float:
    """Row pitch for a ground coverage ratio.

    Parameters
    ----------
    slant_length_m : float
        Slant length of the rack (module side running up the tilt) [m].
    gcr : float
        Ground coverage ratio, slant length over row pitch, more than 0 and at most 1.

    Returns
    -------
    float
        Row pitch [m] = slant length / GCR.
    """
    slant = check_positive("slant_length_m", slant_length_m, unit="m")
    ratio = check_range("gcr", gcr, 0.0, 1.0, low_open=True)
    return slant / ratio


def gcr_from_row_pitch(slant_length_m: float, row_pitch_m: float) -> float:
    """Ground coverage ratio: slant length over row pitch (dimensionless)."""
    slant = check_positive("slant_length_m", slant_length_m, unit="m")
    pitch = check_positive("row_pitch_m", row_pitch_m, unit="m")
    return slant / pitch


def row_pitch_no_shade_window(slant_length_m: float, tilt_deg: float, latitude: float, *,
                              rack_azimuth_deg: float = 180.0, start_solar_hour: float = 9.0,
                              end_solar_hour: float = 15.0,
                              declination_deg: float | None = None) -> float:
    """Row pitch that keeps rows free of row-to-row shade over a window of solar time.

    Common practice: no shade from 9:00 to 15:00 solar time on the winter solstice. The gap
    ``D = H·cos(γs − γ) / tan α`` with ``H = L·sin β`` is evaluated every minute of the
    window (and at its ends), its largest value is kept, and the pitch is
    ``D + L·cos β``. Times when the sun is behind the rows (cos(γs − γ) ≤ 0) need no gap.

    Parameters
    ----------
    slant_length_m : float
        Slant length L of the rack [m].
    tilt_deg : float
        Rack tilt β from horizontal [degrees], 0 to 90.
    latitude : float
        Site latitude [degrees north], -66 to 66 (the sun must be up during the window).
    rack_azimuth_deg : float, default 180
        Direction the modules face γ [degrees]; 180 (south) suits the northern hemisphere.
    start_solar_hour, end_solar_hour : float, default 9 and 15
        Window of solar time [hours], start before end.
    declination_deg : float, optional
        Solar declination [degrees]; by default the winter solstice of the hemisphere,
        −23.44° north of the equator and +23.44° south of it.

    Returns
    -------
    float
        Row pitch [m], lower edge to lower edge, horizontal.

    Raises
    ------
    InputError
        If the sun is below the horizon at some time in the window.
    """
    slant = check_positive("slant_length_m", slant_length_m, unit="m")
    tilt = check_range("tilt_deg", tilt_deg, 0, 90, unit="degrees")
    lat = check_range("latitude", latitude, -66, 66, unit="degrees")
    gamma = check_range("rack_azimuth_deg", rack_azimuth_deg, 0, 360, unit="degrees")
    start = check_range("start_solar_hour", start_solar_hour, 0, 24, unit="hours")
    end = check_range("end_solar_hour", end_solar_hour, 0, 24, unit="hours")
    if end <= start:
        raise InputError("end_solar_hour", "must be after start_solar_hour", value=end_solar_hour,
                         allowed=f"more than {start:g}")
    if declination_deg is None:
        delta = -SOLSTICE_DECLINATION_DEG if lat >= 0 else SOLSTICE_DECLINATION_DEG
    else:
        delta = check_range("declination_deg", declination_deg, -SOLSTICE_DECLINATION_DEG,
                            SOLSTICE_DECLINATION_DEG, unit="degrees")
    hours = np.unique(np.r_[np.arange(start, end, 1.0 / 60.0), end])
    altitude, azimuth = sun_from_hour_angle(lat, delta, 15.0 * (hours - 12.0))
    if np.any(altitude <= 0.5):
        worst = float(hours[np.argmin(altitude)])
        raise InputError(
            "start_solar_hour", f"the sun is at or below the horizon at {worst:.2f} h solar time "
            f"at latitude {lat:g}° (declination {delta:g}°)", value=start_solar_hour,
            allowed="a window when the sun is up",
        )
    height = slant * math.sin(math.radians(tilt))  # H = L·sin β
    facing = np.cos(np.radians(azimuth - gamma))
    gap = height * np.clip(facing, 0.0, None) / np.tan(np.radians(altitude))  # D
    return float(gap.max()) + slant * math.cos(math.radians(tilt))


def _rack_axes(rack_azimuth_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Plan unit vectors of the rack frame: ``p`` along the row, ``q`` toward the back."""
    g = math.radians(rack_azimuth_deg)
    front = np.array([math.sin(g), math.cos(g)])
    return np.array([-front[1], front[0]]), -front


def _rack_region(face: RoofFace, usable, rack_azimuth_deg: float):
    """Return the usable area in the rack frame ``(p, q)`` of :func:`_rack_axes` [m]."""
    region_uv = as_region(usable)
    if region_uv.is_empty:
        return region_uv
    axis_p, axis_q = _rack_axes(rack_azimuth_deg)
    to_rack = np.stack([axis_p, axis_q], axis=1)  # plan (x, y) @ to_rack = (p, q)
    return shapely.transform(region_uv, lambda uv: face.roof_to_plan(uv) @ to_rack)


def _rack_sizes(module: ModuleSpec, orientation: str, tilt_deg: float):
    """Return (slant, along, depth) of a racked module [m]."""
    slant, along = ((module.length_m, module.width_m) if orientation == "portrait"
                    else (module.width_m, module.length_m))
    return slant, along, slant * math.cos(math.radians(tilt_deg))


def rack_bound(face: RoofFace, usable, module: ModuleSpec, *, tilt_deg: float,
               rack_azimuth_deg: float, row_pitch_m: float, orientation: str = "portrait",
               gap_m: float = 0.02) -> int:
    """Most racked modules the usable area could hold at this row pitch (an upper bound).

    The footprints of :func:`fill_racks` are rectangles ``along × depth`` in the rack frame,
    ``gap_m`` apart in a row and a row pitch apart from lower edge to lower edge; the bound of
    :func:`layout.fill.packing.rectangle_bound` on those rectangles holds for any placement of
    them, rows or not.

    Parameters are those of :func:`fill_racks` (lengths in m, angles in degrees).

    Returns
    -------
    int
        No rack fill of this face at this pitch can place more modules.
    """
    _, along, depth = _rack_sizes(module, orientation, tilt_deg)
    return rectangle_bound(_rack_region(face, usable, rack_azimuth_deg), along, depth,
                           gap_u=gap_m, gap_v=max(row_pitch_m - depth, 0.0))


def fill_racks(face: RoofFace, usable, module: ModuleSpec, *, tilt_deg: float,
               rack_azimuth_deg: float, row_pitch_m: float, orientation: str = "portrait",
               gap_m: float = 0.02, base_height_m: float = 0.0, rows: str = "sliding",
               offset_steps: int = 8) -> tuple[PlacedModule, ...]:
    """Place tilted modules in rack rows on a (flat) roof face.

    Each module's footprint (its plan projection) lies inside the usable area. Rows run
    across ``rack_azimuth_deg`` at ``row_pitch_m`` from lower edge to lower edge; modules in a
    row are ``gap_m`` apart. Each row slides along its length to fit the most modules
    (``rows="sliding"``), or all rows share one grid (``rows="grid"``).

    Parameters
    ----------
    face : RoofFace
        The roof face; meant for flat roofs, where roof-plane (u, v) are plan distances. On a
        pitched face the footprints are still placed in plan and mapped onto the face.
    usable : shapely geometry or usable-area result
        Usable area in the face's roof-plane coordinates [m].
    module : ModuleSpec
        The module.
    tilt_deg : float
        Module tilt from horizontal [degrees], 0 to 90.
    rack_azimuth_deg : float
        Direction the modules face, clockwise from north [degrees].
    row_pitch_m : float
        Horizontal distance between the lower edges of consecutive rows [m], at least the
        footprint depth (see :func:`row_pitch_no_shade_window`, :func:`row_pitch_from_gcr`).
    orientation : {"portrait", "landscape"}, default "portrait"
        Portrait: the long side runs up the tilt (slant length = module length).
    gap_m : float, default 0.02
        Gap between modules in a row [m].
    base_height_m : float, default 0
        Height of each module's lower edge above the highest roof point under its footprint
        [m].
    rows : {"grid", "sliding"}, default "sliding"
        Row mode, as in :class:`layout.fill.faces.FillOptions`.
    offset_steps : int, default 8
        Offsets tried per pitch on each axis.

    Returns
    -------
    tuple of PlacedModule
        Modules with ``tilt_deg``/``azimuth_deg`` of the rack, ``uv_corners`` holding the
        footprint on the roof plane, row 0 at the front, ids ``"<face>/r<row>c<column>"``.
    """
    tilt = check_range("tilt_deg", tilt_deg, 0, 90, unit="degrees", high_open=True)
    gamma = check_range("rack_azimuth_deg", rack_azimuth_deg, 0, 360, unit="degrees")
    pitch = check_positive("row_pitch_m", row_pitch_m, unit="m")
    gap = check_range("gap_m", gap_m, 0, 1, unit="m")
    base = check_range("base_height_m", base_height_m, 0, 10, unit="m")
    if orientation not in ORIENTATIONS:
        raise InputError("orientation", "unknown orientation", value=orientation,
                         allowed=", ".join(ORIENTATIONS))
    if rows not in ROW_MODES:
        raise InputError("rows", "unknown row mode", value=rows, allowed=", ".join(ROW_MODES))
    slant, along, depth = _rack_sizes(module, orientation, tilt)
    sin_t = math.sin(math.radians(tilt))
    if pitch < depth - 1e-9:
        raise InputError("row_pitch_m", "is shorter than the depth of a tilted module, so rows "
                         "would overlap", value=row_pitch_m, allowed=f">= {depth:.3f} m")

    region_rack = _rack_region(face, usable, gamma)
    if region_rack.is_empty:
        return ()
    axis_p, axis_q = _rack_axes(gamma)
    rects = pack_rectangles(region_rack, along, depth, gap_u=gap, gap_v=pitch - depth,
                            rows=rows, offset_steps=offset_steps, columns=False)
    if len(rects) == 0:
        return ()
    order, row, column = number_rows(rects)
    rects = rects[order]
    pq = np.stack([rects[:, [0, 1]], rects[:, [2, 1]], rects[:, [2, 3]], rects[:, [0, 3]]],
                  axis=1)  # (n, 4, 2): lower left, lower right, upper right, upper left
    plan = pq[..., :1] * axis_p + pq[..., 1:] * axis_q  # (n, 4, 2)
    roof_z = face.height_at(plan)  # (n, 4)
    z_low = roof_z.max(axis=1) + base
    z = np.stack([z_low, z_low, z_low + slant * sin_t, z_low + slant * sin_t], axis=1)
    corners = np.concatenate([plan, z[..., None]], axis=-1)
    uv = face.plan_to_roof(plan)
    label = face.name or "face"
    out = []
    for k in range(len(rects)):
        box = (float(uv[k, :, 0].min()), float(uv[k, :, 1].min()),
               float(uv[k, :, 0].max()), float(uv[k, :, 1].max()))
        out.append(PlacedModule(
            id=f"{label}/r{row[k]}c{column[k]}", face=face.name, row=int(row[k]),
            column=int(column[k]), orientation=orientation, uv_rect=box,
            corners_3d=tuple(map(tuple, corners[k])), tilt_deg=tilt, azimuth_deg=gamma,
            uv_corners=tuple(map(tuple, uv[k])),
        ))
    return tuple(out)
