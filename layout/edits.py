"""Edits of a project's roofs: add, move, turn and delete buildings, change a face.

A project is immutable; each function here returns a new :class:`~layout.project.Project` and
leaves the one it was given as it was, so that an editor can keep every version (undo and redo,
:mod:`layout.history`). Every edit is checked before anything is returned: a rejected edit raises
:class:`~layout.errors.InputError` naming the field, the value and what is allowed.

What refers to a building's faces by name follows the edit: removals of modules and chosen
pathways on a deleted building's faces are dropped with it, and a moved or turned building keeps
them (they are in each face's own roof-plane coordinates, which turn with the face). A changed
face keeps its pathway; removals on it are kept and re-checked by the next fill, which drops
those no longer under a module and says so in its notes.

An imported building or face (listed in the project's ``sources``, e.g. "from elevation data,
not surveyed") that an edit changes is no longer as its source gave it: the edit takes it off
the list (:meth:`~layout.project.Project.unmarked`), and a deleted building's names go with
it, so that a building drawn later under the same name is not taken for the imported one. A
renamed building stays listed under its new name.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import shapely

from .errors import InputError, check_finite
from .fill.usable import roof_mounted
from .project import Project
from .scene.building import OVERLAP_TOLERANCE_M2, Building
from .scene.obstructions import Block, Cylinder, Plate
from .scene.roof import EDGE_KINDS, RoofFace, building_to_site
from .scene.site import Site, timezone_at

__all__ = [
    "add_building",
    "add_face",
    "add_footprints",
    "blank_project",
    "edit_face",
    "move_building",
    "project_from_footprints",
    "remove_building",
    "rename_building",
]


def blank_project(site, module, clearance, *, units: str = "metric", name: str = "") -> Project:
    """Return a new project on a site, with no buildings yet.

    Parameters
    ----------
    site : layout.scene.site.Site
        Where the project is.
    module : layout.scene.modules.ModuleSpec
        The module to lay out.
    clearance : layout.fill.rules.ClearanceRules
        The setback preset in force.
    units : {"metric", "imperial"}, default "metric"
        How lengths are shown and typed.
    name : str, default ""
        The project's name.
    """
    return Project(site=site, buildings=(), module=module, clearance=clearance, units=units,
                   name=name)


#: A footprint further than this from the project's site is named in a note [m]: a file for
#: another street, or a site typed wrong.
FAR_FROM_SITE_M = 1000.0


def _unique(name: str, taken: set) -> str:
    if name not in taken:
        return name
    k = 2
    while f"{name} ({k})" in taken:
        k += 1
    return f"{name} ({k})"


def add_footprints(project: Project, source, *, pitch_deg: float = 0.0,
                   eave_height_m: float = 3.0) -> tuple[Project, object]:
    """Return the project with a building over each footprint of a GeoJSON file.

    Parameters
    ----------
    project : Project
        The project; its site is the origin the footprints are placed about.
    source : str, pathlib.Path or dict
        The GeoJSON file or its content (:func:`layout.scene.footprints.read_footprints`).
    pitch_deg : float, default 0
        Slope of each building's one roof face [degrees] (0: flat); pitches are edited per
        face afterwards.
    eave_height_m : float, default 3
        Eave height of each building [m].

    Returns
    -------
    project : Project
        With the new buildings (a name already taken gets a number: "garage (2)").
    found : layout.scene.footprints.FootprintImport
        What the file held, and its notes.

    Raises
    ------
    InputError
        As :func:`layout.scene.footprints.read_footprints`, or when a footprint overlaps a
        building already there.
    """
    # pyproj only for this: `import layout` stays light
    from .scene.footprints import building_from_footprint, read_footprints

    site = project.site
    found = read_footprints(source, site_latitude=site.latitude, site_longitude=site.longitude)
    far = [f"{name} lies {np.hypot(*np.mean(outline, axis=0)) / 1000:.1f} km from the site: "
           "check the file and the project's site" for outline, name
           in zip(found.outlines, found.names, strict=True)
           if np.hypot(*np.mean(outline, axis=0)) > FAR_FROM_SITE_M]
    found = replace(found, notes=(*found.notes, *far))
    taken = {b.name for b in project.buildings}
    for outline, name in zip(found.outlines, found.names, strict=True):
        name = _unique(name, taken)
        taken.add(name)
        try:
            building = building_from_footprint(outline, name, pitch_deg=pitch_deg,
                                               eave_height_m=eave_height_m)
        except InputError as err:
            raise err.at(f"footprints[{name}]") from None
        project = add_building(project, building)
    return project, found


def project_from_footprints(source, module, clearance, *, pitch_deg: float = 0.0,
                            eave_height_m: float = 3.0, units: str = "metric",
                            name: str = "") -> tuple[Project, object]:
    """Start a project from a GeoJSON footprint file, its site at the footprints' centroid.

    The time zone is looked up offline from the centroid (:func:`timezone_at`). Other
    parameters are those of :func:`blank_project` and :func:`add_footprints`.

    Returns
    -------
    project : Project
        A new project with a building over each footprint.
    found : layout.scene.footprints.FootprintImport
        What the file held; ``found.site_latitude`` and ``found.site_longitude`` are the site.
    """
    from .scene.footprints import read_footprints

    found = read_footprints(source)
    site = Site(found.site_latitude, found.site_longitude,
                timezone_at(found.site_latitude, found.site_longitude))
    project = blank_project(site, module, clearance, units=units, name=name)
    project, _ = add_footprints(project, source, pitch_deg=pitch_deg,
                                eave_height_m=eave_height_m)
    return project, found


def _check_clear_of_others(project: Project, building: Building, skip: str | None) -> None:
    """Raise if ``building`` overlaps, in plan, a building of the project other than ``skip``."""
    for other in project.buildings:
        if other.name == skip:
            continue
        shared = shapely.area(shapely.intersection(other.footprint, building.footprint))
        if shared > OVERLAP_TOLERANCE_M2:
            raise InputError("buildings", f"this building overlaps {other.name or 'another'!r} "
                             f"by {shared:.2f} m² in plan", value=building.name or None,
                             allowed="buildings that do not overlap (move or resize it)")


def _index(project: Project, name: str) -> int:
    names = [b.name for b in project.buildings]
    if name not in names:
        raise InputError("building", "is not a building of this project", value=name,
                         allowed=", ".join(repr(n) for n in names) or "no buildings yet")
    return names.index(name)


def add_building(project: Project, building: Building) -> Project:
    """Return the project with one more building.

    Parameters
    ----------
    project : Project
        The project as it is.
    building : Building
        The new building, in the site frame [m]. Its name and its face names must be new.

    Raises
    ------
    InputError
        If its name or a face name is taken, or it overlaps another building in plan.
    """
    names = {b.name for b in project.buildings}
    if building.name in names:
        raise InputError("name", "is already the name of a building", value=building.name,
                         allowed="a name no other building has")
    taken = {f.name for b in project.buildings for f in b.faces}
    for face in building.faces:
        if face.name in taken:
            raise InputError("faces", "a face of the new building has a name already used",
                             value=face.name, allowed="face names unique in the project "
                             "(give the building a name: it prefixes its faces)")
    _check_clear_of_others(project, building, skip=None)
    return replace(project, buildings=(*project.buildings, building))


def add_face(project: Project, building_name: str, face: RoofFace) -> Project:
    """Return the project with one more roof face on an existing building.

    For roofs drawn face by face: the face joins the building's other faces (sharing their
    edges where its corners were snapped onto theirs, :func:`layout.scene.outlines.snap_corners`).

    Raises
    ------
    InputError
        If the building is unknown, the face's name is taken, or the face overlaps another
        face of the building or another building in plan.
    """
    index = _index(project, building_name)
    building = project.buildings[index]
    taken = {f.name for b in project.buildings for f in b.faces}
    if face.name in taken:
        raise InputError("name", "is already the name of a face", value=face.name,
                         allowed="a face name unique in the project")
    grown = Building(faces=(*building.faces, face), name=building.name,
                     parapet_height_m=building.parapet_height_m)  # checks the faces' overlap
    _check_clear_of_others(project, grown, skip=building_name)
    buildings = list(project.buildings)
    buildings[index] = grown
    return replace(project, buildings=tuple(buildings)).unmarked({building_name})


def remove_building(project: Project, name: str) -> Project:
    """Return the project without the building ``name`` and what referred to its faces."""
    index = _index(project, name)
    faces = set(project.buildings[index].face_names)
    array_faces = project.array_faces
    if array_faces is not None:
        array_faces = tuple(f for f in array_faces if f not in faces)
    pathways = project.pathways
    if pathways is not None:
        pathways = {f: e for f, e in pathways.items() if f not in faces}
    removed = tuple(r for r in project.removed if r[0] not in faces)
    buildings = project.buildings[:index] + project.buildings[index + 1:]
    return replace(project, buildings=buildings, array_faces=array_faces, pathways=pathways,
                   removed=removed).unmarked({name, *faces})


def rename_building(project: Project, name: str, new_name: str) -> Project:
    """Return the project with building ``name`` called ``new_name`` (its faces keep theirs)."""
    index = _index(project, name)
    if new_name != name and new_name in {b.name for b in project.buildings}:
        raise InputError("name", "is already the name of a building", value=new_name,
                         allowed="a name no other building has")
    buildings = list(project.buildings)
    buildings[index] = replace(buildings[index], name=new_name)
    sources = tuple({**src, "items": [new_name if n == name else n for n in src["items"]]}
                    for src in project.sources)
    return replace(project, buildings=tuple(buildings), sources=sources)


def move_building(project: Project, name: str, *, east_m: float = 0.0, north_m: float = 0.0,
                  turn_deg: float = 0.0) -> Project:
    """Return the project with a building moved and turned as one rigid body.

    What stands on its roof (chimneys, vents, units: every obstruction of the project that is
    roof-mounted on one of its faces, :func:`layout.fill.usable.roof_mounted`) moves with it.
    Survey readings stay as they were measured: they describe the real site, so a reading of a
    rooftop item is re-entered if the building was first drawn in the wrong place.

    Parameters
    ----------
    project : Project
        The project as it is.
    name : str
        The building to move.
    east_m, north_m : float, default 0
        Shift of the building [m].
    turn_deg : float, default 0
        Turn about the centre of its plan footprint, clockwise seen from above [degrees]
        (as compass azimuths turn: every face's azimuth grows by ``turn_deg``).

    Raises
    ------
    InputError
        If a value is not finite or the moved building would overlap another one.
    """
    east_m = check_finite("east_m", east_m)
    north_m = check_finite("north_m", north_m)
    turn_deg = check_finite("turn_deg", turn_deg)
    index = _index(project, name)
    building = project.buildings[index]
    centre = np.array(building.footprint.centroid.coords[0])

    def carry(points) -> tuple:
        local = np.asarray(points, dtype=float) - centre  # a turn about the centre
        moved = building_to_site(local, turn_deg, centre + np.array([east_m, north_m]))
        return tuple(map(tuple, moved))

    faces = [replace(face, outline=carry(face.outline),
                     azimuth_deg=(face.azimuth_deg + turn_deg) % 360.0)
             for face in building.faces]
    moved = replace(building, faces=tuple(faces))
    _check_clear_of_others(project, moved, skip=name)
    buildings = list(project.buildings)
    buildings[index] = moved
    obstructions = tuple(_carried(ob, carry)
                         if any(roof_mounted(face, ob) for face in building.faces) else ob
                         for ob in project.obstructions)
    changed = bool(east_m or north_m or turn_deg)  # a zero move still rounds the corners
    # what it carried keeps its source: where it stands on the roof is what was read
    return replace(project, buildings=tuple(buildings), obstructions=obstructions).unmarked(
        {name, *building.face_names} if changed else ())


def _carried(obstruction, carry):
    """Return a rooftop obstruction moved by ``carry`` (plan points to plan points)."""
    if isinstance(obstruction, Block):
        return replace(obstruction, footprint=carry(obstruction.footprint))
    if isinstance(obstruction, Cylinder):
        return replace(obstruction, center=carry([obstruction.center])[0])
    if isinstance(obstruction, Plate):
        corners = np.asarray(obstruction.corners, dtype=float)
        plan = np.asarray(carry(corners[:, :2]))
        return replace(obstruction, corners=tuple(map(tuple, np.column_stack([plan,
                                                                              corners[:, 2]]))))
    return obstruction  # nothing else stands on a roof (a tree's crown only hangs over it)


def edit_face(project: Project, face_name: str, *, pitch_deg: float | None = None,
              azimuth_deg: float | None = None, eave_height_m: float | None = None,
              edge_kinds=None) -> Project:
    """Return the project with one roof face changed.

    Parameters
    ----------
    project : Project
        The project as it is.
    face_name : str
        The face to change.
    pitch_deg : float, optional
        New slope [degrees], 0 to 75.
    azimuth_deg : float, optional
        New direction the slope faces, clockwise from north [degrees], 0 to 360.
    eave_height_m : float, optional
        New height of the face's lowest point above ground [m].
    edge_kinds : sequence of str or None, optional
        One kind per edge (eave, ridge, rake, hip, valley, or None to keep the kind read from
        the geometry).

    Raises
    ------
    InputError
        Naming the field of the face (``faces[south].pitch_deg``) when a value is out of range.
    """
    b_index, f_index = _find_face(project, face_name)
    building = project.buildings[b_index]
    face = building.faces[f_index]
    changes = {}
    if pitch_deg is not None:
        changes["pitch_deg"] = pitch_deg
    if azimuth_deg is not None:
        changes["azimuth_deg"] = azimuth_deg
    if eave_height_m is not None:
        changes["eave_height_m"] = eave_height_m
    if edge_kinds is not None:
        kinds = tuple(edge_kinds)
        for i, kind in enumerate(kinds):
            if kind is not None and kind not in EDGE_KINDS:
                raise InputError(f"faces[{face_name}].edge_kinds[{i}]", "unknown edge kind",
                                 value=kind, allowed=", ".join(EDGE_KINDS))
        changes["edge_overrides"] = kinds
    try:
        new_face = RoofFace(**{**_face_fields(face), **changes})
    except InputError as err:
        raise err.at(f"faces[{face_name}]") from None
    faces = list(building.faces)
    faces[f_index] = new_face
    buildings = list(project.buildings)
    buildings[b_index] = replace(building, faces=tuple(faces))
    return replace(project, buildings=tuple(buildings)).unmarked(
        {face_name, building.name} if new_face != face else ())


def _find_face(project: Project, face_name: str) -> tuple[int, int]:
    """Return (building index, face index) of the face called ``face_name``."""
    for b_index, building in enumerate(project.buildings):
        for f_index, face in enumerate(building.faces):
            if face.name == face_name:
                return b_index, f_index
    names = [f.name for b in project.buildings for f in b.faces]
    raise InputError("face", "is not a face of this project", value=face_name,
                     allowed=", ".join(names) or "no faces yet")


def _face_fields(face: RoofFace) -> dict:
    return {"outline": face.outline, "pitch_deg": face.pitch_deg,
            "azimuth_deg": face.azimuth_deg, "eave_height_m": face.eave_height_m,
            "name": face.name, "edge_overrides": face.edge_overrides}
