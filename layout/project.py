"""The project file: one versioned JSON document holding everything a user entered.

A project file (``*.eaveline.json``) is plain JSON of our own design. Its top-level key
``eaveline_schema_version`` names the version of this document format. Loading parses JSON only
(it never executes code), checks every part, and reports all problems at once, each with its
path in the document (``buildings[0].faces[1].pitch_deg``), so that a user can fix a file in one
pass. A file from a newer eaveline is refused with a clear message rather than half-read. Saving
is atomic: the document goes to a temporary file in the same folder, which then replaces the
target in one rename, so a crash never leaves a half-written project.
"""

from __future__ import annotations

import json
import os
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from functools import cached_property
from importlib import resources
from pathlib import Path

import shapely

from .errors import InputError, check_fields
from .fill.faces import FillOptions
from .fill.placed import Layout
from .fill.placement import fill_building_with_areas
from .fill.rules import ClearanceRules
from .fill.usable import UsableArea
from .power.energy import EnergyOptions
from .power.string_sizing import StringDesign
from .scene.building import Building
from .scene.inverter import InverterSpec
from .scene.modules import ModuleSpec
from .scene.obstructions import obstruction_from_dict
from .scene.roof import RoofFace
from .scene.site import Site
from .scene.survey import SurveyEntry, build_obstruction

__all__ = [
    "FILE_SUFFIX",
    "SCHEMA_KEY",
    "SCHEMA_VERSION",
    "Project",
    "ProjectFileError",
    "demo_project_path",
    "load_demo_project",
    "load_project",
    "project_from_dict",
    "project_to_dict",
    "save_project",
]

SCHEMA_KEY = "eaveline_schema_version"
SCHEMA_VERSION = 2
FILE_SUFFIX = ".eaveline.json"
UNIT_SYSTEMS = ("metric", "imperial")

_SECTIONS = (SCHEMA_KEY, "name", "units", "notes", "site", "buildings", "obstructions", "module",
             "clearance", "fill", "array_faces", "removed", "pathways", "energy", "survey",
             "sources", "inverter", "strings")

#: Keys of one entry of ``sources``: where imported items came from.
SOURCE_KEYS = ("kind", "note", "file", "crs", "acquired", "items")

# What each document version added, for the notes of an older file read by this eaveline.
_VERSION_ADDED = {2: "module electrical data, the inverter and the string design"}


class ProjectFileError(ValueError):
    """A project document has problems; ``problems`` lists each as (path, message).

    Parameters
    ----------
    problems : list of (str, str)
        Every problem found, each with its path in the document.
    source : str, optional
        File name, for the message.
    """

    def __init__(self, problems: list[tuple[str, str]], source: str = ""):
        self.problems = list(problems)
        self.source = source
        head = f"{source}: " if source else ""
        count = len(self.problems)
        lines = [f"{head}{count} problem{'s' if count != 1 else ''} in the project document:"]
        lines += [f"  - {path}: {message}" if path else f"  - {message}"
                  for path, message in self.problems]
        super().__init__("\n".join(lines))


@dataclass(frozen=True)
class Project:
    """Everything a user entered for one job: site, roofs, obstructions, module and rules.

    Parameters
    ----------
    site : Site
        Where the building stands.
    buildings : tuple of Building
        The roofs; face names are unique across the project.
    module : ModuleSpec
        The module to lay out.
    clearance : ClearanceRules
        Setbacks, clearances and pathways in force (a preset the user may have edited).
    fill : FillOptions
        Orientation, gaps and row mode of the fill.
    array_faces : tuple of str or None
        Names of the faces that take modules; None fills every face. Faces left free count
        as access pathways (see :func:`layout.fill.placement.fill_building`).
    obstructions : tuple
        Blocks, cylinders and trees around and on the roof (:mod:`layout.scene.obstructions`).
    survey : tuple of layout.scene.survey.SurveyEntry
        Field readings (distances, angles, bearings with their tolerances). Each one stands
        in the scene as the obstruction its nominal readings give
        (:attr:`scene_obstructions`); the readings are kept so that their tolerances can be
        carried to the shade loss.
    removed : tuple
        Modules the user took out, as plain data understood by
        :class:`layout.fill.placed.Layout`.
    pathways : dict or None
        Face name → edge index of each access pathway chosen by the user; None lets eaveline
        choose (:func:`layout.fill.usable.choose_pathway_faces`).
    energy : EnergyOptions
        Weather, models and electrical settings of the energy evaluation.
    units : {"metric", "imperial"}
        How lengths are shown and typed in the planner.
    name, notes : str
        Free text.
    sources : tuple of dict
        Where imported items came from (optional; files without it load as before): each a
        dict with ``kind`` (e.g. "elevation data"), ``note`` (what the planner shows beside
        the items, e.g. "from elevation data, not surveyed"), ``items`` (names of the
        buildings, faces and obstructions it gave) and optionally ``file``, ``crs`` and
        ``acquired`` (ISO date).
    inverter : layout.scene.inverter.InverterSpec or None
        The string inverter for string sizing; None when not chosen yet.
    strings : layout.power.string_sizing.StringDesign
        Design temperatures, Voc method and code limit of string sizing, and the tracking
        input of each of the user's strings (the strings themselves are
        ``energy.electrical.strings``).
    load_notes : tuple of str
        What loading the file had to say (an older document version, data string sizing
        will need). Not saved, not compared.
    """

    site: Site
    buildings: tuple[Building, ...]
    module: ModuleSpec
    clearance: ClearanceRules
    fill: FillOptions = field(default_factory=FillOptions)
    array_faces: tuple[str, ...] | None = None
    obstructions: tuple = ()
    survey: tuple = ()
    removed: tuple = ()
    pathways: dict | None = None
    energy: EnergyOptions = field(default_factory=EnergyOptions)
    units: str = "metric"
    name: str = ""
    notes: str = ""
    sources: tuple = ()
    inverter: InverterSpec | None = None
    strings: StringDesign = field(default_factory=StringDesign)
    load_notes: tuple[str, ...] = field(default=(), compare=False, repr=False)

    def __post_init__(self):
        object.__setattr__(self, "sources", parse_sources(self.sources))
        object.__setattr__(self, "buildings", tuple(self.buildings))
        object.__setattr__(self, "obstructions", tuple(self.obstructions))
        object.__setattr__(self, "survey", tuple(self.survey))
        if self.array_faces is not None:
            object.__setattr__(self, "array_faces", tuple(self.array_faces))
        # Removals are (face, u, v) centres; Layout checks and normalises them.
        object.__setattr__(self, "removed", Layout(removed=self.removed).removed)
        problems = _cross_check(self)
        if problems:
            raise ProjectFileError(problems)

    @cached_property
    def scene_obstructions(self) -> tuple:
        """Everything that stands around the roof: the obstructions, then the surveyed ones.

        Surveyed obstructions are built from their nominal readings; a deciduous tree takes
        its leaf-on months from the site's hemisphere.
        """
        hemisphere = "north" if self.site.latitude >= 0 else "south"
        return self.obstructions + tuple(build_obstruction(entry, hemisphere=hemisphere)
                                         for entry in self.survey)

    @property
    def faces(self) -> tuple[RoofFace, ...]:
        """All roof faces of all buildings, in order."""
        return tuple(face for building in self.buildings for face in building.faces)

    def source_of(self, item_name: str) -> str | None:
        """Return the note of the source an item (building, face, obstruction) came from."""
        for source in self.sources:
            if item_name in source["items"]:
                return source["note"]
        return None

    def items_noted(self, note: str) -> tuple[str, ...]:
        """Return the names of the items whose source has ``note``, in the order listed."""
        return tuple(name for source in self.sources if source["note"] == note
                     for name in source["items"])

    def outlines_noted(self, note: str) -> tuple:
        """Return ``(name, plan outline)`` of the faces and obstructions noted ``note`` [m].

        The faces first, then the obstructions with a plan footprint, each in the order
        listed: what the plan and the report outline apart (a dotted line for items "from
        elevation data, not surveyed").
        """
        noted = set(self.items_noted(note))
        faces = tuple((face.name, shapely.Polygon(face.outline)) for face in self.faces
                      if face.name in noted)
        return faces + tuple((ob.name, ob.footprint_polygon) for ob in self.obstructions
                             if getattr(ob, "name", "") in noted
                             and hasattr(ob, "footprint_polygon"))

    def unmarked(self, names) -> Project:
        """Return a copy whose ``sources`` no longer list ``names``.

        For items changed by hand (a face edited, a building moved, an obstruction dragged):
        they are no longer as the source gave them, so they lose its note.
        """
        names = set(names)
        if not any(name in source["items"] for source in self.sources for name in names):
            return self
        return replace(self, sources=tuple(
            {**s, "items": [n for n in s["items"] if n not in names]} for s in self.sources))

    def with_changes(self, **changes) -> Project:
        """Return a copy with some fields replaced (the project itself never changes)."""
        return replace(self, **changes)

    def array_faces_of(self, building: Building) -> tuple[str, ...] | None:
        """Names of ``building``'s faces that take modules (None: all of them)."""
        if self.array_faces is None:
            return None
        return tuple(name for name in building.face_names if name in self.array_faces)

    def layout(self) -> Layout:
        """Fill the array faces with modules under the project's rules and removals."""
        return self.fill_with_areas()[0]

    def fill_with_areas(self) -> tuple[Layout, dict[str, UsableArea]]:
        """Fill the array faces, and return the usable area of each array face as well.

        Returns
        -------
        layout : Layout
            Modules of every building, the removals still in force and the fill's notes.
        areas : dict of str to layout.fill.usable.UsableArea
            Usable area, zones and notes of each array face, keyed by face name.
        """
        modules, removed, notes, areas = [], [], [], {}
        for building in self.buildings:
            result, building_areas = fill_building_with_areas(
                building, self.module, self.clearance, self.fill,
                obstructions=self.scene_obstructions, removed=self.removed,
                pathway_faces=self.pathways, latitude=self.site.latitude,
                array_faces=self.array_faces_of(building),
            )
            modules.extend(result.modules)
            removed.extend(result.removed)
            notes.extend(result.notes)
            areas.update(building_areas)
        layout = Layout(modules=tuple(modules), removed=tuple(removed), notes=tuple(notes))
        return layout, areas


def _cross_check(project: Project) -> list[tuple[str, str]]:
    """Problems that involve more than one part of a project."""
    problems = []
    if project.units not in UNIT_SYSTEMS:
        problems.append(("units", f"must be one of {', '.join(UNIT_SYSTEMS)} "
                                  f"(got {project.units!r})"))
    seen: dict[str, str] = {}
    for b, building in enumerate(project.buildings):
        for f, face in enumerate(building.faces):
            path = f"buildings[{b}].faces[{f}].name"
            if face.name in seen:
                problems.append((path, f"face name {face.name!r} is used twice "
                                       f"(also at {seen[face.name]}); names must be unique"))
            else:
                seen[face.name] = path
    if project.pathways is not None:
        for face_name in project.pathways:
            if face_name not in seen:
                problems.append((f"pathways.{face_name}", "names no face of this project"))
    inputs, own = project.strings.inputs, project.energy.electrical.strings
    if inputs is not None and len(inputs) != len(own or ()):
        problems.append(("strings.inputs", f"gives {len(inputs)} tracking inputs for "
                                           f"{len(own or ())} strings in "
                                           "energy.electrical.strings (one each, or null)"))
    for i, face_name in enumerate(project.array_faces or ()):
        if face_name not in seen:
            problems.append((f"array_faces[{i}]", f"{face_name!r} names no face of this project "
                                                  f"(faces: {', '.join(seen)})"))
    return problems


def parse_sources(value) -> tuple[dict, ...]:
    """Check the ``sources`` section: a list of dicts with the keys of :data:`SOURCE_KEYS`.

    Raises
    ------
    InputError
        Naming the entry and key that is wrong.
    """
    if isinstance(value, (str, bytes, dict)) or not hasattr(value, "__iter__"):
        raise InputError("sources", "must be a list of sources", value=type(value).__name__)
    out = []
    for i, entry in enumerate(value):
        if not isinstance(entry, dict):
            raise InputError(f"sources[{i}]", "must be an object")
        try:
            check_fields(entry, SOURCE_KEYS, required=("kind", "note", "items"), what="source")
        except InputError as err:
            raise err.at(f"sources[{i}]") from None
        for key in ("kind", "note", "file", "crs", "acquired"):
            if key in entry and not isinstance(entry[key], str):
                raise InputError(f"sources[{i}].{key}", "must be text", value=entry[key])
        items = entry["items"]
        if isinstance(items, str) or not all(isinstance(n, str) for n in items):
            raise InputError(f"sources[{i}].items", "must be a list of names", value=items)
        out.append({**entry, "items": list(items)})
    return tuple(out)


# --------------------------------------------------------------------------- document form
def project_to_dict(project: Project) -> dict:
    """Return the project as a JSON-ready document (the inverse of :func:`project_from_dict`)."""
    sources = {"sources": [dict(s) for s in project.sources]} if project.sources else {}
    return {
        SCHEMA_KEY: SCHEMA_VERSION,
        "name": project.name,
        "units": project.units,
        "notes": project.notes,
        "site": project.site.to_dict(),
        "buildings": [building.to_dict() for building in project.buildings],
        "obstructions": [obstruction.to_dict() for obstruction in project.obstructions],
        "survey": [entry.to_dict() for entry in project.survey],
        "module": project.module.to_dict(),
        "clearance": project.clearance.to_dict(),
        "fill": project.fill.to_dict(),
        "array_faces": list(project.array_faces) if project.array_faces is not None else None,
        "removed": [_plain(entry) for entry in project.removed],
        "pathways": dict(project.pathways) if project.pathways is not None else None,
        "energy": project.energy.to_dict(),
        "inverter": project.inverter.to_dict() if project.inverter is not None else None,
        "strings": project.strings.to_dict(),
        **sources,
    }


def _plain(entry):
    return entry.to_dict() if hasattr(entry, "to_dict") else entry


class _Collector:
    """Runs section parsers and gathers every problem with its document path."""

    def __init__(self):
        self.problems: list[tuple[str, str]] = []

    def take(self, path: str, parse: Callable, data):
        try:
            return parse(data)
        except InputError as err:
            located = err.at(path) if path else err
            self.problems.append((located.field, _problem_text(located)))
        except (TypeError, ValueError, KeyError) as err:
            self.problems.append((path, f"cannot be read: {err}"))
        return None


def _problem_text(err: InputError) -> str:
    text = err.problem
    details = []
    if err.value is not None:
        details.append(f"got {err.value!r}")
    if err.allowed:
        details.append(f"allowed: {err.allowed}")
    return text + (f" ({'; '.join(details)})" if details else "")


def _need(data: dict, key: str, kind: type, problems: list, default=None):
    if key not in data:
        if default is not None:
            return default
        problems.append((key, "is missing"))
        return None
    value = data[key]
    if not isinstance(value, kind):
        problems.append((key, f"must be a {kind.__name__} (got {type(value).__name__})"))
        return None
    return value


def project_from_dict(data, *, source: str = "") -> Project:
    """Build a :class:`Project` from a parsed document, checking everything.

    Parameters
    ----------
    data : dict
        The parsed JSON document.
    source : str, optional
        File name used in messages.

    Raises
    ------
    ProjectFileError
        Listing every problem found, each with its path in the document.
    """
    if not isinstance(data, dict):
        raise ProjectFileError([("", "the document must be a JSON object")], source)
    version = data.get(SCHEMA_KEY)
    if version is None:
        raise ProjectFileError([(SCHEMA_KEY, "is missing: this is not an eaveline project "
                                             "document")], source)
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise ProjectFileError([(SCHEMA_KEY, f"must be a whole number from 1 (got {version!r})")],
                               source)
    if version > SCHEMA_VERSION:
        raise ProjectFileError([(SCHEMA_KEY, f"this file was written by a newer eaveline "
                                             f"(document version {version}); this eaveline reads "
                                             f"versions up to {SCHEMA_VERSION}. Update eaveline "
                                             f"to open it; the file was not changed.")], source)

    collect = _Collector()
    problems = collect.problems
    for key in sorted(set(data) - set(_SECTIONS)):
        problems.append((key, f"is not a section of a project document (known: "
                              f"{', '.join(_SECTIONS[1:])})"))

    site = collect.take("site", Site.from_dict, _need(data, "site", dict, problems))
    module = collect.take("module", ModuleSpec.from_dict, _need(data, "module", dict, problems))
    clearance = collect.take("clearance", ClearanceRules.from_dict,
                             _need(data, "clearance", dict, problems))
    energy_data = _need(data, "energy", dict, problems, default={})
    energy = (collect.take("energy", EnergyOptions.from_dict, energy_data)
              if energy_data is not None else None)
    fill_data = _need(data, "fill", dict, problems, default={})
    fill = collect.take("fill", FillOptions.from_dict, fill_data) if fill_data is not None else None

    buildings = []
    for b, entry in enumerate(_need(data, "buildings", list, problems) or []):
        path = f"buildings[{b}]"
        if not isinstance(entry, dict):
            problems.append((path, "must be an object"))
            continue
        faces = entry.get("faces")
        if not isinstance(faces, list) or not faces:
            problems.append((f"{path}.faces", "must be a non-empty list of roof faces"))
            continue
        parsed = [collect.take(f"{path}.faces[{f}]", RoofFace.from_dict, face)
                  for f, face in enumerate(faces)]
        if any(face is None for face in parsed):
            continue  # the faces' own problems are listed; building checks would repeat them
        buildings.append(collect.take(path, Building.from_dict, entry))

    obstructions = [collect.take(f"obstructions[{i}]", obstruction_from_dict, entry)
                    for i, entry in enumerate(_need(data, "obstructions", list, problems,
                                                    default=[]) or [])]
    survey = [collect.take(f"survey[{i}]", SurveyEntry.from_dict, entry)
              for i, entry in enumerate(_need(data, "survey", list, problems, default=[]) or [])]
    removed = collect.take("removed", lambda entries: Layout(removed=entries).removed,
                           _need(data, "removed", list, problems, default=[]))
    pathways = data.get("pathways")
    if pathways is not None and not (
        isinstance(pathways, dict)
        and all(isinstance(v, int) and not isinstance(v, bool) and v >= 0
                for v in pathways.values())
    ):
        problems.append(("pathways", "must map face names to edge indices (whole numbers "
                                     "from 0), or be null"))
        pathways = None
    array_faces = data.get("array_faces")
    if array_faces is not None and not (
        isinstance(array_faces, list) and all(isinstance(n, str) for n in array_faces)
    ):
        problems.append(("array_faces", "must be a list of face names, or null for every face"))
        array_faces = None
    sources = collect.take("sources", parse_sources, data.get("sources", []))
    inverter_data = data.get("inverter")
    inverter = (collect.take("inverter", InverterSpec.from_dict, inverter_data)
                if inverter_data is not None else None)
    strings_data = _need(data, "strings", dict, problems, default={})
    strings = (collect.take("strings", StringDesign.from_dict, strings_data)
               if strings_data is not None else None)
    units = _need(data, "units", str, problems, default="metric")
    name = _need(data, "name", str, problems, default="") if "name" in data else ""
    notes = _need(data, "notes", str, problems, default="") if "notes" in data else ""

    if problems:
        raise ProjectFileError(problems, source)
    try:
        return Project(
            site=site, buildings=tuple(buildings), module=module, clearance=clearance,
            fill=fill, array_faces=array_faces, obstructions=tuple(obstructions),
            survey=tuple(survey),
            removed=tuple(removed or ()), pathways=pathways, energy=energy, units=units,
            name=name, notes=notes, sources=sources or (), inverter=inverter,
            strings=strings, load_notes=_load_notes(version, module),
        )
    except ProjectFileError as err:
        raise ProjectFileError(err.problems, source) from None


def _load_notes(version: int, module: ModuleSpec) -> tuple[str, ...]:
    """Return the notes on an older document, and on data string sizing will ask for."""
    notes = [f"read from document version {version}; version {later} added "
             f"{_VERSION_ADDED[later]} (saving writes version {SCHEMA_VERSION})"
             for later in range(version + 1, SCHEMA_VERSION + 1)]
    missing = module.missing_electrical()
    if missing:
        notes.append("the module has no electrical data: string sizing needs "
                     + ", ".join(missing) + " (from the module's datasheet)")
    return tuple(notes)


# --------------------------------------------------------------------------- files
def _to_json(value, indent: int = 0) -> str:
    """JSON text that keeps short lists of numbers (a corner, 12 monthly values) on one line.

    The output is ordinary JSON (``json.loads`` reads it back exactly); only the layout of the
    text differs from ``json.dumps(..., indent=2)``, so that an outline reads one corner a line.
    """
    pad = "  " * (indent + 1)
    if isinstance(value, dict):
        if not value:
            return "{}"
        items = [f"{pad}{json.dumps(key, ensure_ascii=False)}: {_to_json(item, indent + 1)}"
                 for key, item in value.items()]
        return "{\n" + ",\n".join(items) + "\n" + "  " * indent + "}"
    if isinstance(value, (list, tuple)):
        if all(not isinstance(item, (dict, list, tuple)) for item in value):
            return json.dumps(list(value), ensure_ascii=False)
        items = [pad + _to_json(item, indent + 1) for item in value]
        return "[\n" + ",\n".join(items) + "\n" + "  " * indent + "]"
    return json.dumps(value, ensure_ascii=False)


def save_project(project: Project, path) -> Path:
    """Write the project to ``path`` atomically and return the path written.

    The document is written to a temporary file beside the target, flushed to disk, and then
    renamed over the target, so readers see either the old file or the new one, never a part.
    A path without the ``.eaveline.json`` suffix gets it appended.
    """
    target = Path(path)
    if not target.name.endswith(FILE_SUFFIX):
        target = target.with_name(target.name + FILE_SUFFIX)
    text = _to_json(project_to_dict(project)) + "\n"
    target.parent.mkdir(parents=True, exist_ok=True)
    handle, temp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp",
                                         dir=target.parent)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
            stream.flush()
            os.fsync(stream.fileno())
        os.replace(temp_name, target)
    except BaseException:
        Path(temp_name).unlink(missing_ok=True)
        raise
    return target


def load_project(path) -> Project:
    """Read and check a project file; see :func:`project_from_dict` for the errors raised."""
    source = Path(path)
    try:
        text = source.read_text(encoding="utf-8")
    except OSError as err:
        problem = ("", f"cannot read the file: {err.strerror}")
        raise ProjectFileError([problem], str(source)) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as err:
        raise ProjectFileError([("", f"is not valid JSON: {err.msg} at line {err.lineno}, "
                                     f"column {err.colno}")], str(source)) from None
    return project_from_dict(data, source=str(source))


def demo_project_path() -> Path:
    """Path of the bundled demo project (an invented house on an invented site)."""
    return Path(resources.files("layout") / "data" / f"demo_house{FILE_SUFFIX}")


def load_demo_project() -> Project:
    """Load the bundled demo project."""
    return load_project(demo_project_path())
