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
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable
from pathlib import Path

import ipywidgets as w

from layout.errors import InputError
from layout.scene.survey import (
    BLOCK_KINDS,
    CYLINDER_KINDS,
    DEFAULT_EYE_HEIGHT_M,
    GROWTH_CLASS_RATES_M_PER_YR,
    SURVEY_KINDS,
    SurveyEntry,
    default_tolerance,
    entry_geometry,
    height_range,
    read_survey_csv,
    survey_table,
)
from layout.units import FOOT_M, format_length

from .forms import LABEL_WIDTH, FieldRow, error_text, length_text, read_length
from .quiet import Quiet

__all__ = [
    "READING_FIELDS",
    "ReadingRow",
    "SurveyPanel",
    "default_tolerance",
    "height_text",
    "read_angle",
]

#: Reading fields of a survey entry shown with a tolerance: key → (label, "angle" or "length").
READING_FIELDS = {
    "bearing_deg": ("Bearing", "angle"),
    "distance_m": ("Distance", "length"),
    "top_angle_deg": ("Angle to the top", "angle"),
    "base_angle_deg": ("Angle to the foot", "angle"),
    "crown_radius_m": ("Crown radius", "length"),
    "crown_base_m": ("Crown base height", "length"),
    "crown_base_angle_deg": ("or crown base angle", "angle"),
    "width_m": ("Width", "length"),
    "depth_m": ("Depth", "length"),
    "radius_m": ("Radius", "length"),
}

#: Plain fields (no tolerance): key → (label, type).
_PLAIN_FIELDS = {
    "name": ("Name", "text"),
    "kind": ("Kind", "kind"),
    "method": ("Distance measured by", "method"),
    "station_x_m": ("Station x (east)", "length"),
    "station_y_m": ("Station y (north)", "length"),
    "station_z_m": ("Station ground z", "length"),
    "eye_height_m": ("Eye height", "length"),
    "declination_deg": ("Declination, east +", "angle"),
    "trunk_radius_m": ("Trunk radius", "length"),
    "crown_shape": ("Crown", "crown"),
    "growth_m_per_yr": ("Growth a year", "growth"),
    "mature_height_m": ("Mature height", "length"),
    "deciduous": ("Loses its leaves", "bool"),
    "axis_deg": ("Width side bearing", "angle"),
}

#: Field types shown as a choice (dropdown or checkbox) rather than typed text.
_CHOICE_TYPES = ("kind", "method", "crown", "bool")

_COMMON = ("name", "kind", "method", "station_x_m", "station_y_m", "station_z_m",
           "eye_height_m", "declination_deg", "bearing_deg", "distance_m", "top_angle_deg",
           "base_angle_deg")
_BY_CLASS = {
    "tree": ("crown_radius_m", "crown_base_m", "crown_base_angle_deg", "trunk_radius_m",
             "crown_shape", "growth_m_per_yr", "mature_height_m", "deciduous"),
    "block": ("width_m", "depth_m", "axis_deg"),
    "cylinder": ("radius_m",),
}
_REQUIRED = {"tree": ("crown_radius_m",), "block": ("width_m", "depth_m"),
             "cylinder": ("radius_m",)}
_OPTIONAL = ("base_angle_deg", "crown_base_m", "crown_base_angle_deg", "trunk_radius_m",
             "growth_m_per_yr", "mature_height_m", "axis_deg")
_HINTS = {
    "base_angle_deg": "blank: foot on the station's ground",
    "crown_base_m": "give this or the angle below",
    "trunk_radius_m": "blank: 0.2 m",
    "growth_m_per_yr": "slow, medium, fast or a height a year",
    "mature_height_m": "blank: no cap on the growth",
    "axis_deg": "blank: face on to you",
    "declination_deg": "0 when bearings are true",
}
_NEW = -1  # the choice that stands for a new entry


def _class_of(kind: str) -> str:
    if kind == "tree":
        return "tree"
    return "cylinder" if kind in CYLINDER_KINDS else "block"


def _kind_label(kind: str) -> str:
    if kind in BLOCK_KINDS:
        return f"{kind} (box)"
    if kind in CYLINDER_KINDS:
        return f"{kind} (cylinder)"
    return kind


def read_angle(text, *, field: str) -> float:
    """Read a typed angle [degrees]: a number, optionally followed by ``°`` or ``deg``."""
    source = str(text).strip()
    for suffix in ("°", "degrees", "deg"):
        if source.lower().endswith(suffix):
            source = source[: -len(suffix)].strip()
            break
    if not source:
        raise InputError(field, "is empty", allowed="an angle in degrees, such as 17 or -3.5")
    try:
        number = float(source.replace("\u2212", "-"))
    except ValueError:
        raise InputError(field, "is not an angle", value=text,
                         allowed="an angle in degrees, such as 17 or -3.5") from None
    if not math.isfinite(number):
        raise InputError(field, "must be a finite angle", value=text)
    return number


def height_text(metres: float, units: str) -> str:
    """Show a computed height: ``"6.34 m"``, or ``"20.79 ft (20 ft 9.5 in)"`` in imperial."""
    if units == "imperial":
        return f"{metres / FOOT_M:.2f} ft ({format_length(metres, 'imperial')})"
    return f"{metres:.2f} m"


def _angle_text(value: float) -> str:
    return f"{value:.6g}"


class ReadingRow(w.HBox):
    """A reading: label, value, ``±`` tolerance, unit and the message beside them.

    Parameters
    ----------
    key : str
        The reading's field name, as :class:`layout.scene.survey.SurveyEntry` names it.
    description : str
        Label shown to the user.
    """

    def __init__(self, key: str, description: str):
        self.key = key
        self.label = w.Label(description, layout=w.Layout(width=LABEL_WIDTH))
        self.input = w.Text(continuous_update=False, layout=w.Layout(width="110px"))
        self.tolerance = w.Text(continuous_update=False, layout=w.Layout(width="90px"),
                                tooltip="tolerance: half-width of the range")
        self.unit = w.HTML("", layout=w.Layout(width="auto"))
        self.message = w.HTML("", layout=w.Layout(width="auto"))
        self.message.add_class("eaveline-field-error")
        super().__init__([self.label, self.input, w.Label("±"), self.tolerance, self.unit,
                          self.message], layout=w.Layout(align_items="center"))

    def set_error(self, text: str | None) -> None:
        """Show ``text`` beside the reading in a calm dark red, or clear it."""
        self.message.value = "" if not text else (
            f"<span style='color:#8a2d2d;font-size:12px'>{html.escape(text)}</span>")

    @property
    def error(self) -> str:
        """The message shown now (empty when the reading is accepted)."""
        return self.message.value


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

        self.rows: dict = {}
        for key, (label, kind) in _PLAIN_FIELDS.items():
            if kind == "kind":
                widget = w.Dropdown(options=[(_kind_label(k), k) for k in SURVEY_KINDS],
                                    value="tree")
            elif kind == "method":
                widget = w.Dropdown(options=[("tape (horizontal)", "tangent"),
                                             ("laser (slope to top)", "laser")],
                                    value="tangent")
            elif kind == "crown":
                widget = w.Dropdown(options=[("rounded (broadleaf)", "spheroid"),
                                             ("cone (conifer)", "cone")], value="spheroid")
            elif kind == "bool":
                widget = w.Checkbox(value=False, indent=False)
            else:
                widget = w.Text(continuous_update=False)
                widget.placeholder = _HINTS.get(key, "")
            self.rows[key] = FieldRow(key, label, widget)
        for key, (label, _) in READING_FIELDS.items():
            row = ReadingRow(key, label)
            row.input.placeholder = _HINTS.get(key, "")
            self.rows[key] = row
        self.rows["method"].input.observe(self._method_changed, names="value")
        for key, row in self.rows.items():
            row.add_class(f"eaveline-survey-{key.replace('_', '-')}")
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
        self.csv_path = w.Text(placeholder="path of a survey CSV", description="CSV file",
                               layout=w.Layout(width="420px"))
        self.import_button = w.Button(description="Import CSV", layout=w.Layout(width="auto"))
        self.import_button.add_class("eaveline-survey-import")
        self.import_button.on_click(lambda _: self.import_csv())
        self.import_message = w.HTML()
        self.import_message.add_class("eaveline-survey-import-message")
        note = ("<div style='font-size:12px;color:#5d6b6a'>Readings from a known point (the "
                "station). Angles in degrees, up positive; bearings clockwise from north. "
                "Each ± box holds the reading's tolerance, pre-filled with the default. "
                "Surveyed objects are drawn on the plan with a hollow ring and move only "
                "with their readings.</div>")
        heading = "<div style='margin-top:8px;color:#34403f'><b>{}</b></div>".format
        super().__init__([
            w.HTML(note),
            w.HBox([self.choice, self.new_button, self.delete_button],
                   layout=w.Layout(align_items="center")),
            self.fields_box, self.readout, self.message,
            w.HTML(heading("Surveyed obstructions")), self.list_html,
            w.HTML(heading("Import readings")),
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>One row per obstruction, "
                   "columns as in <code>layout.scene.survey.SURVEY_COLUMNS</code> (required: kind, "
                   "bearing_deg, distance_m, top_angle_deg). Good rows are added; each bad "
                   "row is listed with its row number and column.</div>"),
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
            self._more_errors(kwargs, errors)
            for err in errors:
                self._show_error(err)
            return False
        if missing:
            if self.index is None:
                self.entry = None
                self.readout.value = (
                    "<span style='font-size:12px;color:#5d6b6a'>Still needed: "
                    + html.escape(", ".join(self.rows[k].label.value for k in missing))
                    + "</span>")
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
            self.message.value = ("<span style='color:#8a2d2d;font-size:12px'>Not applied: the "
                                  "planner refused this survey (see the status line).</span>")
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
        lines = []
        if entries:
            first = len(self.entries)
            if not self._emit(self.entries + tuple(entries), first):
                self._import_note("The planner refused the imported survey (see the status "
                                  "line); nothing was added.", error=True)
                return [], list(problems)
            lines.append(f"Added {len(entries)} "
                         f"{'entry' if len(entries) == 1 else 'entries'} from {target.name}.")
        else:
            lines.append(f"No good rows in {target.name}.")
        if problems:
            lines.append(f"{len(problems)} {'problem' if len(problems) == 1 else 'problems'} "
                         "(those rows were left out):")
            lines.extend(f"  {p}" for p in problems)
        self._import_note("\n".join(lines), error=bool(problems))
        return list(entries), list(problems)

    # ----------------------------------------------------------------- internals
    def _emit(self, entries, index) -> bool:
        if not self._callbacks:
            self.show(entries, index=index)
            return True
        results = [callback(entries, index) for callback in self._callbacks]
        return all(r is not False for r in results)

    def _import_note(self, text: str, *, error: bool = False) -> None:
        colour = "#8a2d2d" if error else "#34403f"
        self.import_message.value = (f"<pre style='font-size:12px;color:{colour};"
                                     f"white-space:pre-wrap'>{html.escape(text)}</pre>")

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
        kind = kind or self.rows["kind"].input.value
        return _COMMON + _BY_CLASS[_class_of(kind)]

    def _show_rows(self) -> None:
        rows = [self.rows[key] for key in self._visible()]
        if list(self.fields_box.children) != rows:
            self.fields_box.children = rows

    # formatting and reading of one value
    def _type(self, key: str) -> str:
        if key.endswith(".tolerance"):
            return READING_FIELDS[key[: -len(".tolerance")]][1]
        if key in READING_FIELDS:
            return READING_FIELDS[key][1]
        return _PLAIN_FIELDS[key][1]

    def _format(self, key: str, value) -> str:
        kind = self._type(key)
        if value is None:
            return ""
        if kind == "length":
            return length_text(value, self.units)
        if kind == "angle":
            return f"{value:.3g}" if key.endswith(".tolerance") else _angle_text(value)
        if kind == "growth":
            return value if isinstance(value, str) else length_text(value, self.units)
        return value

    def _widget(self, key: str):
        if key.endswith(".tolerance"):
            return self.rows[key[: -len(".tolerance")]].tolerance
        return self.rows[key].input

    def _put(self, key: str, value) -> None:
        """Show a value in its box and remember the exact value behind the text."""
        widget = self._widget(key)
        if self._type(key) in _CHOICE_TYPES:
            widget.value = value
            return
        text = self._format(key, value)
        widget.value = text
        self._stored[key] = (text, value)

    def _parse(self, key: str):
        widget = self._widget(key)
        kind = self._type(key)
        if kind in _CHOICE_TYPES:
            return widget.value
        text = widget.value
        stored = self._stored.get(key)
        if stored is not None and text == stored[0]:
            return stored[1]  # unchanged text keeps the exact stored value
        field = key
        if not text.strip():
            return None
        if kind == "length":
            return read_length(text, self.units, field=field)
        if kind == "angle":
            return read_angle(text, field=field)
        if kind == "growth":
            word = text.strip().lower()
            if word in GROWTH_CLASS_RATES_M_PER_YR:
                return word
            try:
                return read_length(text, self.units, field=field)
            except InputError:
                raise InputError(field, "is not a growth class or a rate", value=text,
                                 allowed="slow, medium, fast, or a height a year such as "
                                         "0.4 m or 1 ft 6 in") from None
        return text

    def _more_errors(self, kwargs: dict, errors: list[InputError]) -> None:
        """Add the core's refusals of the other fields to ``errors``.

        The core names one field at a time; each bad field takes the value of the entry last
        accepted here and the entry is tried again, so every wrong field gets its message.
        """
        if self.index is None:
            return
        fallback = self.entries[self.index].to_dict()
        trial = dict(kwargs)
        done = {e.field.split(".")[0] for e in errors}
        for root in done:
            if root in fallback:
                trial[root] = fallback[root]
        for _ in range(len(fallback)):
            try:
                SurveyEntry.from_dict(trial)
                return
            except InputError as err:
                root = err.field.split(".")[0]
                if root in done or root not in fallback:
                    return
                errors.append(err)
                done.add(root)
                trial[root] = fallback[root]

    def _read(self) -> tuple[dict, list[str], list[InputError]]:
        """Turn the visible fields into SurveyEntry keywords, the missing and the bad fields."""
        kwargs: dict = {}
        missing: list[str] = []
        errors: list[InputError] = []
        kind = self.rows["kind"].input.value
        method = self.rows["method"].input.value
        for key in self._visible(kind):
            try:
                value = self._parse(key)
            except InputError as err:
                errors.append(err)
                continue
            if key in READING_FIELDS:
                if value is None:
                    if key not in _OPTIONAL:
                        missing.append(key)
                    continue
                tol_key = f"{key}.tolerance"
                if key in self._auto and self.rows[key].tolerance.value == self._auto[key]:
                    kwargs[key] = value  # the core applies its documented default
                    continue
                try:
                    tolerance = self._parse(tol_key)
                except InputError as err:
                    errors.append(InputError(tol_key, err.problem, value=err.value,
                                             allowed=err.allowed))
                    continue
                if tolerance is None:
                    kwargs[key] = value
                else:
                    kwargs[key] = {"value": value, "tolerance": tolerance}
            elif value is None:
                if key in ("station_x_m", "station_y_m", "station_z_m", "declination_deg"):
                    kwargs[key] = 0.0  # blank: the documented default
                elif key == "eye_height_m":
                    kwargs[key] = DEFAULT_EYE_HEIGHT_M
                elif key == "name":
                    kwargs[key] = ""
            else:
                kwargs[key] = value
        if (_class_of(kind) == "tree" and "crown_base_m" not in kwargs
                and "crown_base_angle_deg" not in kwargs and not any(
                    e.field.split(".")[0].startswith("crown_base") for e in errors)):
            missing.append("crown_base_m")
        for key in _REQUIRED[_class_of(kind)]:
            if key not in kwargs and key not in missing and not any(
                    e.field.split(".")[0] == key for e in errors):
                missing.append(key)
        if method not in ("tangent", "laser"):
            errors.append(InputError("method", "is not a measuring method", value=method))
        return kwargs, missing, errors

    def _show_error(self, err: InputError) -> None:
        root, _, part = err.field.partition(".")
        row = self.rows.get(root)
        text = error_text(err)
        if part == "tolerance":
            text = f"tolerance {text}"
        elif part and part != "value":
            text = f"{part}: {text}"
        if row is not None and row in self.fields_box.children:
            row.set_error(text)
        else:
            self.message.value = (f"<span style='color:#8a2d2d;font-size:12px'>"
                                  f"{html.escape(err.field)}: {html.escape(text)}</span>")

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
            if self._type(key) in (*_CHOICE_TYPES, "text"):
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
        self.list_html.value = self._list_html()
        if self.entry is not None:
            self.readout.value = self._readout(self.entry)
        elif self.index is None:
            self.readout.value = ("<span style='font-size:12px;color:#5d6b6a'>Type the readings "
                                  "of one obstruction; its height appears here and the "
                                  "obstruction on the plan as soon as they are complete."
                                  "</span>")

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
                row.unit.value = (f"<span style='font-size:12px;color:#5d6b6a'>{unit}"
                                  f"{' (default)' if auto else ''}</span>")

    def _readout(self, entry: SurveyEntry) -> str:
        units = self.units
        g = entry_geometry(entry)
        low, high = height_range(entry)
        parts = [f"<b class='eaveline-survey-height'>Height {height_text(g['height_m'], units)}"
                 f"</b> <span class='eaveline-survey-height-range'>(from "
                 f"{height_text(low, units)} to {height_text(high, units)} over the "
                 f"tolerances)</span>",
                 f"foot at z = {length_text(g['base_z_m'], units)}, top at z = "
                 f"{length_text(g['top_z_m'], units)}",
                 f"at x = {length_text(g['x_m'], units)}, y = {length_text(g['y_m'], units)}: "
                 f"{length_text(g['horizontal_distance_m'], units)} from the station on true "
                 f"bearing {g['true_bearing_deg']:.1f}°"]
        if "crown_base_m" in g:
            parts.append(f"crown base {length_text(g['crown_base_m'], units)} above the foot")
        return ("<div style='font-size:13px;color:#34403f;line-height:1.5'>"
                + "<br>".join(parts) + "</div>")

    def _list_html(self) -> str:
        if not self.entries:
            return ("<span style='font-size:12px;color:#5d6b6a'>No surveyed obstructions "
                    "yet.</span>")
        table = survey_table(self.entries)
        units = self.units
        rows = []
        for i, r in enumerate(table.itertuples(index=False)):
            weight = "bold" if i == self.index else "normal"
            rows.append(
                f"<tr style='font-weight:{weight}'><td>{i + 1}</td>"
                f"<td>{html.escape(str(r.name or ''))}</td><td>{html.escape(r.kind)}</td>"
                f"<td style='text-align:right'>{length_text(r.x_m, units)}</td>"
                f"<td style='text-align:right'>{length_text(r.y_m, units)}</td>"
                f"<td style='text-align:right'>{height_text(r.height_m, units)}</td>"
                f"<td style='text-align:right'>{height_text(r.height_min_m, units)} – "
                f"{height_text(r.height_max_m, units)}</td></tr>")
        return ("<table style='font-size:12px;border-collapse:collapse'><tr>"
                "<th>#</th><th style='text-align:left'>name</th><th style='text-align:left'>"
                "kind</th><th>x (east)</th><th>y (north)</th><th>height</th>"
                "<th>height over the tolerances</th></tr>" + "".join(rows) + "</table>")
