"""The Elevation data tab: import a LiDAR tile, preview what it holds, keep what is wanted.

:class:`ElevationPanel` reads a point cloud (and optionally a surface raster) about the
project's site with :func:`layout.elevation.import_elevation`, lists what it found (the roof
with its faces, chimneys, trees, neighbouring buildings, the far horizon) with a checkbox for
each, and hands the kept items to its owner (:meth:`ElevationPanel.on_keep`), which adds them
with :func:`layout.project_imports.add_scene_items`. Everything kept is marked in the project
as "from elevation data, not surveyed"; the panel lists which items of the project are.
"""

from __future__ import annotations

import html
from collections.abc import Callable

import ipywidgets as w

from layout.elevation import import_elevation
from layout.errors import InputError
from layout.project_imports import add_scene_items, scene_items
from layout.scene.provenance import PROVENANCE

__all__ = ["ElevationPanel", "item_label"]


def item_label(item) -> str:
    """One line describing a found item for its checkbox."""
    kind = type(item).__name__
    if hasattr(item, "faces"):
        faces = ", ".join(f"{f.name} {f.pitch_deg:.1f}° to {round(f.azimuth_deg) % 360}°"
                          for f in item.faces)
        return f"roof ({len(item.faces)} faces: {faces}); replaces the drawn roof"
    if kind == "Tree":
        return (f"{item.name}: {item.height:.1f} m tall, crown {item.crown_radius:.1f} m, at "
                f"({item.center[0]:.1f}, {item.center[1]:.1f}) m")
    if kind == "Block":
        c = item.footprint_polygon.centroid
        return (f"{item.name} ({item.kind}): top {item.top:.2f} m, at ({c.x:.1f}, {c.y:.1f}) m")
    if kind == "HorizonProfile":
        return f"{item.name}: up to {max(item.elevation_deg):.1f}° above the horizontal"
    return item.name


class ElevationPanel(w.VBox):
    """The Elevation data tab.

    Attributes
    ----------
    tile_path, surface_path : ipywidgets.Text
        The LAS/LAZ file, and an optional GeoTIFF surface for the far horizon.
    radius : ipywidgets.BoundedFloatText
        Crop radius about the site [m].
    find_button : ipywidgets.Button
        Calls :meth:`find`.
    found_html : ipywidgets.HTML
        What the import found and could not, its date, and the provenance note.
    checkboxes : dict of str to ipywidgets.Checkbox
        One per found item, by name; all ticked after a find.
    keep_button : ipywidgets.Button
        Calls :meth:`keep`.
    marked_html : ipywidgets.HTML
        The project's items that came from elevation data.
    message : ipywidgets.HTML
        What the last action did, or the error that stopped it.
    """

    def __init__(self):
        self.project = None
        self.scene = None
        self._callbacks: list[Callable] = []
        self.tile_path = w.Text(description="Point cloud", placeholder="tile.laz",
                                layout=w.Layout(width="500px"))
        self.surface_path = w.Text(description="Surface", placeholder="optional: dsm.tif",
                                   layout=w.Layout(width="500px"))
        self.radius = w.BoundedFloatText(value=40.0, min=1.0, max=5000.0,
                                         description="Radius (m)")
        self.find_button = w.Button(description="Find")
        self.find_button.on_click(lambda _: self.find())
        self.found_html = w.HTML()
        self.items_box = w.VBox()
        self.checkboxes: dict[str, w.Checkbox] = {}
        self.keep_button = w.Button(description="Keep the ticked items", disabled=True,
                                    layout=w.Layout(width="auto"))
        self.keep_button.on_click(lambda _: self.keep())
        self.message = w.HTML()
        self.marked_html = w.HTML()
        super().__init__([
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>Aerial LiDAR (LAS/LAZ) about "
                   "the project's site; its CRS is read from the file.</div>"),
            self.tile_path, self.surface_path, w.HBox([self.radius, self.find_button]),
            self.found_html, self.items_box, self.keep_button, self.message,
            self.marked_html])

    def on_keep(self, callback: Callable) -> None:
        """Call ``callback(project)`` with the project and the kept items; it returns a bool."""
        self._callbacks.append(callback)

    def show(self, project) -> None:
        """Hold the project the items would join, and list its items from elevation data."""
        self.project = project
        marked = project.items_noted(PROVENANCE)
        if not marked:
            self.marked_html.value = ""
            return
        self.marked_html.value = (
            "<div style='font-size:12px;margin-top:8px'><b>In the project "
            f"{html.escape(PROVENANCE)}:</b> " + html.escape(", ".join(marked)) + "</div>")

    def find(self) -> bool:
        """Import the tile about the project's site and list what it holds.

        Returns
        -------
        bool
            True when something was found.
        """
        self.scene = None
        self.checkboxes = {}
        self.items_box.children = ()
        self.keep_button.disabled = True
        path = self.tile_path.value.strip()
        if not path:
            self.message.value = self._error("Give the point cloud's file.")
            return False
        site = self.project.site
        try:
            scene = import_elevation(path, site_latitude=site.latitude,
                                     site_longitude=site.longitude,
                                     radius_m=float(self.radius.value),
                                     surface=self.surface_path.value.strip() or None)
        except InputError as err:
            self.message.value = self._error(str(err))
            return False
        self.scene = scene
        lines = "".join(f"<li>{html.escape(line)}</li>" for line in scene.summary())
        self.found_html.value = f"<ul style='font-size:12px;padding-left:18px'>{lines}</ul>"
        for name, item in scene_items(scene).items():
            box = w.Checkbox(value=True, description=item_label(item), indent=False,
                             layout=w.Layout(width="auto"))
            self.checkboxes[name] = box
        self.items_box.children = tuple(self.checkboxes.values())
        self.keep_button.disabled = not self.checkboxes
        self.message.value = ""
        return bool(self.checkboxes)

    def keep(self) -> bool:
        """Add the ticked items to the project through the owner's callback."""
        if self.scene is None:
            return False
        kept = [name for name, box in self.checkboxes.items() if box.value]
        if not kept:
            self.message.value = self._error("Tick at least one item to keep.")
            return False
        try:
            project = add_scene_items(self.project, self.scene, kept)
        except (InputError, ValueError) as err:
            self.message.value = self._error(str(err))
            return False
        done = all([callback(project) for callback in self._callbacks])
        if done:
            self.message.value = (f"<span style='color:#2e6b3a'>Kept {len(kept)} items, "
                                  f"marked {html.escape(PROVENANCE)}.</span>")
        return done

    @staticmethod
    def _error(text: str) -> str:
        return f"<span style='color:#a33'>{html.escape(text)}</span>"
