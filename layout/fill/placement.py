"""Filling whole buildings: every array face within its setbacks, racks on flat faces.

:func:`fill_building` is the entry point of the fill stage. It computes each face's usable
area (:mod:`layout.fill.usable`), fills pitched faces flush (:mod:`layout.fill.faces`) and
flat faces with rack rows when asked (:mod:`layout.fill.racking`), applies the user's
removals, and returns one :class:`~layout.fill.placed.Layout`. :func:`compare_orientations`
fills the same roof in every orientation and row mode and tabulates the counts.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import replace
from functools import lru_cache

import pandas as pd

from ..errors import InputError
from ..scene.modules import ModuleSpec
from ..scene.roof import RoofFace
from .faces import FILL_ORIENTATIONS, FLAT_FACE_MAX_PITCH_DEG, FillOptions, fill_bound, fill_face
from .packing import ROW_MODES, as_region, pack_rectangles
from .placed import ORIENTATIONS, Layout, module_footprint, removal_entry
from .racking import fill_racks, rack_bound, row_pitch_from_gcr, row_pitch_no_shade_window
from .rules import array_share, ridge_setback_in_force
from .usable import choose_pathway_faces, usable_area

__all__ = ["area_bound", "compare_orientations", "fill_building", "fill_building_with_areas"]


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
    orientation, pitch = _rack_geometry(module, options, latitude)
    return fill_racks(face, usable, module, tilt_deg=options.rack_tilt_deg,
                      rack_azimuth_deg=options.rack_azimuth_deg, row_pitch_m=pitch,
                      orientation=orientation, gap_m=options.gap_along_eave_m,
                      base_height_m=options.rack_base_height_m, rows=options.rows,
                      offset_steps=options.offset_steps)


def _face_bound(face, usable, module, options, latitude) -> int:
    """Most modules any fill of this face's usable area could place with these options."""
    if not _takes_racks(face, options):
        return fill_bound(usable, module, options)
    orientation, pitch = _rack_geometry(module, options, latitude)
    return rack_bound(face, usable, module, tilt_deg=options.rack_tilt_deg,
                      rack_azimuth_deg=options.rack_azimuth_deg, row_pitch_m=pitch,
                      orientation=orientation, gap_m=options.gap_along_eave_m)


def _plan_share(modules, spec: ModuleSpec, roof_plan_area_m2: float) -> float:
    """Plan area of the modules over the plan-view roof area (plan = true area × cos tilt)."""
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


@lru_cache(maxsize=64)
def _filled_face(face, rules, obstructions, share, edges, module, options, racked, latitude):
    """Return the usable area of one face and the modules placed in it.

    Every argument is frozen, and the answer depends on nothing else, so recent answers are
    kept: after an edit of one face (its pitch, say) the building's other faces are not filled
    again. The modules are a tuple and the usable area is frozen, so a kept answer cannot be
    changed by its callers.
    """
    area = usable_area(face, rules, obstructions, array_share=share, pathway_edges=edges)
    if racked:
        return area, tuple(_fill_racked_face(face, area, module, options, latitude))
    return area, tuple(fill_face(face, area, module, options))


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
    areas : dict of str to layout.fill.usable.UsableArea
        Usable area, zones and notes of each array face, as the fill used them (for drawing).
    """
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
    removals = [removal_entry(e, i) for i, e in enumerate(removed)]
    removals = [r for r in removals if r[0] in names]

    racked = {face.name for face in faces if _takes_racks(face, options)}
    if racked:
        notes.extend(_rack_notes(sorted(racked), module, options, latitude))

    def run(share: float):
        areas, placed = {}, []
        for face in faces:
            edges = (pathways[face.name],) if face.name in pathways else ()
            try:
                area, modules = _filled_face(face, rules, obstructions, share, edges, module,
                                             options, face.name in racked, latitude)
            except InputError as err:
                raise err.at(f"faces[{face.name}]") from None
            areas[face.name] = area
            placed.extend(modules)
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
    rules : layout.fill.rules.ClearanceRules
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
        :func:`layout.fill.usable.choose_pathway_faces` choose.
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
def area_bound(usable_area_m2: float, module: ModuleSpec) -> int:
    """Most modules an area could hold by area alone: ``floor(area / module area)``.

    Modules do not overlap and each covers its own true area, so no fill of a usable area of
    ``usable_area_m2`` [m², true area on the roof plane] can place more; a fill's count over
    this bound says how close it comes (a rectangle whose sides are whole multiples of the
    module reaches it with no gaps).
    """
    # the tolerance keeps an exact multiple from losing one module to rounding
    return max(0, math.floor(usable_area_m2 / module.area_m2 + 1e-9))


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
    rules : layout.fill.rules.ClearanceRules, optional
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
        [m², true area], ``usable_area_m2`` [m², true area], ``usable_use_pct`` (module
        area over usable area [%]), ``area_bound``, the most modules the usable area could
        hold by area alone, ``floor(usable area / module area)``, and ``bound``, the tighter
        bound of :func:`layout.fill.faces.fill_bound` (area and the lines every module
        crosses, same orientation and gaps; racked faces by
        :func:`layout.fill.racking.rack_bound`) summed over the faces: no fill can place
        more, so ``modules / bound`` tells how close a fill comes to the most that fits.
    """
    base = options or FillOptions()
    is_face = isinstance(target, RoofFace)
    if is_face and usable is None:
        if rules is None:
            raise InputError("usable", "give the face's usable area or the rules to compute it")
        usable = usable_area(target, rules, obstructions)
    if not is_face and rules is None:
        raise InputError("rules", "are needed to fill a building")
    records = []
    for orientation in FILL_ORIENTATIONS:
        for rows in ROW_MODES:
            opts = replace(base, orientation=orientation, rows=rows)
            if is_face:
                placed = fill_face(target, usable, module, opts)
                area = float(as_region(usable).area)
                bound = fill_bound(usable, module, opts)
            else:
                layout, areas = fill_building_with_areas(
                    target, module, rules, opts, obstructions=obstructions,
                    pathway_faces=pathway_faces, latitude=latitude, array_faces=array_faces)
                placed = layout.modules
                area = float(sum(as_region(a).area for a in areas.values()))
                faces = {face.name: face for face in target.faces}
                bound = sum(_face_bound(faces[name], a, module, opts, latitude)
                            for name, a in areas.items())
            n = len(placed)
            n_portrait = sum(m.orientation == "portrait" for m in placed)
            records.append({
                "option": f"{orientation}, {rows}", "orientation": orientation, "rows": rows,
                "modules": n, "portrait_modules": n_portrait,
                "landscape_modules": n - n_portrait,
                "power_kwp": n * module.power_w / 1000.0,
                "module_area_m2": n * module.area_m2, "usable_area_m2": area,
                "usable_use_pct": 100.0 * n * module.area_m2 / area if area > 0 else 0.0,
                "area_bound": area_bound(area, module), "bound": bound,
            })
    return pd.DataFrame.from_records(records)
