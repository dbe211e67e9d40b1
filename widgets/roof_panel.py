"""The Roof tab: start a project, add buildings from templates, move them, edit their faces.

The tab never changes a project itself. It reads what was typed, lets the core check it
(:mod:`layout.scene.templates`, :mod:`layout.edits`), shows each problem beside its field, and
hands a valid new project to the planner through one callback, ``on_change(project, label)``,
which returns whether the planner accepted it. A rejected edit leaves the project and every
typed text as they were.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from dataclasses import replace

import ipywidgets as w

from layout.edits import (
    add_building,
    add_face,
    add_footprints,
    blank_project,
    edit_face,
    move_building,
    remove_building,
)
from layout.errors import InputError
from layout.scene.building import Building
from layout.scene.outlines import check_outline_drawing, face_from_drawing, snap_corners
from layout.scene.roof import EDGE_KINDS
from layout.scene.site import Site, timezone_at
from layout.scene.templates import TEMPLATE_KINDS, template_from_text
from layout.units import parse_coordinate, parse_pitch

from .forms import FieldRow, error_text, length_text, read_length
from .module_panel import SETBACK_PRESETS
from .quiet import Quiet

__all__ = ["MODULE_CHOICES", "RoofPanel", "placeholder_project"]

#: Modules a new project can start with (label → spec factory); the Module tab edits them.
MODULE_CHOICES = {
    "generic 108 half-cell, 400 W": ("generic_108_half_cell", 400.0),
    "generic 60-cell, 330 W": ("generic_60_cell", 330.0),
    "generic 72-cell, 400 W": ("generic_72_cell", 400.0),
}

#: Template fields in the order the form shows them: (field, label, kinds that use it).
_TEMPLATE_FIELDS = (
    ("name", "Building name", None),
    ("length_m", "Length (ridge way)", None),
    ("width_m", "Width", None),
    ("wing_length_m", "Wing length", ("l_gable", "l_hip")),
    ("wing_width_m", "Wing width", ("l_gable", "l_hip")),
    ("pitch_deg", "Pitch (° or 6/12)", ("gable", "hip", "shed", "l_gable", "l_hip")),
    ("eave_height_m", "Eave height", None),
    ("parapet_height_m", "Parapet height", ("flat",)),
    ("rotation_deg", "Turned by (° clockwise)", None),
    ("east_m", "Corner, east", None),
    ("north_m", "Corner, north", None),
)
_NOTE = "<div style='font-size:12px;color:#5d6b6a;margin:4px 0'>{}</div>"
#: How near a clicked corner must fall to a corner already drawn to be pulled onto it [m]:
#: 15 cm, or 6 in in an imperial project.
SNAP_M = {"metric": 0.15, "imperial": 0.1524}
_NEW_BUILDING = "a new building"


def _module(label: str):
    from layout.scene import modules

    factory, watts = MODULE_CHOICES[label]
    return getattr(modules, factory)(watts)


def placeholder_project():
    """Return the empty project the planner opens on before a new project's site is typed.

    Its site is a placeholder at 0° N 0° E (UTC), with the first module and setback preset
    the New project form offers; starting the new project replaces it.
    """
    return blank_project(Site(0.0, 0.0, "UTC"), _module(next(iter(MODULE_CHOICES))),
                         next(iter(SETBACK_PRESETS.values()))(), name="new project")


class RoofPanel(Quiet, w.VBox):
    """Forms for a project's roofs: new project, template, buildings and faces."""

    def __init__(self):
        self.project = None
        self.units = "metric"
        self._change: list[Callable] = []
        self._preview: list[Callable] = []

        # ---- new project
        self.latitude = FieldRow("latitude", "Latitude",
                                 w.Text(placeholder="40.015 or 40° 0' 54\" N"))
        self.longitude = FieldRow("longitude", "Longitude",
                                  w.Text(placeholder="-105.27 or 105° 16' W"))
        self.altitude = FieldRow("altitude_m", "Altitude", w.Text(value="0"))
        self.timezone = FieldRow("timezone", "Time zone", w.Text(placeholder="found from the "
                                                                            "coordinates"))
        self.project_name = FieldRow("name", "Project name", w.Text())
        self.module_choice = FieldRow("module", "Module",
                                      w.Dropdown(options=list(MODULE_CHOICES)))
        self.preset = FieldRow("clearance", "Setbacks",
                               w.Dropdown(options=list(SETBACK_PRESETS)))
        self.new_units = FieldRow("units", "Units", w.Dropdown(
            options=[("metres", "metric"), ("feet and inches", "imperial")]))
        self.new_button = w.Button(description="Start the new project", button_style="primary",
                                   layout=w.Layout(width="auto"))
        self.new_button.add_class("eaveline-new-project")
        self.new_button.on_click(lambda _: self.start_new())
        for row in (self.latitude, self.longitude):
            row.input.observe(self._find_zone, names="value")
        for row in (self.project_name, self.latitude, self.longitude, self.altitude,
                    self.timezone, self.module_choice, self.preset, self.new_units):
            row.input.add_class(f"eaveline-new-{row.key.replace('_', '-')}")
        self.new_message = w.HTML()
        new_box = w.VBox([
            w.HTML(_NOTE.format("A project with no buildings yet, on the site given. The time "
                                "zone is looked up offline from the coordinates; check it.")),
            self.project_name, self.latitude, self.longitude, self.altitude, self.timezone,
            self.module_choice, self.preset, self.new_units, self.new_button, self.new_message])

        # ---- template
        self.kind = w.Dropdown(options=[(label, key) for key, label in TEMPLATE_KINDS.items()],
                               value="hip", description="Roof shape",
                               layout=w.Layout(width="320px"))
        self.kind.add_class("eaveline-template-kind")
        self.template_rows = {key: FieldRow(key, label, w.Text())
                              for key, label, _ in _TEMPLATE_FIELDS}
        for key, row in self.template_rows.items():
            row.input.add_class(f"eaveline-template-{key.replace('_', '-')}")
            row.input.observe(lambda _: self._template_edited(), names="value")
        self.kind.observe(lambda _: self._template_edited(), names="value")
        self.add_button = w.Button(description="Add the building", button_style="primary",
                                   disabled=True, layout=w.Layout(width="auto"))
        self.add_button.add_class("eaveline-add-building")
        self.add_button.on_click(lambda _: self.add_template())
        self.template_message = w.HTML()
        self.template_box = w.VBox()
        self._template = None

        # ---- buildings
        self.building = w.Dropdown(options=[], description="Building",
                                   layout=w.Layout(width="320px"))
        self.move_east = FieldRow("east_m", "Move east by", w.Text(value="0"))
        self.move_north = FieldRow("north_m", "Move north by", w.Text(value="0"))
        self.turn = FieldRow("turn_deg", "Turn by (° clockwise)", w.Text(value="0"))
        self.move_button = w.Button(description="Move", layout=w.Layout(width="auto"))
        self.move_button.on_click(lambda _: self.move())
        self.delete_button = w.Button(description="Delete the building", button_style="danger",
                                      layout=w.Layout(width="auto"))
        self.delete_button.on_click(lambda _: self.delete())
        self.building_message = w.HTML()
        building_box = w.VBox([self.building, self.move_east, self.move_north, self.turn,
                               w.HBox([self.move_button, self.delete_button]),
                               self.building_message])

        # ---- drawing
        self.corners: list[tuple[float, float]] = []
        self.closed = False
        self.draw_toggle = w.ToggleButton(value=False, description="Click corners on the plan",
                                          icon="pencil", layout=w.Layout(width="auto"))
        self.draw_toggle.add_class("eaveline-draw-toggle")
        self.draw_toggle.observe(lambda change: self._drawing(change["new"]), names="value")
        self.close_button = w.Button(description="Close the outline",
                                     layout=w.Layout(width="auto"))
        self.close_button.add_class("eaveline-draw-close")
        self.close_button.on_click(lambda _: self.close_outline())
        self.back_button = w.Button(description="Take back a corner",
                                    layout=w.Layout(width="auto"))
        self.back_button.on_click(lambda _: self.take_back_corner())
        self.clear_button = w.Button(description="Clear", layout=w.Layout(width="auto"))
        self.clear_button.on_click(lambda _: self.clear_drawing())
        self.corner_list = w.HTML()
        self.corner_list.add_class("eaveline-draw-corners")
        self.draw_name = FieldRow("name", "Face name", w.Text())
        self.draw_pitch = FieldRow("pitch_deg", "Pitch (° or 6/12)", w.Text(value="0"))
        self.draw_eave = FieldRow("eave_height_m", "Eave height", w.Text())
        self.draw_eave_edge = FieldRow("eave_edge", "Eave along edge", w.BoundedIntText(
            value=1, min=1, max=1))
        self.draw_into = FieldRow("building", "Add to", w.Dropdown(options=[_NEW_BUILDING]))
        for row in (self.draw_name, self.draw_pitch, self.draw_eave, self.draw_into):
            row.input.add_class(f"eaveline-draw-{row.key.replace('_', '-')}")
        self.draw_add = w.Button(description="Add the drawn face", button_style="primary",
                                 disabled=True, layout=w.Layout(width="auto"))
        self.draw_add.add_class("eaveline-draw-add")
        self.draw_add.on_click(lambda _: self.add_drawn())
        self.draw_message = w.HTML()
        self._drawing_callbacks: list[Callable] = []
        draw_box = w.VBox([
            w.HTML(_NOTE.format(
                "Turn drawing on, click the corners in order on the plan (on open ground, off "
                "the faces already drawn), then close the outline with the button or by "
                "clicking the first corner again. A corner near one already drawn is pulled "
                "onto it, so faces drawn one by one share their edges. A flat or one-slope "
                "roof is one face; a roof of several faces is drawn face by face, each added "
                "to the same building.")),
            w.HBox([self.draw_toggle, self.close_button]),
            w.HBox([self.back_button, self.clear_button]), self.corner_list,
            self.draw_name, self.draw_pitch, self.draw_eave, self.draw_eave_edge,
            self.draw_into, self.draw_add, self.draw_message])

        # ---- footprint file
        self.footprint_path = FieldRow("footprint_file", "GeoJSON file",
                                       w.Text(placeholder="footprints.geojson"))
        self.footprint_pitch = FieldRow("pitch_deg", "Pitch (° or 6/12)", w.Text(value="0"))
        self.footprint_eave = FieldRow("eave_height_m", "Eave height", w.Text(value="3 m"))
        for row in (self.footprint_path, self.footprint_pitch, self.footprint_eave):
            row.input.add_class(f"eaveline-footprint-{row.key.replace('_', '-')}")
        self.footprint_button = w.Button(description="Import the footprints",
                                         layout=w.Layout(width="auto"))
        self.footprint_button.add_class("eaveline-import-footprints")
        self.footprint_button.on_click(lambda _: self.import_footprints())
        self.footprint_message = w.HTML()
        footprint_box = w.VBox([
            w.HTML(_NOTE.format(
                "Building outlines from a GeoJSON file (longitude and latitude, or a projected "
                "system named in the file), one building each with one roof face; set each "
                "face's pitch and edges afterwards. In a project with no buildings yet, the "
                "site moves to the footprints' centre.")),
            self.footprint_path, self.footprint_pitch, self.footprint_eave,
            self.footprint_button, self.footprint_message])

        # ---- faces
        self.face = w.Dropdown(options=[], description="Face", layout=w.Layout(width="320px"))
        self.face.add_class("eaveline-face-choice")
        self.face.observe(lambda _: None if self._quiet else self._show_face(), names="value")
        self.pitch = FieldRow("pitch_deg", "Pitch (° or 6/12)", w.Text())
        self.azimuth = FieldRow("azimuth_deg", "Faces (azimuth °)", w.Text())
        self.eave = FieldRow("eave_height_m", "Eave height", w.Text())
        self.edge_box = w.VBox()
        self.face_button = w.Button(description="Apply to the face",
                                    layout=w.Layout(width="auto"))
        self.face_button.add_class("eaveline-apply-face")
        self.face_button.on_click(lambda _: self.apply_face())
        self.face_message = w.HTML()
        face_box = w.VBox([w.HTML(_NOTE.format("Click a face's name on the plan to pick it.")),
                           self.face, self.pitch, self.azimuth, self.eave, self.edge_box,
                           self.face_button, self.face_message])

        self.sections = w.Accordion(children=[new_box, w.VBox([self.kind, self.template_box,
                                                               self.add_button,
                                                               self.template_message]),
                                              draw_box, footprint_box, building_box,
                                              face_box],
                                    titles=("New project", "Add a building", "Draw an outline",
                                            "Import footprints", "Buildings", "Faces"))
        self.sections.selected_index = 1
        super().__init__([self.sections])
        self.add_class("eaveline-roof-panel")
        self._layout_template()

    # ----------------------------------------------------------------- wiring
    def on_change(self, callback: Callable) -> None:
        """Call ``callback(project, label)`` with an edited project; it returns a bool."""
        self._change.append(callback)

    def on_drawing(self, callback: Callable) -> None:
        """Call ``callback(on, corners, closed)`` when drawing starts, stops or changes."""
        self._drawing_callbacks.append(callback)

    def on_preview(self, callback: Callable) -> None:
        """Call ``callback(building or None)`` while the template form is edited."""
        self._preview.append(callback)

    def _hand_on(self, project, label: str) -> bool:
        return all([callback(project, label) for callback in self._change])

    def show(self, project) -> None:
        """Show the project's buildings and faces; typed text stays as it is."""
        self.project, self.units = project, project.units
        with self._silently():
            names = [b.name for b in project.buildings]
            keep = self.building.value if self.building.value in names else None
            self.building.options = names
            self.building.value = keep if keep is not None else (names[0] if names else None)
            self.draw_into.input.options = [_NEW_BUILDING, *names]
            faces = [f.name for b in project.buildings for f in b.faces]
            keep = self.face.value if self.face.value in faces else None
            self.face.options = faces
            self.face.value = keep if keep is not None else (faces[0] if faces else None)
        self._show_face()

    def open_new_project(self) -> None:
        """Open the New project section (``python -m widgets --new``)."""
        self.sections.selected_index = 0

    def select_face(self, name: str) -> None:
        """Pick a face (as a click on its name on the plan does) and open the Faces section."""
        if name in self.face.options:
            self.face.value = name
            self.sections.selected_index = 5

    # ----------------------------------------------------------------- new project
    def _find_zone(self, _change=None) -> None:
        try:
            latitude = parse_coordinate(self.latitude.input.value, "latitude")
            longitude = parse_coordinate(self.longitude.input.value, "longitude")
        except InputError:
            return
        try:
            self.timezone.input.value = timezone_at(latitude, longitude)
            self.timezone.set_error(None)
        except InputError as err:
            self.timezone.set_error(error_text(err))

    def start_new(self) -> bool:
        """Start a project with no buildings from the New project fields."""
        rows = (self.latitude, self.longitude, self.altitude, self.timezone)
        for row in rows:
            row.set_error(None)
        values = {}
        for row, read in ((self.latitude, lambda t: parse_coordinate(t, "latitude")),
                          (self.longitude, lambda t: parse_coordinate(t, "longitude")),
                          (self.altitude, lambda t: read_length(
                              t, self.new_units.input.value, field="altitude_m"))):
            try:
                values[row.key] = read(row.input.value)
            except InputError as err:
                row.set_error(error_text(err))
        if len(values) < 3:
            return False
        try:
            site = Site(values["latitude"], values["longitude"],
                        self.timezone.input.value.strip(), altitude_m=values["altitude_m"],
                        name=self.project_name.input.value.strip())
        except InputError as err:
            self.timezone.set_error(error_text(err))
            return False
        project = blank_project(site, _module(self.module_choice.input.value),
                                SETBACK_PRESETS[self.preset.input.value](),
                                units=self.new_units.input.value,
                                name=self.project_name.input.value.strip())
        if not self._hand_on(project, "started a new project"):
            return False
        self.new_message.value = _NOTE.format("New project started: add its first building "
                                              "below.")
        self.sections.selected_index = 1
        return True

    # ----------------------------------------------------------------- template
    def _layout_template(self) -> None:
        kind = self.kind.value
        self.template_box.children = [row for key, _, kinds in _TEMPLATE_FIELDS
                                      for row in [self.template_rows[key]]
                                      if kinds is None or kind in kinds]

    def _template_edited(self) -> None:
        self._layout_template()
        template, _ = self.read_template(quiet_missing=True)
        self._template = template
        self.add_button.disabled = template is None
        building = None
        if template is not None:
            try:
                building = template.build()
            except InputError:
                building = None
        for callback in self._preview:
            callback(building)

    def read_template(self, *, quiet_missing: bool = False):
        """Read the template fields; return (template or None, problems by field)."""
        kind = self.kind.value
        values = {key: row.input.value for key, row in self.template_rows.items()}
        unit = "ft" if self.units == "imperial" else "m"
        template, problems = template_from_text(kind, values, default_unit=unit)
        for key, row in self.template_rows.items():
            text = problems.get(key)
            row.set_error(None if (quiet_missing and text == "is missing") else text)
        return template, problems

    def add_template(self) -> bool:
        """Add the building the template fields describe."""
        template, _ = self.read_template()
        if template is None:
            self.template_message.value = _NOTE.format("Not added: see the fields marked.")
            return False
        name = template.name or self._free_name()
        building = template.build() if template.name else type(template)(
            **{**template.to_dict(), "name": name}).build()
        try:
            project = add_building(self.project, building)
        except InputError as err:
            self.template_message.value = _NOTE.format(html.escape(f"Not added: {err}"))
            return False
        if not self._hand_on(project, f"added {name}"):
            return False
        self.template_message.value = _NOTE.format(html.escape(
            f"Added {name}: {len(building.faces)} faces, "
            f"{building.plan_area_m2:.1f} m² in plan."))
        for callback in self._preview:
            callback(None)
        return True

    def _free_name(self) -> str:
        names = {b.name for b in self.project.buildings}
        if not names:
            return "house"
        k = 2
        while f"building {k}" in names:
            k += 1
        return f"building {k}"

    # ----------------------------------------------------------------- buildings
    def move(self) -> bool:
        """Move and turn the chosen building by the typed values."""
        values = {}
        for row in (self.move_east, self.move_north, self.turn):
            row.set_error(None)
            try:
                if row is self.turn:
                    values[row.key] = float(row.input.value.strip().rstrip("°") or 0)
                else:
                    values[row.key] = read_length(row.input.value or "0", self.units,
                                                  field=row.key)
            except (InputError, ValueError) as err:
                row.set_error(error_text(err) if isinstance(err, InputError)
                              else "must be a number of degrees")
        if len(values) < 3 or self.building.value is None:
            return False
        name = self.building.value
        try:
            project = move_building(self.project, name, **values)
        except InputError as err:
            self.building_message.value = _NOTE.format(html.escape(f"Not moved: {err}"))
            return False
        shift = ", ".join(f"{length_text(values[k], self.units)} {d}"
                          for k, d in (("east_m", "east"), ("north_m", "north")) if values[k])
        turn = f", turned {values['turn_deg']:g}°" if values["turn_deg"] else ""
        label = f"moved {name}" + (f" {shift}" if shift else "") + turn
        if not self._hand_on(project, label):
            return False
        self.building_message.value = _NOTE.format(html.escape(label[0].upper() + label[1:]))
        return True

    def delete(self) -> bool:
        """Delete the chosen building (undo brings it back)."""
        name = self.building.value
        if name is None:
            return False
        project = remove_building(self.project, name)
        if not self._hand_on(project, f"deleted {name}"):
            return False
        self.building_message.value = _NOTE.format(html.escape(f"Deleted {name}; undo brings "
                                                               "it back."))
        return True

    # ----------------------------------------------------------------- faces
    def _chosen_face(self):
        for building in (self.project.buildings if self.project else ()):
            for face in building.faces:
                if face.name == self.face.value:
                    return face
        return None

    def _show_face(self) -> None:
        face = self._chosen_face()
        if face is None:
            self.edge_box.children = []
            return
        with self._silently():
            self.pitch.input.value = f"{face.pitch_deg:.2f}"
            self.azimuth.input.value = f"{face.azimuth_deg:.1f}"
            self.eave.input.value = length_text(face.eave_height_m, self.units)
        for row in (self.pitch, self.azimuth, self.eave):
            row.set_error(None)
        shown = [(kind, f"Edge {i} ({length_text(edge.true_length_m, self.units)})")
                 for i, (kind, edge) in enumerate(zip(face.edge_kinds, face.edges, strict=True))]
        boxes = list(self.edge_box.children)
        if len(boxes) != len(shown):  # a face with another edge count: new dropdowns
            boxes = [w.Dropdown(options=list(EDGE_KINDS), style={"description_width": "150px"},
                                layout=w.Layout(width="320px")) for _ in shown]
            self.edge_box.children = boxes
        for box, (kind, description) in zip(boxes, shown, strict=True):
            box.value, box.description = kind, description

    def apply_face(self) -> bool:
        """Apply the typed pitch, azimuth, eave height and edge kinds to the chosen face."""
        face = self._chosen_face()
        if face is None:
            return False
        changes = {}
        readers = ((self.pitch, lambda t: parse_pitch(t, field="pitch_deg")),
                   (self.azimuth, lambda t: float(t.strip().rstrip("°"))),
                   (self.eave, lambda t: read_length(t, self.units, field="eave_height_m")))
        for row, read in readers:
            row.set_error(None)
            try:
                changes[row.key] = read(row.input.value)
            except InputError as err:
                row.set_error(error_text(err))
            except ValueError:
                row.set_error("must be a number of degrees, 0 to 360")
        if len(changes) < 3:
            return False
        kinds = [d.value for d in self.edge_box.children]
        # an edge left as shown keeps what it had (its override or none); a changed one is
        # overridden with the kind chosen
        existing = face.edge_overrides or (None,) * len(kinds)
        overrides = [k if k != shown else e
                     for k, shown, e in zip(kinds, face.edge_kinds, existing, strict=True)]
        try:
            project = edit_face(self.project, face.name, edge_kinds=overrides, **changes)
        except InputError as err:
            row = {"pitch_deg": self.pitch, "azimuth_deg": self.azimuth,
                   "eave_height_m": self.eave}.get(err.field.rsplit(".", 1)[-1])
            if row is not None:
                row.set_error(error_text(err))
            else:
                self.face_message.value = _NOTE.format(html.escape(f"Not changed: {err}"))
            return False
        if not self._hand_on(project, f"edited {face.name}"):
            return False
        self.face_message.value = _NOTE.format(html.escape(f"{face.name} changed."))
        return True

    # ----------------------------------------------------------------- drawing
    def _drawing(self, on: bool) -> None:
        self._show_corners()

    def _tolerance(self) -> float:
        return SNAP_M[self.units]

    def add_corner(self, x_m: float, y_m: float) -> None:
        """Take a corner clicked on the plan [m]: snapped, or closing at the first corner."""
        if not self.draw_toggle.value or self.closed:
            self._show_corners()
            return
        targets = [c for b in (self.project.buildings if self.project else ())
                   for f in b.faces for c in f.outline] + self.corners[:1]
        (x, y), = snap_corners([(x_m, y_m)], targets, self._tolerance())
        if len(self.corners) >= 3 and (x, y) == tuple(self.corners[0]):
            self.close_outline()
            return
        self.corners.append((float(x), float(y)))
        self._show_corners()

    def take_back_corner(self) -> None:
        """Remove the last corner (or reopen a closed outline)."""
        if self.closed:
            self.closed = False
        elif self.corners:
            self.corners.pop()
        self._show_corners()

    def clear_drawing(self) -> None:
        """Forget the outline being drawn."""
        self.corners, self.closed = [], False
        self._show_corners()

    def close_outline(self) -> bool:
        """Close the outline; say what is wrong with it when it cannot be a face."""
        try:
            check_outline_drawing(self.corners)
        except InputError as err:
            self.draw_message.value = _NOTE.format(html.escape(error_text(err)))
            self._show_corners()
            return False
        self.closed = True
        self.draw_toggle.value = False
        self._show_corners()
        return True

    def _show_corners(self) -> None:
        # the plan learns first (its click-to-add is switched with this), then the listing,
        # so that a listing that says "drawing" means clicks on the plan are taken
        for callback in self._drawing_callbacks:
            callback(self.draw_toggle.value and not self.closed, list(self.corners),
                     self.closed)
        n = len(self.corners)
        rows = []
        for i in range(n):
            a = self.corners[i]
            if i + 1 < n or (self.closed and n > 2):
                b = self.corners[(i + 1) % n]
                length = ((b[0] - a[0]) ** 2 + (b[1] - a[1]) ** 2) ** 0.5
                rows.append(f"edge {i + 1}: {length_text(length, self.units)}")
        state = ("closed" if self.closed else
                 "drawing: click the next corner" if self.draw_toggle.value else "not drawing")
        self.draw_eave_edge.input.max = max(n, 1)
        self.draw_add.disabled = not self.closed
        if self.closed:
            self.draw_message.value = ""
        self.corner_list.value = _NOTE.format(html.escape(
            f"{n} corner{'s' if n != 1 else ''}, {state}" + (": " if rows else "")
            + "; ".join(rows)))

    def add_drawn(self) -> bool:
        """Add the closed outline as a roof face: of a new building, or of one chosen."""
        if not self.closed:
            self.draw_message.value = _NOTE.format("Close the outline first.")
            return False
        values = self._pitch_and_eave(self.draw_pitch, self.draw_eave)
        if values is None:
            return False
        into = self.draw_into.input.value
        building_name = self._free_name() if into == _NEW_BUILDING else into
        name = self.draw_name.input.value.strip() or (
            f"{building_name} face {self._face_count(into) + 1}")
        try:
            face = face_from_drawing(self.corners, values["pitch_deg"],
                                     values["eave_height_m"], name=name,
                                     eave_edge=self.draw_eave_edge.input.value - 1)
            if into == _NEW_BUILDING:
                project = add_building(self.project, Building(faces=(face,), name=building_name))
            else:
                project = add_face(self.project, into, face)
        except InputError as err:
            self.draw_message.value = _NOTE.format(html.escape(f"Not added: {err}"))
            return False
        if not self._hand_on(project, f"drew {name}"):
            return False
        self.clear_drawing()
        self.draw_message.value = _NOTE.format(html.escape(
            f"Added {name} ({face.plan_area_m2:.1f} m² in plan) to {building_name}."))
        return True

    def _pitch_and_eave(self, pitch_row, eave_row) -> dict | None:
        """Read a pitch row and an eave-height row; None (each problem shown) when either is bad."""
        values = {}
        for row, read in ((pitch_row, lambda t: parse_pitch(t, field="pitch_deg")),
                          (eave_row, lambda t: read_length(t, self.units,
                                                           field="eave_height_m"))):
            row.set_error(None)
            try:
                values[row.key] = read(row.input.value)
            except InputError as err:
                row.set_error(error_text(err))
        return values if len(values) == 2 else None

    def _face_count(self, building_name: str) -> int:
        for building in self.project.buildings:
            if building.name == building_name:
                return len(building.faces)
        return 0

    # ----------------------------------------------------------------- footprints
    def import_footprints(self) -> bool:
        """Add a building over each footprint of the GeoJSON file named in the form."""
        values = self._pitch_and_eave(self.footprint_pitch, self.footprint_eave)
        self.footprint_path.set_error(None)
        path = self.footprint_path.input.value.strip()
        if not path:
            self.footprint_path.set_error("is empty (allowed: the path of a GeoJSON file)")
            return False
        if values is None:
            return False
        project = self.project
        notes = []
        try:
            if not project.buildings:  # a new project: its site moves to the footprints
                from layout.scene.footprints import read_footprints

                found = read_footprints(path)
                site = Site(found.site_latitude, found.site_longitude,
                            timezone_at(found.site_latitude, found.site_longitude),
                            altitude_m=project.site.altitude_m, name=project.site.name)
                project = replace(project, site=site)
                notes.append(f"site moved to the footprints' centre, {site.latitude:.6f}, "
                             f"{site.longitude:.6f} ({site.timezone})")
            project, found = add_footprints(project, path, pitch_deg=values["pitch_deg"],
                                            eave_height_m=values["eave_height_m"])
        except InputError as err:
            target = (self.footprint_path if err.field.startswith(("footprint_file",
                                                                   "coordinates", "crs"))
                      else None)
            if target is not None:
                target.set_error(error_text(err))
            else:
                self.footprint_message.value = _NOTE.format(html.escape(f"Not imported: {err}"))
            return False
        label = f"imported {len(found.outlines)} footprint(s) from {path}"
        if not self._hand_on(project, label):
            return False
        notes += [n for n in found.notes if "centroid" not in n]
        self.footprint_message.value = _NOTE.format(html.escape(
            f"Imported {', '.join(found.names)} ({found.crs})."
            + "".join(f" Note: {n}." for n in notes)))
        return True
