"""The Survey tab's form rows: a reading's row and the making of every field's row.

:class:`ReadingRow` (label, value, ``±`` tolerance, unit and the message beside them) is the
widget :class:`widgets.survey_panel.SurveyPanel` shows for each of
:data:`widgets.survey_fields.READING_FIELDS`; the plain fields use
:class:`widgets.forms.FieldRow`. :func:`make_rows` builds them all.
"""

from __future__ import annotations

import html

import ipywidgets as w

from layout.scene.survey import SURVEY_KINDS

from .forms import LABEL_WIDTH, FieldRow
from .survey_fields import _HINTS, _PLAIN_FIELDS, READING_FIELDS, _kind_label

__all__ = ["ReadingRow", "make_rows"]


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


def make_rows() -> dict:
    """Return every field of the survey form: name → its row, each with its CSS class.

    The plain fields of :data:`widgets.survey_fields._PLAIN_FIELDS` get a
    :class:`widgets.forms.FieldRow` (a dropdown or checkbox for a choice, else a text box with
    its hint), the readings of :data:`widgets.survey_fields.READING_FIELDS` a
    :class:`ReadingRow`; each row has the class ``eaveline-survey-<name with dashes>``.

    Returns
    -------
    dict of str to FieldRow or ReadingRow
        The rows, plain fields first.
    """
    rows: dict = {}
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
        rows[key] = FieldRow(key, label, widget)
    for key, (label, _) in READING_FIELDS.items():
        row = ReadingRow(key, label)
        row.input.placeholder = _HINTS.get(key, "")
        rows[key] = row
    for key, row in rows.items():
        row.add_class(f"eaveline-survey-{key.replace('_', '-')}")
    return rows
