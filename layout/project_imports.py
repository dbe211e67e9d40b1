"""Projects with imported items: started from elevation data, or given some of its items.

The import itself (:mod:`layout.elevation`) knows nothing of projects; this module turns what
it found into a project or adds the items the user kept to one, and records each item's
origin in the project's ``sources`` ("from elevation data, not surveyed").
"""

from __future__ import annotations

from dataclasses import replace

from .elevation import ElevationScene, cross_check
from .errors import InputError
from .fill.rules import ifc_2021_residential
from .project import Project
from .scene.modules import generic_108_half_cell
from .scene.provenance import PROVENANCE
from .scene.site import Site

__all__ = [
    "add_scene_items",
    "elevation_source",
    "project_from_scene",
    "scene_items",
    "survey_against_elevation",
    "with_obstructions",
]

#: Module of a project started from elevation data; the user picks the real one.
DEFAULT_MODULE_W = 400.0


def _offset_timezone(longitude: float) -> str:
    """Mean solar time zone of a longitude as a fixed offset (the user can set the real one)."""
    hours = max(-12, min(14, round(longitude / 15.0)))
    return f"UTC{'+' if hours >= 0 else '-'}{abs(hours):02d}:00"


def scene_items(scene: ElevationScene) -> dict[str, object]:
    """Name → item of everything an import found: the roof (a Building), then obstructions."""
    items: dict[str, object] = {}
    if scene.building is not None:
        items[scene.building.name] = scene.building
    for item in scene.obstructions():
        items[item.name] = item
    return items


def elevation_source(scene: ElevationScene, names) -> dict:
    """Return the ``sources`` entry for the items ``names`` taken from ``scene``."""
    source = {"kind": "elevation data", "note": PROVENANCE, "file": scene.source,
              "crs": scene.crs, "items": list(names)}
    if scene.acquired is not None:
        source["acquired"] = scene.acquired.isoformat()
    return source


def _names_with_faces(items) -> list[str]:
    names = []
    for name, item in items:
        names.append(name)
        names.extend(getattr(item, "face_names", ()))
    return names


def project_from_scene(scene: ElevationScene, *, latitude: float, longitude: float,
                       timezone: str | None = None, name: str = "") -> Project:
    """Build a project from an elevation import: its roof, its obstructions, defaults else.

    Parameters
    ----------
    scene : ElevationScene
        What the import found; it must hold a roof.
    latitude, longitude : float
        The site [degrees].
    timezone : str, optional
        IANA zone or fixed offset; the longitude's mean solar offset when not given.
    name : str
        Project name.

    Returns
    -------
    Project
        A generic 400 W module and the IFC 2021 residential setbacks, for the user to change.

    Raises
    ------
    InputError
        When the import found no roof to lay modules on.
    """
    if scene.building is None:
        raise InputError("points", "no roof was found at the site, so no project can be "
                         "made: " + "; ".join(scene.missing), value=scene.source)
    site = Site(latitude, longitude, timezone or _offset_timezone(longitude),
                altitude_m=min(max(scene.ground_level_m, -500.0), 9000.0),
                name=name or scene.building.name)
    items = scene_items(scene)
    return Project(site=site, buildings=(scene.building,),
                   module=generic_108_half_cell(DEFAULT_MODULE_W),
                   clearance=ifc_2021_residential(), obstructions=scene.obstructions(),
                   name=name or f"{scene.building.name} from {scene.source}",
                   notes="\n".join(scene.summary()),
                   sources=(elevation_source(scene, _names_with_faces(items.items())),))


def add_scene_items(project: Project, scene: ElevationScene, keep) -> Project:
    """Return ``project`` with the items of ``scene`` named in ``keep``.

    The roof, when kept, replaces the project's buildings (the data's roof stands where the
    drawn one stood); obstructions are added to the project's, renamed "tree 1 (2)" when the
    project already has one of that name. Kept items are listed in a new entry of the
    project's ``sources``.

    Parameters
    ----------
    project : Project
    scene : ElevationScene
    keep : collection of str
        Names from :func:`scene_items`.

    Raises
    ------
    InputError
        Naming an item the import did not find.
    """
    items = scene_items(scene)
    keep = list(keep)
    for name in keep:
        if name not in items:
            raise InputError("keep", "names nothing the import found", value=name,
                             allowed=", ".join(items))
    if not keep:
        return project
    taken = {getattr(o, "name", "") for o in project.obstructions}
    chosen = []
    for name in keep:
        item = items[name]
        if not hasattr(item, "faces") and name in taken:
            # a second import, or the user's own item of that name: keep both, told apart
            n = 2
            while f"{name} ({n})" in taken:
                n += 1
            item = replace(item, name=f"{name} ({n})")
        taken.add(item.name)
        chosen.append((item.name, item))
    buildings = tuple(item for _, item in chosen if hasattr(item, "faces"))
    others = tuple(item for _, item in chosen if not hasattr(item, "faces"))
    changes = {"obstructions": project.obstructions + others,
               "sources": (*project.sources, elevation_source(scene, _names_with_faces(chosen)))}
    if buildings:
        changes.update(buildings=buildings, array_faces=None, pathways=None, removed=())
    return project.with_changes(**changes)


def with_obstructions(project: Project, obstructions) -> Project:
    """Return ``project`` with new obstructions, imported ones the user changed unmarked.

    An imported obstruction that was moved, edited or deleted is no longer as the data gave
    it, so its name leaves the project's ``sources``.

    Parameters
    ----------
    project : Project
    obstructions : sequence
        The project's new obstructions (an edit, a drag, a deletion).
    """
    obstructions = tuple(obstructions)
    before = {getattr(o, "name", ""): o for o in project.obstructions}
    after = {getattr(o, "name", ""): o for o in obstructions}
    changed = {name for name, old in before.items() if after.get(name) != old}
    return project.with_changes(obstructions=obstructions).unmarked(changed)


def survey_against_elevation(project: Project) -> list:
    """Return each survey entry against the project's items from elevation data.

    Returns
    -------
    list of layout.elevation.SurveyCheck
        One per survey entry (:func:`layout.elevation.cross_check`), or an empty list when the
        project has no survey or no obstruction from elevation data.
    """
    noted = set(project.items_noted(PROVENANCE))
    detected = [o for o in project.obstructions if getattr(o, "name", "") in noted]
    if not project.survey or not detected:
        return []
    return cross_check(project.survey, detected)
