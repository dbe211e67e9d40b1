"""The plan: roof faces, zones, usable area, modules and obstructions, seen from above.

Everything is drawn in the site frame (x east, y north) at true scale with equal axes, in
metres or in feet as the project asks. The view only draws what the core computed
(:meth:`layout.project.Project.layout` and the usable areas of :mod:`layout.fill.usable`) and
reports three gestures back to its owner: an obstruction marker dropped at a new place, a
click on a module, and a click on a surveyed obstruction. It never changes the project itself.

Faces and obstructions the project holds from elevation data (its ``sources``) get a dotted
umber outline over their own, and their markers say so on hover: they are as the data gave
them, not surveyed.

Surveyed obstructions (:attr:`layout.project.Project.survey`) are drawn like the others, from
the obstruction their nominal readings build, and marked as surveyed: a hollow ring at the
sighted axis, a small triangle at the station and a dotted sight line between them. They are
not dragged: their place follows from a bearing and a distance off the station, so a drag
would have to rewrite readings the surveyor took. A click on the ring opens the entry in the
Survey tab, where its readings are edited.
"""

from __future__ import annotations

import contextlib
from collections.abc import Callable

import bqplot as bq
import ipywidgets as w
import numpy as np
import shapely

from layout.scene.provenance import PROVENANCE
from layout.units import format_length

from . import style
from .plan_key import PlanKey
from .plan_scene import (
    PlanScene,
    data_rings,
    edge_label_rotation,
    exteriors,
    footprint_rings,
    free_spot,
    hatch_lines,
    obstruction_anchor,
    obstruction_label,
    padded_rings,
    plan_scene,
    polygon_rings,
    unit_factor,
)
from .quiet import Quiet

__all__ = [
    "PlanScene",  # the scene's plain data lives in widgets.plan_scene; passed on from here
    "PlanView",
    "obstruction_anchor",
    "obstruction_label",
    "plan_scene",
    "polygon_rings",
    "unit_factor",
]

#: Fixed size of the plan figure [px]; a fixed size keeps the axes equal on screen.
FIGURE_WIDTH_PX = 700
FIGURE_HEIGHT_PX = 560
FIGURE_MARGIN_PX = {"top": 16, "bottom": 48, "left": 64, "right": 88}
#: Clear border around the drawing [m].
BORDER_M = 1.0


def _marker_names(scene: PlanScene) -> list[str]:
    """Hover text of each obstruction marker: its label, and where it came from if data."""
    from_data = {name for name, _ in scene.from_data}
    return [f"{label} ({PROVENANCE})" if label in from_data else label
            for _, label, *_ in scene.obstructions]


class PlanView(Quiet, w.VBox):
    """The plan figure with drag markers on obstructions and click targets on modules.

    Parameters
    ----------
    width_px, height_px : int
        Figure size [px].

    Notes
    -----
    Gestures are reported through callbacks:

    - :meth:`on_obstruction_moved` ``(index, x_m, y_m)``: obstruction ``index`` of the project
      was dropped with its marker at plan point (x, y) [m];
    - :meth:`on_obstruction_dragging` ``(index, x_m, y_m)``: its marker is at (x, y) [m]
      while the mouse still holds it (every move); :meth:`on_obstruction_drag_start` and
      :meth:`on_obstruction_drag_end` ``()``: the mouse took hold of a marker, or let go
      (after the drop, if there was one);
    - :meth:`on_module_clicked` ``(module_id)``: the user clicked a module;
    - :meth:`on_surveyed_clicked` ``(index)``: the user clicked surveyed obstruction
      ``index`` of ``project.survey`` (surveyed obstructions are not dragged).
    """

    def __init__(self, *, width_px: int = FIGURE_WIDTH_PX, height_px: int = FIGURE_HEIGHT_PX):
        self.width_px, self.height_px = int(width_px), int(height_px)
        self.units = "metric"
        self._k = 1.0
        self._scene: PlanScene | None = None
        self._centres: dict = {}
        self._anchors = np.zeros((0, 2))  # marker positions drawn [display units]
        self._obstruction_index: list[int] = []
        self._module_ids: list[str] = []
        self._moved: list[Callable] = []
        self._drag_started: list[Callable] = []
        self._dragging: list[Callable] = []
        self._drag_ended: list[Callable] = []
        self._clicked: list[Callable] = []
        self._survey_clicked: list[Callable] = []
        self._face_clicked: list[Callable] = []
        self._corner_added: list[Callable] = []
        self._first_corner_clicked: list[Callable] = []
        self._building_moved: list[Callable] = []
        self._building_anchors = np.zeros((0, 2))
        self._surveyed_index: list[int] = []
        self.module_values = None
        self.module_values_label = ""
        self._scale_limits: tuple = (None, None)
        self.flagged: frozenset = frozenset()
        self.module_notes: dict = {}
        self.selected_id: str | None = None
        self.shadow_outline = None

        self.x_scale = bq.LinearScale(min=0.0, max=10.0)
        self.y_scale = bq.LinearScale(min=0.0, max=10.0)
        xs, ys = self.x_scale, self.y_scale
        scales = {"x": xs, "y": ys}
        self.colour_scale = bq.ColorScale(colors=list(style.FIGURE_SCALE))

        def lines(**kwargs):
            return bq.Lines(x=[], y=[], scales=scales, **kwargs)

        self.face_marks = lines(colors=[style.INK], stroke_width=1.6, close_path=True,
                                fill="inside", fill_colors=["#fbfbf8"], fill_opacities=[1.0])
        self.zone_fill_marks = lines(colors=["#bdbdbd"], stroke_width=0.6, close_path=True,
                                     fill="inside", fill_colors=["#dcdcdc"],
                                     fill_opacities=[0.55])
        self.hatch_marks = lines(colors=["#9e9e9e"], stroke_width=0.6)
        self.usable_marks = lines(colors=["#5f7d7b"], stroke_width=1.0, close_path=True,
                                  line_style="dashed")
        self.module_fill_marks = lines(colors=[style.MODULE_EDGE], stroke_width=1.0,
                                       close_path=True, fill="inside",
                                       fill_colors=[style.MODULE_FILL], fill_opacities=[1.0])
        self.removed_marks = lines(colors=[style.REMOVED_EDGE], stroke_width=1.0,
                                   close_path=True, line_style="dashed")
        self.obstruction_marks = lines(colors=["#5b5b5b"], stroke_width=1.0, close_path=True,
                                       fill="inside", fill_colors=["#8f8f8f"],
                                       fill_opacities=[0.85])
        self.tree_marks = lines(colors=[style.TREE_EDGE], stroke_width=1.2, close_path=True,
                                fill="inside", fill_colors=[style.TREE_FILL],
                                fill_opacities=[0.6], line_style="dash_dotted")
        self.flag_marks = lines(colors=[style.FLAG_EDGE], stroke_width=3.5, close_path=True)
        self.data_marks = lines(colors=[style.DATA_EDGE], stroke_width=2.2, close_path=True,
                                line_style="dotted")
        self.shadow_marks = lines(colors=[style.SHADOW_FILL], stroke_width=0.5,
                                  close_path=True, fill="inside",
                                  fill_colors=[style.SHADOW_FILL],
                                  fill_opacities=[style.SHADOW_OPACITY])
        self.selected_mark = bq.Scatter(x=[], y=[], scales=scales, marker="diamond",
                                        default_size=70, colors=[style.SELECTED],
                                        stroke="white", stroke_width=1.0)
        self.edge_labels = bq.Label(x=[], y=[], text=[], scales=scales, colors=[style.INK],
                                    default_size=11, align="middle")
        self.face_labels = bq.Label(x=[], y=[], text=[], scales=scales, colors=["#6a7473"],
                                    default_size=12, align="middle", font_weight="bold")
        self.preview_marks = lines(colors=[style.PREVIEW_EDGE], stroke_width=2.0,
                                   close_path=True, line_style="dashed")
        # drawing an outline: a click on the plan adds a corner (bqplot's "add" interaction,
        # switched on only while the Roof tab's drawing is on)
        self.draw_lines = lines(colors=[style.PREVIEW_EDGE], stroke_width=2.0)
        self.draw_points = bq.Scatter(x=[], y=[], scales=scales, marker="circle",
                                      default_size=36, colors=[style.PREVIEW_EDGE],
                                      stroke="white", stroke_width=1.0, interactions={})
        self.first_corner = bq.Scatter(
            x=[], y=[], scales=scales, marker="square", default_size=110,
            colors=["white"], stroke=style.PREVIEW_EDGE, stroke_width=2.0,
            interactions={"click": "select", "hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["click to close the outline"]),
            display_names=False, selected_style={}, unselected_style={})
        self.building_markers = bq.Scatter(
            x=[], y=[], scales=scales, marker="cross", default_size=140,
            colors=[style.PREVIEW_EDGE], stroke="white", stroke_width=1.0, enable_move=True,
            display_names=False, interactions={"hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["drag to move the building"]))
        self.face_targets = bq.Scatter(
            x=[], y=[], scales=scales, marker="square", default_size=90,
            colors=[style.INK], opacities=[0.0], stroke=None,
            interactions={"click": "select", "hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["face (click to edit)"]),
            names_unique=False, display_names=False, selected_style={}, unselected_style={},
        )
        self.module_targets = bq.Scatter(
            x=[], y=[], scales=scales, marker="square", default_size=160,
            colors=["#ffffff"], opacities=[0.01], stroke=None,
            interactions={"click": "select", "hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["module"]),
            names_unique=False,
            display_names=False, selected_style={}, unselected_style={},
        )
        self.obstruction_markers = bq.Scatter(
            x=[], y=[], scales=scales, marker="circle", default_size=110,
            colors=[style.INK], stroke="white", stroke_width=1.5, enable_move=True,
            display_names=False, interactions={"hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["drag"]),
        )
        self.sight_marks = lines(colors=["#7d8786"], stroke_width=0.8, line_style="dotted")
        self.station_marks = bq.Scatter(
            x=[], y=[], scales=scales, marker="triangle-up", default_size=40,
            colors=["#7d8786"], stroke="white", stroke_width=0.5, display_names=False,
            interactions={"hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["station"]))
        self.surveyed_markers = bq.Scatter(
            x=[], y=[], scales=scales, marker="circle", default_size=110, fill=False,
            colors=[style.INK], stroke=style.INK, stroke_width=2.0, enable_move=False,
            display_names=False, interactions={"click": "select", "hover": "tooltip"},
            tooltip=bq.Tooltip(fields=["name"], labels=["surveyed"]),
            selected_style={}, unselected_style={})
        self.x_axis = bq.Axis(scale=xs, label="x, east [m]", grid_color="#eeeeee",
                              label_offset="36px")
        self.y_axis = bq.Axis(scale=ys, label="y, north [m]", side="left",
                              grid_color="#eeeeee", label_offset="44px")
        self.colour_axis = bq.ColorAxis(scale=self.colour_scale, label="", side="right",
                                        orientation="vertical", label_offset="44px",
                                        visible=False)
        self._fills = {mark: (mark.fill_colors[0], mark.fill_opacities[0])
                       for mark in (self.face_marks, self.zone_fill_marks,
                                    self.module_fill_marks, self.obstruction_marks,
                                    self.tree_marks, self.shadow_marks)}
        self.figure = bq.Figure(
            marks=[self.face_marks, self.zone_fill_marks, self.hatch_marks, self.usable_marks,
                   self.module_fill_marks, self.removed_marks, self.flag_marks,
                   self.shadow_marks, self.tree_marks, self.obstruction_marks,
                   self.data_marks, self.sight_marks, self.edge_labels, self.face_labels,
                   self.selected_mark,
                   self.face_targets, self.building_markers, self.module_targets,
                   self.preview_marks, self.draw_lines, self.draw_points, self.first_corner,
                   self.station_marks, self.surveyed_markers, self.obstruction_markers],
            axes=[self.x_axis, self.y_axis],
            fig_margin=dict(FIGURE_MARGIN_PX), display_toolbar=False,
            background_style={"fill": "white"}, padding_x=0.0, padding_y=0.0,
            layout=w.Layout(width=f"{self.width_px}px", height=f"{self.height_px}px",
                            flex="0 0 auto"),
        )
        self.figure.add_class("eaveline-plan")
        self.pan_zoom = bq.PanZoom(scales={"x": [xs], "y": [ys]})
        self.zoom_toggle = w.ToggleButton(value=False, description="Zoom and pan",
                                          tooltip="Wheel to zoom, drag to pan; turn off to "
                                                  "move obstructions again",
                                          layout=w.Layout(width="auto", flex="0 0 auto"))
        self.fit_button = w.Button(description="Fit", tooltip="Show the whole site",
                                   layout=w.Layout(width="auto", flex="0 0 auto"))
        self.zoom_toggle.observe(self._toggle_zoom, names="value")
        self.fit_button.on_click(lambda _: self.fit())
        self.hint = w.HTML(
            "<span style='color:#5d6b6a;font-size:12px'>Drag a dark marker to move that "
            "obstruction; click a module to take it out or put it back. A hollow ring is "
            "surveyed: click it to edit its readings in Survey.</span>")
        self.obstruction_markers.observe(self._marker_moved, names=["x", "y"])
        self.obstruction_markers.on_drag_start(self._marker_drag_started)
        self.obstruction_markers.on_drag(self._marker_dragging)
        self.obstruction_markers.on_drag_end(self._marker_drag_ended)
        self.module_targets.observe(self._module_selected, names=["selected"])
        self.face_targets.observe(self._face_selected, names=["selected"])
        self.draw_points.observe(self._draw_point_added, names=["x"])
        self.first_corner.observe(self._first_corner_selected, names=["selected"])
        self.building_markers.observe(self._building_marker_moved, names=["x", "y"])
        self.surveyed_markers.observe(self._surveyed_selected, names=["selected"])
        self.key = PlanKey()
        super().__init__([w.HBox([self.zoom_toggle, self.fit_button, self.key.toggle, self.hint],
                                 layout=w.Layout(align_items="center")),
                          self.key, self.figure])

    # ----------------------------------------------------------------- callbacks
    def on_obstruction_moved(self, callback: Callable) -> None:
        """Call ``callback(index, x_m, y_m)`` when an obstruction marker is dropped."""
        self._moved.append(callback)

    def on_obstruction_drag_start(self, callback: Callable) -> None:
        """Call ``callback()`` when the mouse takes hold of an obstruction marker."""
        self._drag_started.append(callback)

    def on_obstruction_dragging(self, callback: Callable) -> None:
        """Call ``callback(index, x_m, y_m)`` on every move of a dragged obstruction marker."""
        self._dragging.append(callback)

    def on_obstruction_drag_end(self, callback: Callable) -> None:
        """Call ``callback()`` when the mouse lets go of an obstruction marker."""
        self._drag_ended.append(callback)

    def on_module_clicked(self, callback: Callable) -> None:
        """Call ``callback(module_id)`` when a module is clicked."""
        self._clicked.append(callback)

    def on_face_clicked(self, callback: Callable) -> None:
        """Call ``callback(face_name)`` when a face's name is clicked."""
        self._face_clicked.append(callback)

    def _clicked_point(self, change, mark) -> int | None:
        """Index of the point a click selected on ``mark``; the selection is cleared again."""
        selected = change["new"]
        if self._quiet or selected is None or len(selected) == 0:
            return None
        with self._silently():
            mark.selected = None
        return int(np.asarray(selected)[-1])

    def _face_selected(self, change) -> None:
        index = self._clicked_point(change, self.face_targets)
        names = list(self.face_targets.names)
        if index is not None and 0 <= index < len(names):
            for callback in self._face_clicked:
                callback(names[index])

    def set_drawing(self, on: bool) -> None:
        """Let clicks on the plan add corners of an outline (on), or stop them (off)."""
        self.draw_points.interactions = {"click": "add"} if on else {}

    def on_corner_added(self, callback: Callable) -> None:
        """Call ``callback(x_m, y_m)`` with each corner clicked on the plan while drawing."""
        self._corner_added.append(callback)

    def show_buildings(self, names, footprints) -> None:
        """Put a drag handle on each building's footprint [m], clear of its modules."""
        spots = [free_spot(footprint, self._scene) for footprint in footprints]
        anchors = np.asarray(spots, dtype=float).reshape(-1, 2) * self._k
        self._building_anchors = anchors.copy()
        with self._silently(), self.building_markers.hold_sync():
            self.building_markers.x, self.building_markers.y = anchors[:, 0], anchors[:, 1]
            self.building_markers.names = list(names)

    def on_building_moved(self, callback: Callable) -> None:
        """Call ``callback(name, east_m, north_m)`` when a building's handle is dropped."""
        self._building_moved.append(callback)

    def _building_marker_moved(self, change) -> None:
        if self._quiet:
            return
        x = np.asarray(self.building_markers.x, dtype=float)
        y = np.asarray(self.building_markers.y, dtype=float)
        anchors = self._building_anchors
        if x.shape != y.shape or len(x) != len(anchors):
            return
        moved = np.flatnonzero(np.hypot(x - anchors[:, 0], y - anchors[:, 1]) > 1e-9)
        if not len(moved):
            return
        i = int(moved[0])
        shift = (x[i] - anchors[i, 0], y[i] - anchors[i, 1])
        anchors[i] = (x[i], y[i])  # a second notification of the same drop is ignored
        name = list(self.building_markers.names)[i]
        for callback in self._building_moved:
            callback(name, shift[0] / self._k, shift[1] / self._k)

    def on_first_corner_clicked(self, callback: Callable) -> None:
        """Call ``callback()`` when the first corner of the outline being drawn is clicked."""
        self._first_corner_clicked.append(callback)

    def _first_corner_selected(self, change) -> None:
        if self._clicked_point(change, self.first_corner) is not None:
            for callback in self._first_corner_clicked:
                callback()

    def _draw_point_added(self, change) -> None:
        # the front end appends the clicked point to x, then to y: read both once y has it
        if self._quiet or len(change["new"]) <= len(change["old"] if change["old"] is not None
                                                   else ()):
            return
        x, y = self.draw_points.x, self.draw_points.y
        if len(y) < len(x):
            self.draw_points.observe(self._draw_y_arrived, names=["y"])
            return
        self._emit_corner(float(x[-1]), float(y[-1]))

    def _draw_y_arrived(self, change) -> None:
        self.draw_points.unobserve(self._draw_y_arrived, names=["y"])
        x = self.draw_points.x
        self._emit_corner(float(x[-1]), float(change["new"][-1]))

    def _emit_corner(self, x: float, y: float) -> None:
        for callback in self._corner_added:
            callback(x / self._k, y / self._k)

    def show_drawing(self, corners=(), *, closed: bool = False) -> None:
        """Draw the corners of the outline being drawn [m], joined, closed when ``closed``."""
        points = np.asarray(corners, dtype=float).reshape(-1, 2) * self._k
        path = np.vstack([points, points[:1]]) if closed and len(points) else points
        with self._silently(), self.draw_points.hold_sync(), self.draw_lines.hold_sync():
            self.draw_points.x, self.draw_points.y = points[:, 0], points[:, 1]
            self.draw_lines.x = path[:, 0] if len(path) > 1 else []
            self.draw_lines.y = path[:, 1] if len(path) > 1 else []
            # the first corner is a target to click once the outline could close
            first = points[:1] if len(points) >= 3 and not closed else points[:0]
            self.first_corner.x, self.first_corner.y = first[:, 0], first[:, 1]

    def show_preview(self, building=None) -> None:
        """Draw a building's face outlines dashed (a template being typed), or clear them."""
        rings = [] if building is None else [np.asarray(face.outline) for face in building.faces]
        xs, ys = padded_rings(rings, self._k)
        with self.preview_marks.hold_sync():
            self.preview_marks.x, self.preview_marks.y = xs, ys

    def on_surveyed_clicked(self, callback: Callable) -> None:
        """Call ``callback(index)`` when the ring of surveyed obstruction ``index`` is clicked."""
        self._survey_clicked.append(callback)

    def _surveyed_selected(self, change) -> None:
        i = self._clicked_point(change, self.surveyed_markers)
        if i is not None and 0 <= i < len(self._surveyed_index):
            for callback in self._survey_clicked:
                callback(self._surveyed_index[i])

    def _draw_surveyed(self, scene: PlanScene) -> None:
        """Set the survey marks (rings, stations, sight lines); call inside hold_sync."""
        k = self._k
        self._surveyed_index = [i for i, *_ in scene.surveyed]
        anchors = np.array([a for *_, a, _ in scene.surveyed], dtype=float).reshape(-1, 2) * k
        stations = np.array([s for *_, s in scene.surveyed], dtype=float).reshape(-1, 2) * k
        self.surveyed_markers.x = anchors[:, 0].tolist()
        self.surveyed_markers.y = anchors[:, 1].tolist()
        self.surveyed_markers.names = [label for _, label, *_ in scene.surveyed]
        self.surveyed_markers.selected = None
        unique = np.unique(stations, axis=0) if len(stations) else stations
        self.station_marks.x = unique[:, 0].tolist()
        self.station_marks.y = unique[:, 1].tolist()
        self.station_marks.names = [f"x {format_length(x / k, self.units)}, "
                                    f"y {format_length(y / k, self.units)}" for x, y in unique]
        sights = [np.array([s, a]) for s, a in zip(stations, anchors, strict=True)]
        self.sight_marks.x = [line[:, 0].tolist() for line in sights]
        self.sight_marks.y = [line[:, 1].tolist() for line in sights]

    def _surveyed_in_view(self, scene: PlanScene) -> bool:
        if not scene.surveyed:
            return True
        x0, y0, x1, y1 = shapely.total_bounds([fp for _, _, _, fp, _, _ in scene.surveyed])
        k = self._k
        xs, ys = self.x_scale, self.y_scale
        return (xs.min <= x0 * k and x1 * k <= xs.max and ys.min <= y0 * k
                and y1 * k <= ys.max)

    def _marker_moved(self, change) -> None:
        if self._quiet:
            return
        x = np.asarray(self.obstruction_markers.x, dtype=float)
        y = np.asarray(self.obstruction_markers.y, dtype=float)
        if x.shape != y.shape or len(x) != len(self._anchors):
            return
        moved = np.flatnonzero(np.hypot(x - self._anchors[:, 0], y - self._anchors[:, 1])
                               > 1e-9)
        if not len(moved):
            return
        i = int(moved[0])
        self._anchors[i] = (x[i], y[i])  # a second notification of the same drop is ignored
        for callback in self._moved:
            callback(self._obstruction_index[i], x[i] / self._k, y[i] / self._k)

    def _marker_dragging(self, _mark, content) -> None:
        if self._quiet:
            return
        try:
            i = int(content["index"])
            x, y = float(content["point"]["x"]), float(content["point"]["y"])
        except (KeyError, TypeError, ValueError):
            return
        if 0 <= i < len(self._obstruction_index) and np.isfinite([x, y]).all():
            for callback in self._dragging:
                callback(self._obstruction_index[i], x / self._k, y / self._k)

    def _marker_drag_started(self, _mark, _content) -> None:
        for callback in self._drag_started:
            callback()

    def _marker_drag_ended(self, _mark, _content) -> None:
        for callback in self._drag_ended:
            callback()

    def _module_selected(self, change) -> None:
        if self._quiet:
            return
        selected = change["new"]
        if selected is None or len(selected) == 0:
            return
        index = int(np.asarray(selected)[-1])
        with self._silently():
            self.module_targets.selected = None
        if 0 <= index < len(self._module_ids):
            for callback in self._clicked:
                callback(self._module_ids[index])

    # ----------------------------------------------------------------- scale
    def _toggle_zoom(self, change) -> None:
        self.figure.interaction = self.pan_zoom if change["new"] else None
        self.obstruction_markers.enable_move = not change["new"]

    def plot_area_px(self) -> tuple[int, int]:
        """Width and height of the plot area inside the margins [px]."""
        m = FIGURE_MARGIN_PX
        return (self.width_px - m["left"] - m["right"], self.height_px - m["top"] - m["bottom"])

    def fit(self) -> None:
        """Show the whole scene with equal axes (one metre is as long across as up)."""
        if self._scene is None:
            return
        x0, y0, x1, y1 = self._scene.bounds()
        x0, y0, x1, y1 = x0 - BORDER_M, y0 - BORDER_M, x1 + BORDER_M, y1 + BORDER_M
        pw, ph = self.plot_area_px()
        per_px = max((x1 - x0) / pw, (y1 - y0) / ph)  # metres per pixel on both axes
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        k = self._k
        with self.x_scale.hold_sync(), self.y_scale.hold_sync():
            self.x_scale.min, self.x_scale.max = (cx - 0.5 * pw * per_px) * k, (
                cx + 0.5 * pw * per_px) * k
            self.y_scale.min, self.y_scale.max = (cy - 0.5 * ph * per_px) * k, (
                cy + 0.5 * ph * per_px) * k

    # ----------------------------------------------------------------- drawing
    def draw(self, scene: PlanScene, *, units: str = "metric", keep_static: bool = False,
             preview: bool = False) -> None:
        """Redraw the plan from a scene, in the project's units.

        Parameters
        ----------
        scene : PlanScene
            What to draw.
        units : str, keyword-only
            ``"metric"`` or ``"imperial"``.
        keep_static : bool, keyword-only
            True when only obstructions (and the figures on the modules) changed since the
            last draw: faces, zones and modules are left as drawn and the view is not refitted,
            which keeps a drag quick and the plan still under the mouse.
        preview : bool, keyword-only
            True while a marker is being dragged: the footprints and the module colours follow
            the scene; the markers (which the mouse holds), the modules' hover notes (no
            pointer hovers during a drag: the drop brings them) and what a drop compares with
            stay.
        """
        if preview and self._scene is not None and units == self.units:
            self._draw_obstructions(scene, markers=False)
            return
        if keep_static and self._scene is not None and units == self.units:
            self._draw_obstructions(scene)
            return
        refit = self._scene is None or units != self.units or (
            scene.bounds() != self._scene.bounds())
        refit_shadows = units != self.units  # shadows are drawn in display units
        self._scene = scene
        self.units = units
        self._k = k = unit_factor(units)
        unit = "ft" if units == "imperial" else "m"
        span = max(scene.bounds()[2] - scene.bounds()[0], scene.bounds()[3] - scene.bounds()[1])
        spacing = max(span / 90.0, 0.05)

        face_rings = [ring for _, ring in scene.faces]
        zone_rings, hatch = [], []
        for _, _, category, zone in scene.zones:
            if category == "obstruction":
                continue  # the obstruction itself is drawn from its footprint
            zone_rings.extend(exteriors(zone))
            hatch.extend(hatch_lines(zone, spacing))
        usable_rings = [r for _, area in scene.usable for r in polygon_rings(area)]
        active = [ring for _, ring, on in scene.modules if on]
        removed = [ring for _, ring, on in scene.modules if not on]
        solids, crowns = footprint_rings(scene)

        centroids = {name: np.asarray(shapely.Polygon(ring).centroid.coords[0])
                     for name, ring in scene.faces}
        ex, ey, et, er = [], [], [], []
        labelled = set()
        for name, _, kind, ends in scene.edges:
            # an edge two faces share (a ridge, a hip, a valley) is labelled once
            key = (kind, frozenset(tuple(np.round(p, 6)) for p in ends))
            if key in labelled:
                continue
            labelled.add(key)
            mid = ends.mean(axis=0)
            inward = centroids[name] - mid
            inward *= min(0.35, 0.25 * float(np.linalg.norm(inward))) / max(
                float(np.linalg.norm(inward)), 1e-9)
            ex.append(float((mid + inward)[0] * k))
            ey.append(float((mid + inward)[1] * k))
            et.append(kind)
            er.append(edge_label_rotation(ends[0], ends[1]))

        self._module_ids = [mid for mid, _, _ in scene.modules]
        centres = np.array([ring.mean(axis=0) for _, ring, _ in scene.modules]).reshape(-1, 2)
        self._obstruction_index = [i for i, *_ in scene.obstructions]
        self._anchors = np.array([a for *_, a in scene.obstructions], dtype=float).reshape(
            -1, 2) * k

        self._centres = {mid: centre for mid, centre in zip(self._module_ids, centres,
                                                             strict=True)}
        marks = [self.face_marks, self.zone_fill_marks, self.hatch_marks, self.usable_marks,
                 self.module_fill_marks, self.removed_marks, self.obstruction_marks,
                 self.tree_marks, self.edge_labels, self.face_labels, self.module_targets,
                 self.obstruction_markers, self.flag_marks, self.selected_mark,
                 self.surveyed_markers, self.station_marks, self.sight_marks, self.data_marks,
                 self.face_targets]
        with contextlib.ExitStack() as stack, self._silently():
            for mark in marks:
                stack.enter_context(mark.hold_sync())
            for mark, rings in ((self.face_marks, face_rings),
                                (self.zone_fill_marks, zone_rings),
                                (self.hatch_marks, hatch),
                                (self.usable_marks, usable_rings),
                                (self.module_fill_marks, active),
                                (self.removed_marks, removed),
                                (self.obstruction_marks, solids),
                                (self.tree_marks, crowns),
                                (self.data_marks, data_rings(scene))):
                mark.x, mark.y = padded_rings(rings, k)
                if mark.fill == "inside":  # one fill per curve, as drawn by bqplot
                    mark.fill_colors = [self._fills[mark][0]] * max(len(rings), 1)
                    mark.fill_opacities = [self._fills[mark][1]] * max(len(rings), 1)
            self.edge_labels.x, self.edge_labels.y = ex, ey
            self.edge_labels.text, self.edge_labels.rotation = et, er
            self.face_labels.x = [float(c[0] * k) for c in centroids.values()]
            self.face_labels.y = [float(c[1] * k) for c in centroids.values()]
            self.face_labels.text = list(centroids)
            spots = [free_spot(shapely.Polygon(ring), scene) for _, ring in scene.faces]
            self.face_targets.x = [float(c[0] * k) for c in spots]
            self.face_targets.y = [float(c[1] * k) for c in spots]
            self.face_targets.names = [name for name, _ in scene.faces]
            self.face_targets.selected = None
            self.module_targets.x = (centres[:, 0] * k).tolist()
            self.module_targets.y = (centres[:, 1] * k).tolist()
            self.module_targets.selected = None
            self.obstruction_markers.x = self._anchors[:, 0].tolist()
            self.obstruction_markers.y = self._anchors[:, 1].tolist()
            self.obstruction_markers.names = _marker_names(scene)
            self._draw_surveyed(scene)
            self._paint_modules(scene)
            if self.shadow_outline is not None and refit_shadows:
                self.show_shadows(self.shadow_outline)
        self.x_axis.label = f"x, east [{unit}]"
        self.y_axis.label = f"y, north [{unit}]"
        if refit:
            self.fit()

    def _draw_obstructions(self, scene: PlanScene, *, markers: bool = True) -> None:
        k = self._k
        solids, crowns = footprint_rings(scene)
        if markers:
            self._scene = scene
            self._obstruction_index = [i for i, *_ in scene.obstructions]
            self._anchors = np.array([a for *_, a in scene.obstructions],
                                     dtype=float).reshape(-1, 2) * k
        marks = [self.obstruction_marks, self.tree_marks, self.obstruction_markers,
                 self.module_fill_marks, self.module_targets, self.flag_marks,
                 self.selected_mark, self.surveyed_markers, self.station_marks,
                 self.sight_marks, self.data_marks]
        with contextlib.ExitStack() as stack, self._silently():
            for mark in marks:
                stack.enter_context(mark.hold_sync())
            for mark, rings in ((self.obstruction_marks, solids), (self.tree_marks, crowns)):
                mark.x, mark.y = padded_rings(rings, k)
                mark.fill_colors = [self._fills[mark][0]] * max(len(rings), 1)
                mark.fill_opacities = [self._fills[mark][1]] * max(len(rings), 1)
            self.data_marks.x, self.data_marks.y = padded_rings(data_rings(scene), k)
            if markers:
                self.obstruction_markers.x = self._anchors[:, 0].tolist()
                self.obstruction_markers.y = self._anchors[:, 1].tolist()
                self.obstruction_markers.names = _marker_names(scene)
                self._draw_surveyed(scene)
            self._paint_modules(scene, notes=markers)
        if markers and not self._surveyed_in_view(scene):
            self.fit()  # a surveyed obstruction outside the view: show the whole site

    # ----------------------------------------------------------------- module figures
    @property
    def module_ids(self) -> list[str]:
        """Ids of the modules drawn, in the order of the click targets."""
        return list(self._module_ids)

    def show_module_values(self, values=None, *, label: str = "",
                           vmin: float | None = None, vmax: float | None = None) -> None:
        """Colour the active modules by a per-module figure, or draw them plain.

        Parameters
        ----------
        values : pandas.Series or None
            One figure per module id (annual shade loss [%], TSRF, annual energy [kWh] ...);
            None draws every module white. Modules missing from the index are drawn white.
        label : str
            Name and unit of the figure, shown on the colour bar.
        vmin, vmax : float, optional
            Ends of the colour scale; default the smallest and largest value shown.
        """
        self.set_module_figures(values, label=label, vmin=vmin, vmax=vmax,
                                flagged=self.flagged, notes=self.module_notes,
                                selected=self.selected_id)

    def set_module_figures(self, values=None, *, label: str = "", vmin=None, vmax=None,
                           flagged=(), notes=None, selected: str | None = None,
                           redraw: bool = True) -> None:
        """Set everything drawn on the modules from the analysis, then repaint them.

        Parameters
        ----------
        values, label, vmin, vmax
            As in :meth:`show_module_values`.
        flagged : iterable of str
            Module ids drawn with a thick outline (below the TSRF threshold).
        notes : dict of str to str, optional
            Hover text per module id (its figures); default the id alone.
        selected : str, optional
            The module marked as selected (shown in the Sky and Hours tabs).
        redraw : bool
            False only stores them (the next :meth:`draw` paints them).
        """
        self.module_values = values
        self.module_values_label = label
        self._scale_limits = (vmin, vmax)
        self.flagged = frozenset(flagged)
        self.module_notes = dict(notes or {})
        self.selected_id = selected
        if redraw and self._scene is not None:
            with contextlib.ExitStack() as stack:
                for mark in (self.module_fill_marks, self.flag_marks, self.selected_mark,
                             self.module_targets, self.colour_scale, self.colour_axis):
                    stack.enter_context(mark.hold_sync())
                self._paint_modules(self._scene)

    def show_shadows(self, outline=None) -> None:
        """Draw shadows (a plan geometry [m]) over the roof, or clear them with None."""
        self.shadow_outline = outline
        rings = [] if outline is None else polygon_rings(outline)
        n = max(len(rings), 1)
        with self.shadow_marks.hold_sync():
            self.shadow_marks.x, self.shadow_marks.y = padded_rings(rings, self._k)
            self.shadow_marks.fill_colors = [style.SHADOW_FILL] * n
            self.shadow_marks.fill_opacities = [style.SHADOW_OPACITY] * n

    def _paint_modules(self, scene: PlanScene, *, notes: bool = True) -> None:
        values = self.module_values
        k = self._k
        active = [(mid, ring) for mid, ring, on in scene.modules if on]
        active_ids = [mid for mid, _ in active]
        if notes:  # the hover notes; a preview leaves them (one message less a move)
            self.module_targets.names = [self.module_notes.get(mid, mid)
                                         for mid in self._module_ids]
        self.flag_marks.x, self.flag_marks.y = padded_rings(
            [ring for mid, ring in active if mid in self.flagged], k)
        centre = self._centres.get(self.selected_id) if self.selected_id else None
        if centre is None:
            self.selected_mark.x, self.selected_mark.y = [], []
        else:
            self.selected_mark.x, self.selected_mark.y = [float(centre[0] * k)], [
                float(centre[1] * k)]
        if values is None or not active_ids:
            self.module_fill_marks.fill_colors = [style.MODULE_FILL] * max(len(active_ids), 1)
            self.colour_axis.visible = False
            self.figure.axes = [self.x_axis, self.y_axis]
            return
        data = np.array([float(values.get(mid, np.nan)) for mid in active_ids])
        vmin, vmax = self._scale_limits
        colours = style.figure_colours(data, vmin=vmin, vmax=vmax)
        self.module_fill_marks.fill_colors = [c or style.MODULE_FILL for c in colours]
        finite = data[np.isfinite(data)]
        if len(finite):
            low = float(finite.min() if vmin is None else vmin)
            high = float(finite.max() if vmax is None else vmax)
            self.colour_scale.min, self.colour_scale.max = low, max(high, low + 1e-9)
        self.colour_axis.label = self.module_values_label
        self.colour_axis.visible = True
        self.figure.axes = [self.x_axis, self.y_axis, self.colour_axis]
