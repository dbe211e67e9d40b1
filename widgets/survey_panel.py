"""The Survey tab: field readings typed one obstruction at a time, the survey list, CSV import.

A surveyor stands at a known point (the *station*), sights an obstruction with a compass,
measures a distance with a tape or a laser and reads elevation angles with a clinometer
(:mod:`layout.scene.survey` states every reading's meaning and sign). This panel takes the readings
of one obstruction at a time, each with its tolerance pre-filled with the default that
:mod:`layout.scene.survey` documents, lets :class:`layout.scene.survey.SurveyEntry` check them, and
shows the height the core computes, with its range over the tolerances. A valid entry is handed to
the owner at once (the planner puts it in ``Project.survey``, and the obstruction appears on
the plan). A bad value gets its message beside its field and nothing is handed on, so the last
valid survey stays in force; a refused field keeps the text the user typed.

Lengths are typed in the project's units (:func:`widgets.forms.read_length`: a bare number is
metres in a metric project and feet in an imperial one, ``"50 ft"`` or ``"15.2 m"`` are read as
written); angles in degrees, with or without ``°``. A tolerance box left as pre-filled gives
the reading the core's default tolerance for its value (a default never exceeds half of a
size, so a 5 cm vent radius gets ±2.5 cm, :mod:`layout.scene.survey`); a tolerance typed over it is
used as typed.

The fields and the reading of their text are in :mod:`widgets.survey_fields`, a reading's row
in :mod:`widgets.survey_rows`, the readout and the survey list in :mod:`widgets.survey_list`;
this module holds :class:`SurveyPanel`, which composes them with the widget state.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from pathlib import Path

import ipywidgets as w

from layout.errors import InputError
from layout.scene.survey import (
    DEFAULT_EYE_HEIGHT_M,
    SurveyEntry,
    default_tolerance,
    read_survey_csv,
)

from .quiet import Quiet
from .survey_fields import (
    _CHOICE_TYPES,
    READING_FIELDS,
    error_label,
    field_type,
    format_value,
    height_text,
    more_errors,
    parse_text,
    read_angle,
    read_fields,
    visible_fields,
)
from .survey_list import (
    IMPORT_HELP_HTML,
    NOTE_HTML,
    START_HTML,
    crosscheck_html,
    error_html,
    heading_html,
    hint_html,
    import_note_html,
    import_summary,
    list_html,
    readout_html,
)
from .survey_rows import ReadingRow, make_rows

__all__ = [
    "READING_FIELDS",
    "ReadingRow",
    "SurveyPanel",
    "default_tolerance",
    "height_text",
    "read_angle",
]

_NEW = -1  # the choice that stands for a new entry


class SurveyPanel(Quiet, w.VBox):
    """Type, list, edit, delete and import the survey readings of a project.

    Show a survey with :meth:`show`. Every accepted edit calls the callbacks registered with
    :meth:`on_change` with the new tuple of :class:`layout.scene.survey.SurveyEntry` and the index
    of the entry to keep selected (None after a delete); a callback returns False when its
    owner refused the survey (the form then keeps what was typed and says so).

    Attributes
    ----------
    entries : tuple of SurveyEntry
        The survey shown.
    index : int or None
        The entry in the form; None while a new entry is typed.
    entry : SurveyEntry or None
        The entry the form's fields make now, when they make one.
    rows : dict of str to FieldRow or ReadingRow
        Every field of the form (only those of the chosen kind are shown).
    base_dir : pathlib.Path or None
        Folder a relative CSV path is read from.
    """

    def __init__(self):
        self.units = "metric"
        self.entries: tuple = ()
        self.index: int | None = None
        self.entry: SurveyEntry | None = None
        self.base_dir: Path | None = None
        self.imported_problems: list = []
        self._callbacks: list[Callable] = []
        self._stored: dict[str, tuple[str, object]] = {}  # key → (text shown, exact value)
        self._auto: dict[str, str] = {}  # reading → default tolerance text still untouched

        self.choice = w.Dropdown(options=[("new entry", _NEW)], value=_NEW, description="Entry",
                                 layout=w.Layout(width="360px"))
        self.choice.add_class("eaveline-survey-choice")
        self.choice.observe(self._chosen, names="value")
        self.new_button = w.Button(description="New", tooltip="Type the readings of another "
                                   "obstruction", layout=w.Layout(width="70px"))
        self.delete_button = w.Button(description="Delete", layout=w.Layout(width="70px"))
        self.new_button.on_click(lambda _: self.new_entry())
        self.delete_button.on_click(lambda _: self.delete())

        self.rows = make_rows()
        self.rows["method"].input.observe(self._method_changed, names="value")
        for row in self.rows.values():
            row.input.observe(self._edited, names="value")
            if isinstance(row, ReadingRow):
                row.tolerance.observe(self._edited, names="value")
        self.fields_box = w.VBox([])
        self.readout = w.HTML()
        self.readout.add_class("eaveline-survey-readout")
        self.message = w.HTML()
        self.message.add_class("eaveline-survey-message")
        self.list_html = w.HTML()
        self.list_html.add_class("eaveline-survey-list")
        self.crosscheck_html = w.HTML()
        self.crosscheck_html.add_class("eaveline-survey-crosscheck")
        self.csv_path = w.Text(placeholder="path of a survey CSV", description="CSV file",
                               layout=w.Layout(width="420px"))
        self.import_button = w.Button(description="Import CSV", layout=w.Layout(width="auto"))
        self.import_button.add_class("eaveline-survey-import")
        self.import_button.on_click(lambda _: self.import_csv())
        self.import_message = w.HTML()
        self.import_message.add_class("eaveline-survey-import-message")
        super().__init__([
            w.HTML(NOTE_HTML),
            w.HBox([self.choice, self.new_button, self.delete_button],
                   layout=w.Layout(align_items="center")),
            self.fields_box, self.readout, self.message,
            w.HTML(heading_html("Surveyed obstructions")), self.list_html,
            self.crosscheck_html,
            w.HTML(heading_html("Import readings")),
            w.HTML(IMPORT_HELP_HTML),
            w.HBox([self.csv_path, self.import_button], layout=w.Layout(align_items="center")),
            self.import_message,
        ])
        self.add_class("eaveline-survey")
        self._load(None)
        self._refresh()

    # ----------------------------------------------------------------- public
    def on_change(self, callback: Callable) -> None:
        """Call ``callback(entries, index)`` with every accepted edit; it returns a bool."""
        self._callbacks.append(callback)

    def show(self, entries, *, units: str | None = None, index=...) -> None:
        """Show a survey; select ``index`` (default: keep the entry or the new one typed).

        An entry typed but not yet complete stays in the form as typed, and so does any text
        the panel refused; an entry changed elsewhere (a project loaded) is shown afresh.
        """
        entries = tuple(entries)
        units = units or self.units
        units_changed = units != self.units
        self.entries, self.units = entries, units
        if index is ...:
            index = self.index if self.index is None or self.index < len(entries) else None
        if index is not None and not 0 <= index < len(entries):
            raise InputError("index", "is not an entry of the survey", value=index,
                             allowed=f"0 to {len(entries) - 1}")
        target = None if index is None else entries[index]
        if index is None and self.index is None:
            action = "keep"
        elif target is not None and target == self.entry:
            action = "adopt" if self.index is None else (
                "keep" if self.index == index else "load")
        else:
            action = "load"
        if action == "load":
            self._load(target)
        elif action == "adopt":
            self._adopt(target)  # the entry typed here was just added: keep the text
        elif units_changed:
            self._reformat()
        self.index = index
        self._refresh()

    def show_crosscheck(self, checks) -> None:
        """Show each entry against the elevation data (:func:`layout.elevation.cross_check`)."""
        self.crosscheck_html.value = crosscheck_html(checks)

    def new_entry(self) -> None:
        """Clear the form for a new entry (station, eye height and method carried over)."""
        self.index = None
        self._load(None)
        self._refresh()

    def select(self, index: int) -> None:
        """Put entry ``index`` in the form."""
        self.show(self.entries, index=index)

    def apply(self) -> bool:
        """Read every field; hand on the survey with this entry when all fields are valid.

        Returns
        -------
        bool
            True when the entry was accepted (or was already as typed).
        """
        for row in self.rows.values():
            row.set_error(None)
        self.message.value = ""
        kwargs, missing, errors = self._read()
        if errors:
            if self.index is not None:  # each other bad field against the entry accepted
                more_errors(kwargs, errors, self.entries[self.index].to_dict())
            for err in errors:
                self._show_error(err)
            return False
        if missing:
            if self.index is None:
                self.entry = None
                self.readout.value = hint_html("Still needed: " + html.escape(
                    ", ".join(self.rows[k].label.value for k in missing)))
            else:
                for key in missing:
                    self.rows[key].set_error("is needed")
            return False
        try:
            entry = SurveyEntry.from_dict(kwargs)
        except InputError as err:
            self._show_error(err)
            return False
        if self.index is not None and entry == self.entries[self.index]:
            self.entry = entry
            self._show_defaults()
            return True
        entries = list(self.entries)
        if self.index is None:
            entries.append(entry)
            index = len(entries) - 1
        else:
            entries[self.index] = entry
            index = self.index
        previous, self.entry = self.entry, entry
        if not self._emit(tuple(entries), index):
            self.entry = previous
            self.message.value = error_html("Not applied: the planner refused this survey (see "
                                            "the status line).")
            return False
        return True

    def delete(self) -> None:
        """Delete the entry in the form (or clear a new entry being typed)."""
        if self.index is None:
            self.new_entry()
            return
        kept = tuple(e for i, e in enumerate(self.entries) if i != self.index)
        if self._emit(kept, None):
            self.new_entry()

    def import_csv(self, path=None) -> tuple[list, list]:
        """Read a survey CSV and add its good rows; list every bad one with row and column.

        Parameters
        ----------
        path : str or os.PathLike, optional
            The file; default the path typed in the panel. A relative path is read from
            :attr:`base_dir` when it is set.

        Returns
        -------
        entries : list of SurveyEntry
            The rows added.
        problems : list of layout.scene.survey.SurveyProblem
            The rows refused, with row number (header = row 1) and column.
        """
        text = str(path if path is not None else self.csv_path.value).strip()
        if not text:
            self._import_note("Type the path of a survey CSV first.", error=True)
            return [], []
        target = Path(text).expanduser()
        if not target.is_absolute() and self.base_dir is not None:
            target = self.base_dir / target
        try:
            entries, problems = read_survey_csv(target)
        except (OSError, UnicodeDecodeError) as err:
            self._import_note(f"Not read: {err}", error=True)
            return [], []
        self.imported_problems = list(problems)
        if entries and not self._emit(self.entries + tuple(entries), len(self.entries)):
            self._import_note("The planner refused the imported survey (see the status "
                              "line); nothing was added.", error=True)
            return [], list(problems)
        self._import_note(import_summary(len(entries), problems, target.name),
                          error=bool(problems))
        return list(entries), list(problems)

    # ----------------------------------------------------------------- internals
    def _emit(self, entries, index) -> bool:
        if not self._callbacks:
            self.show(entries, index=index)
            return True
        results = [callback(entries, index) for callback in self._callbacks]
        return all(r is not False for r in results)

    def _import_note(self, text: str, *, error: bool = False) -> None:
        self.import_message.value = import_note_html(text, error=error)

    def _chosen(self, change) -> None:
        if self._quiet:
            return
        if change["new"] == _NEW:
            self.new_entry()
        elif change["new"] is not None:
            self.select(int(change["new"]))

    def _edited(self, change) -> None:
        if self._quiet:
            return
        if change["owner"] is self.rows["kind"].input:
            self._show_rows()
        self.apply()
        self._show_defaults()

    def _method_changed(self, change) -> None:
        if self._quiet or "distance_m" not in self._auto:
            return
        row = self.rows["distance_m"]
        if row.tolerance.value != self._auto["distance_m"]:
            return
        text = self._format("distance_m.tolerance", default_tolerance("distance_m", change["new"]))
        self._auto["distance_m"] = text
        with self._silently():
            row.tolerance.value = text

    def _visible(self, kind: str | None = None) -> tuple[str, ...]:
        return visible_fields(kind or self.rows["kind"].input.value)

    def _show_rows(self) -> None:
        rows = [self.rows[key] for key in self._visible()]
        if list(self.fields_box.children) != rows:
            self.fields_box.children = rows

    # formatting and reading of one value
    def _format(self, key: str, value) -> str:
        return format_value(key, value, self.units)

    def _widget(self, key: str):
        if key.endswith(".tolerance"):
            return self.rows[key[: -len(".tolerance")]].tolerance
        return self.rows[key].input

    def _put(self, key: str, value) -> None:
        """Show a value in its box and remember the exact value behind the text."""
        widget = self._widget(key)
        if field_type(key) in _CHOICE_TYPES:
            widget.value = value
            return
        text = self._format(key, value)
        widget.value = text
        self._stored[key] = (text, value)

    def _parse(self, key: str):
        widget = self._widget(key)
        kind = field_type(key)
        if kind in _CHOICE_TYPES:
            return widget.value
        text = widget.value
        stored = self._stored.get(key)
        if stored is not None and text == stored[0]:
            return stored[1]  # unchanged text keeps the exact stored value
        return parse_text(key, text, self.units)

    def _read(self) -> tuple[dict, list[str], list[InputError]]:
        """Turn the visible fields into SurveyEntry keywords, the missing and the bad fields."""
        return read_fields(self.rows["kind"].input.value, self.rows["method"].input.value,
                           self._parse, self._defaulted)

    def _defaulted(self, key: str) -> bool:
        """Whether a reading's tolerance box still shows the default it was given."""
        return key in self._auto and self.rows[key].tolerance.value == self._auto[key]

    def _show_error(self, err: InputError) -> None:
        root = err.field.partition(".")[0]
        row = self.rows.get(root)
        text = error_label(err)
        if row is not None and row in self.fields_box.children:
            row.set_error(text)
        else:
            self.message.value = error_html(f"{html.escape(err.field)}: {html.escape(text)}")

    def _template(self) -> SurveyEntry | None:
        if self.entry is not None:
            return self.entry
        return self.entries[-1] if self.entries else None

    def _load(self, entry: SurveyEntry | None) -> None:
        """Fill the form from an entry, or with a new entry's defaults."""
        self._stored, self._auto = {}, {}
        with self._silently():
            if entry is None:
                template = self._template()
                method = template.method if template is not None else "tangent"
                self.rows["kind"].input.value = "tree"
                self.rows["method"].input.value = method
                self.rows["deciduous"].input.value = False
                self.rows["crown_shape"].input.value = "spheroid"
                self.rows["name"].input.value = ""
                for key in ("station_x_m", "station_y_m", "station_z_m"):
                    self._put(key, getattr(template, key) if template is not None else 0.0)
                self._put("eye_height_m", template.eye_height_m if template is not None
                          else DEFAULT_EYE_HEIGHT_M)
                self._put("declination_deg", template.declination_deg if template is not None
                          else 0.0)
                for key in ("trunk_radius_m", "growth_m_per_yr", "mature_height_m", "axis_deg"):
                    self.rows[key].input.value = ""
                for key in READING_FIELDS:
                    self.rows[key].input.value = ""
                    text = self._format(f"{key}.tolerance", default_tolerance(key, method))
                    self.rows[key].tolerance.value = text
                    self._auto[key] = text
                self.entry = None
            else:
                self.rows["name"].input.value = entry.name
                self.rows["kind"].input.value = entry.kind
                self.rows["method"].input.value = entry.method
                self.rows["deciduous"].input.value = entry.deciduous
                self.rows["crown_shape"].input.value = entry.crown_shape
                for key in ("station_x_m", "station_y_m", "station_z_m", "eye_height_m",
                            "declination_deg", "trunk_radius_m", "growth_m_per_yr",
                            "mature_height_m", "axis_deg"):
                    self._put(key, getattr(entry, key))
                for key in READING_FIELDS:
                    reading = getattr(entry, key)
                    self._put(key, None if reading is None else reading.value)
                    tolerance = (default_tolerance(key, entry.method) if reading is None
                                 else reading.tolerance)
                    self._put(f"{key}.tolerance", tolerance)
                    if reading is None:  # a reading added later gets the default
                        self._auto[key] = self.rows[key].tolerance.value
                self.entry = entry
            for row in self.rows.values():
                row.set_error(None)
        self.message.value = ""
        self._show_rows()

    def _adopt(self, entry: SurveyEntry) -> None:
        """Keep the text as typed, remembering the exact values behind it."""
        for key in self._visible(entry.kind):
            if field_type(key) in (*_CHOICE_TYPES, "text"):
                continue
            widget = self._widget(key)
            if key in READING_FIELDS:
                reading = getattr(entry, key)
                if reading is None:
                    continue
                self._stored[key] = (widget.value, reading.value)
                if key not in self._auto or self.rows[key].tolerance.value != self._auto[key]:
                    self._stored[f"{key}.tolerance"] = (self.rows[key].tolerance.value,
                                                        reading.tolerance)
            elif widget.value.strip():
                self._stored[key] = (widget.value, getattr(entry, key))
        self.entry = entry

    def _reformat(self) -> None:
        """Show unchanged values again in new units; text the user changed stays as typed."""
        with self._silently():
            for key, (text, value) in list(self._stored.items()):
                if self._widget(key).value == text:
                    self._put(key, value)
            for key, text in list(self._auto.items()):
                row = self.rows[key]
                if row.tolerance.value == text:
                    method = self.rows["method"].input.value
                    new = self._format(f"{key}.tolerance", default_tolerance(key, method))
                    row.tolerance.value = new
                    self._auto[key] = new
        self._show_rows()

    def _refresh(self) -> None:
        """Redraw the entry list, the choice and the computed readout."""
        options = [("new entry", _NEW)] + [
            (f"{i + 1}. {e.name or e.kind} ({e.kind})", i) for i, e in enumerate(self.entries)]
        with self._silently():
            if list(self.choice.options) != options:
                self.choice.options = options
            self.choice.value = _NEW if self.index is None else self.index
        self.delete_button.disabled = self.index is None
        self._show_defaults()
        self.list_html.value = list_html(self.entries, self.index, self.units)
        if self.entry is not None:
            self.readout.value = readout_html(self.entry, self.units)
        elif self.index is None:
            self.readout.value = START_HTML

    def _show_defaults(self) -> None:
        """Show in each untouched tolerance box the default the core gave the reading.

        A default is cut to half of a small size (a 5 cm vent radius gets ±2.5 cm), so the box
        shows what the entry holds, and stays a default that follows the reading.
        """
        entry = self.entry
        with self._silently():
            for key, text in list(self._auto.items()):
                row = self.rows[key]
                if row.tolerance.value != text:
                    continue
                reading = None if entry is None else getattr(entry, key)
                if reading is not None:
                    new = self._format(f"{key}.tolerance", reading.tolerance)
                    row.tolerance.value = new
                    self._auto[key] = new
        for key, row in self.rows.items():
            if isinstance(row, ReadingRow):
                unit = "°" if READING_FIELDS[key][1] == "angle" else (
                    "ft" if self.units == "imperial" else "m")
                auto = key in self._auto and row.tolerance.value == self._auto[key]
                row.unit.value = hint_html(f"{unit}{' (default)' if auto else ''}")
