"""The File tab: save and load the project file; export the module table and outlines; report.

:class:`FilePanel` writes the project and layout it was last shown (:meth:`FilePanel.show`)
and hands a loaded project to its owner (:meth:`FilePanel.on_load`), which decides whether
the roof can be planned with it. Its report button asks the owner (:meth:`FilePanel.on_report`)
to write the shade report, which the core makes (:func:`layout.report.write_report`), and
shows the path written.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from pathlib import Path

import ipywidgets as w

from layout.errors import InputError
from layout.project import FILE_SUFFIX, ProjectFileError, load_project, save_project

from .export import write_layout_geojson, write_module_table

__all__ = ["FilePanel"]


class FilePanel(w.VBox):
    """The File tab: a project path with Save and Load, an export path with two exports.

    Parameters
    ----------
    path : str or pathlib.Path, optional
        File the project came from: the default of both paths
        (``~/eaveline/project`` with the project suffix otherwise).

    Attributes
    ----------
    project, array_layout : layout.project.Project, layout.fill.placed.Layout
        What :meth:`show` was last given: what :meth:`save` and the exports write.
    project_path, export_path : ipywidgets.Text
        Where the project is saved and loaded; the stem the exports are written to.
    report_path : ipywidgets.Text
        Where the shade report is written: ``.pdf`` or ``.html``.
    save_button, load_button, csv_button, geojson_button, report_button : ipywidgets.Button
        Call :meth:`save`, :meth:`load`, :meth:`export_csv`, :meth:`export_geojson` and
        :meth:`make_report`.
    file_message : ipywidgets.HTML
        What the last of those did, or why it did not.
    """

    def __init__(self, path=None):
        self.project = None
        self.array_layout = None
        self._callbacks: list[Callable] = []
        self._saved_callbacks: list[Callable] = []
        default = Path(path) if path else Path.home() / "eaveline" / f"project{FILE_SUFFIX}"
        self.project_path = w.Text(value=str(default), description="Project file",
                                   layout=w.Layout(width="500px"))
        self.save_button = w.Button(description="Save")
        self.load_button = w.Button(description="Load")
        self.save_button.on_click(lambda _: self.save())
        self.load_button.on_click(lambda _: self.load())
        base = default.name[: -len(FILE_SUFFIX)] if default.name.endswith(FILE_SUFFIX) \
            else default.stem
        self.export_path = w.Text(value=str(default.with_name(f"{base}-modules")),
                                  description="Export to", layout=w.Layout(width="500px"))
        self.csv_button = w.Button(description="Module table (CSV)",
                                   layout=w.Layout(width="auto"))
        self.geojson_button = w.Button(description="Outlines (GeoJSON)",
                                       layout=w.Layout(width="auto"))
        self.csv_button.on_click(lambda _: self.export_csv())
        self.geojson_button.on_click(lambda _: self.export_geojson())
        self.report_path = w.Text(value=str(default.with_name(f"{base}-report.pdf")),
                                  description="Report to", layout=w.Layout(width="500px"))
        self.report_button = w.Button(description="Shade report (PDF or HTML)",
                                      layout=w.Layout(width="auto"))
        self.report_button.on_click(lambda _: self.make_report())
        self._report_writer: Callable | None = None
        self.file_message = w.HTML()
        super().__init__([
            self.project_path, w.HBox([self.save_button, self.load_button]),
            w.HTML("<div style='font-size:12px;color:#5d6b6a;margin-top:8px'>Exports use the "
                   "site frame in metres (x east, y north, z up).</div>"),
            self.export_path, w.HBox([self.csv_button, self.geojson_button]),
            w.HTML("<div style='font-size:12px;color:#5d6b6a;margin-top:8px'>The shade report: "
                   "a .pdf or .html file with the plan, the figures of each array, the sky of "
                   "the worst modules, the obstructions and the cautions.</div>"),
            self.report_path, self.report_button,
            self.file_message])

    def on_saved(self, callback: Callable) -> None:
        """Call ``callback(project)`` after the project was written to its file."""
        self._saved_callbacks.append(callback)

    def on_load(self, callback: Callable) -> None:
        """Call ``callback(project, path_text)`` with a project read; it returns a bool."""
        self._callbacks.append(callback)

    def on_report(self, callback: Callable) -> None:
        """Call ``callback(path_text)`` to write the report; it returns the path written."""
        self._report_writer = callback

    def show(self, project, layout) -> None:
        """Hold the project and its layout (a :class:`layout.fill.placed.Layout`) to write."""
        self.project, self.array_layout = project, layout

    def save(self) -> Path | None:
        """Save the project to the project path; return the path written."""
        try:
            written = save_project(self.project, self.project_path.value)
        except OSError as err:
            self._note(f"Not saved: {err}", error=True)
            return None
        self.project_path.value = str(written)
        self._note(f"Saved {written}")
        for callback in self._saved_callbacks:
            callback(self.project)
        return written

    def load(self) -> bool:
        """Read the project path and hand the project on; on problems say why."""
        try:
            project = load_project(self.project_path.value)
        except ProjectFileError as err:
            self._note(str(err), error=True)
            return False
        if not all([callback(project, self.project_path.value)
                    for callback in self._callbacks]):
            self._note("The file was read but the roof cannot be filled; see the status "
                       "line.", error=True)
            return False
        notes = "".join(f"\n- {note}" for note in project.load_notes)
        self._note(f"Loaded {self.project_path.value}{notes}")
        return True

    def export_csv(self) -> Path:
        """Write the module table next to the export path; return the path."""
        electrical = self.project.energy.electrical
        target = write_module_table(self.array_layout, self.export_path.value,
                                    strings=electrical.strings, inputs=self.project.strings.inputs)
        self._note(f"Wrote {target}")
        return target

    def export_geojson(self) -> Path:
        """Write the module outlines as GeoJSON; return the path."""
        target = write_layout_geojson(self.array_layout, self.export_path.value,
                                      name=self.project.name)
        self._note(f"Wrote {target}")
        return target

    def make_report(self) -> Path | None:
        """Have the owner write the shade report to the report path; return the path written."""
        if self._report_writer is None:
            self._note("No report: nothing to report on yet.", error=True)
            return None
        self.report_button.disabled = True
        try:
            written = self._report_writer(self.report_path.value)
        except (InputError, ProjectFileError, OSError, ValueError) as err:
            self._note(f"No report: {err}", error=True)
            return None
        finally:
            self.report_button.disabled = False
        self._note(f"Wrote the report {written}")
        return written

    def _note(self, text: str, *, error: bool = False) -> None:
        colour = "#8a2d2d" if error else "#34403f"
        self.file_message.value = (f"<pre style='font-size:12px;color:{colour};"
                                   f"white-space:pre-wrap'>{html.escape(text)}</pre>")
