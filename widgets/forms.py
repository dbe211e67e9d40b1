"""Forms with field-level errors: the obstruction editor and the helpers other forms share.

A form never changes a project itself. It reads what the user typed, lets the core's own
classes check it (they raise :class:`layout.errors.InputError` naming the field and the
allowed range), puts each message beside the field it concerns, and hands a valid result to
its owner. While any field is wrong nothing is handed on, so the last valid state stays on
screen.

Lengths are typed in the project's units: a bare number is metres in a metric project and feet
in an imperial one; a number with a unit (``"18 in"``, ``"0.45 m"``, ``"6 ft 3 in"``) is read
as written (:func:`layout.units.parse_length`).
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable

import ipywidgets as w
import numpy as np

from layout.errors import InputError
from layout.scene.obstructions import (
    CROWN_SHAPES,
    OBSTRUCTION_KINDS,
    Block,
    Cylinder,
    Tree,
    deciduous_transmittance,
)
from layout.units import format_length, parse_length

from .plan_view import obstruction_anchor, obstruction_label
from .quiet import Quiet

__all__ = [
    "FieldRow",
    "ObstructionForm",
    "error_text",
    "length_text",
    "read_length",
]

LABEL_WIDTH = "150px"
FIELD_WIDTH = "150px"


def length_text(metres: float, units: str) -> str:
    """Show a length in the project's units (metres with 3 decimals, or feet and inches)."""
    return format_length(metres, units, digits=3)


def read_length(text: str, units: str, *, field: str) -> float:
    """Read a typed length [m]; a bare number is metres (metric) or feet (imperial).

    A leading minus sign applies to the whole length: ``"-3 ft 3.75 in"`` (as
    :func:`length_text` shows a negative coordinate) is minus three feet three and three
    quarter inches.
    """
    unit = "ft" if units == "imperial" else "m"
    return parse_length(text, default_unit=unit, field=field)


def error_text(err: InputError) -> str:
    """Return what a user needs beside the field: the problem and the allowed range."""
    text = err.problem
    if err.allowed:
        text += f" (allowed: {err.allowed})"
    return text


def _root(field: str) -> str:
    """Field name without its index or sub-field: ``transmittance[3]`` → ``transmittance``."""
    return field.split("[", 1)[0].split(".", 1)[0]


class FieldRow(w.HBox):
    """A label, an input and the message beside it.

    Parameters
    ----------
    key : str
        Name of the field, as the core names it in its errors.
    description : str
        Label shown to the user.
    widget : ipywidgets.ValueWidget
        The input.
    """

    def __init__(self, key: str, description: str, widget):
        self.key = key
        self.input = widget
        self.label = w.Label(description, layout=w.Layout(width=LABEL_WIDTH))
        self.message = w.HTML("", layout=w.Layout(width="auto"))
        self.message.add_class("eaveline-field-error")
        widget.layout.width = FIELD_WIDTH
        super().__init__([self.label, widget, self.message],
                         layout=w.Layout(align_items="center"))

    def set_error(self, text: str | None) -> None:
        """Show ``text`` beside the field in a calm dark red, or clear it."""
        self.message.value = "" if not text else (
            f"<span style='color:#8a2d2d;font-size:12px'>{html.escape(text)}</span>")

    @property
    def error(self) -> str:
        """The message shown now (empty when the value is accepted)."""
        return self.message.value


# --------------------------------------------------------------------------- obstructions
_NEW = {
    "chimney or box": lambda x, y: Block(
        [(x - 0.35, y - 0.35), (x + 0.35, y - 0.35), (x + 0.35, y + 0.35), (x - 0.35, y + 0.35)],
        top=1.0, kind="chimney"),
    "vent or pipe": lambda x, y: Cylinder((x, y), 0.05, 1.0, kind="vent"),
    "tree": lambda x, y: Tree((x, y), 8.0, 2.5, 2.0),
}


def _rectangle_axes(footprint) -> tuple[np.ndarray, np.ndarray, float, float] | None:
    """Return unit axes and side lengths of a four-corner rectangle footprint, else None."""
    pts = np.asarray(footprint, dtype=float)
    if len(pts) != 4:
        return None
    sides = np.roll(pts, -1, axis=0) - pts
    lengths = np.linalg.norm(sides, axis=1)
    if lengths.min() <= 0:
        return None
    units = sides / lengths[:, None]
    # a surveyed rectangle: corners within about 0.6° of square, opposite sides within 1 %
    square = all(abs(float(units[i] @ units[(i + 1) % 4])) < 0.01 for i in range(4))
    if not square or abs(lengths[0] - lengths[2]) > 0.01 * lengths[0] \
            or abs(lengths[1] - lengths[3]) > 0.01 * lengths[1]:
        return None
    return units[0], units[1], float(lengths[0]), float(lengths[1])


class ObstructionForm(Quiet, w.VBox):
    """Edit, add and delete the obstructions of a project.

    Show a project with :meth:`show`; every accepted edit calls the callbacks registered with
    :meth:`on_change` with the project's new obstruction tuple and the index to keep selected.
    """

    def __init__(self):
        self.units = "metric"
        self.obstructions: tuple = ()
        self.index: int | None = None
        self._callbacks: list[Callable] = []
        self._shown: dict[str, str] = {}  # text shown per field for the stored value
        self._cache: dict[str, FieldRow] = {}
        self.choice = w.Dropdown(options=[], description="Edit", layout=w.Layout(width="320px"))
        self.choice.add_class("eaveline-obstruction-choice")
        self.choice.observe(self._chosen, names="value")
        self.new_kind = w.Dropdown(options=list(_NEW), value="chimney or box",
                                   layout=w.Layout(width="150px"))
        self.add_button = w.Button(description="Add", tooltip="Add one at the roof's middle",
                                   layout=w.Layout(width="70px"))
        self.delete_button = w.Button(description="Delete", layout=w.Layout(width="70px"))
        self.add_button.on_click(lambda _: self.add(self.new_kind.value))
        self.delete_button.on_click(lambda _: self.delete())
        self.message = w.HTML("")
        self.rows: dict[str, FieldRow] = {}
        self.fields_box = w.VBox([])
        self.new_position = (0.0, 0.0)
        super().__init__([
            self.choice,
            self.fields_box,
            w.HBox([w.Label("New:"), self.new_kind, self.add_button, self.delete_button],
                   layout=w.Layout(align_items="center")),
            self.message,
        ])

    # ----------------------------------------------------------------- public
    def on_change(self, callback: Callable) -> None:
        """Call ``callback(obstructions, index)`` with every accepted edit."""
        self._callbacks.append(callback)

    def show(self, obstructions, *, units: str = "metric", index: int | None = None,
             new_position=(0.0, 0.0), origins=None) -> None:
        """Show a project's obstructions; select ``index`` (default: keep the selection).

        ``new_position`` is the plan point [m] where :meth:`add` puts a new obstruction.
        ``origins`` maps an obstruction's name to where it came from ("from elevation data,
        not surveyed"), shown beside it in the chooser.
        """
        origins = origins or {}
        self.obstructions = tuple(obstructions)
        self.units = units
        self.new_position = tuple(new_position)
        editable = [i for i, o in enumerate(self.obstructions)
                    if isinstance(o, (Block, Cylinder, Tree))]
        if index is None:
            index = self.index if self.index in editable else (editable[0] if editable else None)
        self.index = index
        with self._silently():
            self.choice.options = [(f"{obstruction_label(self.obstructions[i], i)} "
                                    f"({type(self.obstructions[i]).__name__.lower()})"
                                    + (f", {origins[self.obstructions[i].name]}"
                                       if self.obstructions[i].name in origins else ""), i)
                                   for i in editable]
            self.choice.value = index
        self._build_rows()

    def apply(self) -> bool:
        """Read every field; hand on the edited obstruction when all are valid.

        Returns
        -------
        bool
            True when the edit was accepted.
        """
        if self.index is None:
            return False
        old = self.obstructions[self.index]
        for row in self.rows.values():
            row.set_error(None)
        values, bad = {}, False
        for key in self.rows:
            try:
                values[key] = self._read(key)
            except InputError as err:  # every unreadable field gets its own message
                self._show_error(err)
                bad = True
        if bad:
            return False
        try:
            new = self._build(old, values)
        except InputError as err:
            self._show_error(err)
            return False
        if new == old:
            return True
        obstructions = list(self.obstructions)
        obstructions[self.index] = new
        self.message.value = ""
        self._emit(tuple(obstructions), self.index)
        return True

    def add(self, kind: str) -> None:
        """Add a new obstruction of ``kind`` (a key of the "New" list) and select it."""
        new = _NEW[kind](*self.new_position)
        self._emit((*self.obstructions, new), len(self.obstructions))

    def delete(self) -> None:
        """Delete the selected obstruction."""
        if self.index is None:
            return
        kept = tuple(o for i, o in enumerate(self.obstructions) if i != self.index)
        self.index = None
        self._emit(kept, None)

    # ----------------------------------------------------------------- internals
    def _emit(self, obstructions, index) -> None:
        self.index = index
        for callback in self._callbacks:
            callback(obstructions, index)

    def _chosen(self, change) -> None:
        if self._quiet:
            return
        self.index = change["new"]
        self._build_rows()

    def _row(self, key: str, description: str, make, value) -> FieldRow:
        """Return the row for ``key``, reused between redraws (fewer widgets to send)."""
        row = self._cache.get(key)
        if row is None or row.label.value != description:
            row = FieldRow(key, description, make())
            row.input.observe(self._edited, names="value")
            self._cache[key] = row
        row.input.value = value
        row.set_error(None)
        return row

    def _text_row(self, key: str, description: str, text: str) -> FieldRow:
        self._shown[key] = text
        return self._row(key, description, lambda: w.Text(continuous_update=False), text)

    def _length_row(self, key: str, description: str, metres: float) -> FieldRow:
        return self._text_row(key, description, length_text(metres, self.units))

    def _edited(self, change) -> None:
        if not self._quiet:
            self.apply()

    def _build_rows(self) -> None:
        self._shown = {}
        rows: list[FieldRow] = []
        with self._silently():
            if self.index is not None:
                rows = self._rows_for(self.obstructions[self.index])
        self.rows = {row.key: row for row in rows}
        if list(self.fields_box.children) != rows:
            self.fields_box.children = rows
        self.delete_button.disabled = self.index is None

    def _rows_for(self, o) -> list[FieldRow]:
        x, y = obstruction_anchor(o)
        rows = [self._row("name", "Name", lambda: w.Text(continuous_update=False), o.name)]
        if isinstance(o, (Block, Cylinder)):
            rows.append(self._row("kind", "Kind", lambda: w.Dropdown(options=OBSTRUCTION_KINDS),
                                  o.kind))
        rows.append(self._length_row("x", "Centre x (east)", x))
        rows.append(self._length_row("y", "Centre y (north)", y))
        if isinstance(o, Block):
            axes = _rectangle_axes(o.footprint)
            if axes is not None:
                rows.append(self._length_row("side_a", "Side, first edge", axes[2]))
                rows.append(self._length_row("side_b", "Side, second edge", axes[3]))
            rows.append(self._length_row("top", "Top height", o.top))
            rows.append(self._length_row("base", "Base height", o.base))
        elif isinstance(o, Cylinder):
            rows.append(self._length_row("radius", "Radius", o.radius))
            rows.append(self._length_row("top", "Top height", o.top))
            rows.append(self._length_row("base", "Base height", o.base))
        else:
            rows.append(self._length_row("height", "Tree height", o.height))
            rows.append(self._length_row("crown_radius", "Crown radius", o.crown_radius))
            rows.append(self._length_row("crown_base", "Crown base height", o.crown_base))
            rows.append(self._length_row("trunk_radius", "Trunk radius", o.trunk_radius))
            rows.append(self._row("crown_shape", "Crown shape",
                                  lambda: w.Dropdown(options=CROWN_SHAPES), o.crown_shape))
            shown = ("opaque" if o.transmittance is None
                     else ", ".join(f"{v:g}" for v in o.transmittance))
            row = self._text_row("transmittance", "Crown lets through", shown)
            row.input.placeholder = "opaque, deciduous or 12 numbers"
            row.input.layout.width = "320px"
            rows.append(row)
        return rows

    def _read(self, key: str):
        value = self.rows[key].input.value
        if key in ("name", "kind", "crown_shape"):
            return value
        if key == "transmittance":
            return self._read_transmittance(value)
        old = self.obstructions[self.index]
        if value == self._shown.get(key):
            return self._stored(old, key)  # unchanged text keeps the exact stored value
        return read_length(value, self.units, field=key)

    def _stored(self, o, key: str) -> float:
        if key in ("x", "y"):
            return obstruction_anchor(o)[0 if key == "x" else 1]
        if key in ("side_a", "side_b"):
            return _rectangle_axes(o.footprint)[2 if key == "side_a" else 3]
        return float(getattr(o, key))

    def _read_transmittance(self, text: str):
        words = text.strip().lower()
        if words == self._shown.get("transmittance"):
            return self.obstructions[self.index].transmittance
        if words in ("", "opaque", "none"):
            return None
        if words == "deciduous":
            return deciduous_transmittance()
        parts = [p for p in words.replace(";", ",").replace(" ", ",").split(",") if p]
        try:
            values = [float(p) for p in parts]
        except ValueError:
            raise InputError("transmittance", "must be 12 numbers, 'deciduous' or 'opaque'",
                             value=text, allowed="12 fractions from 0 to 1, January first"
                             ) from None
        if len(values) == 1:
            values *= 12  # one value for every month
        return tuple(values)

    def _build(self, old, values):
        x, y = values.pop("x"), values.pop("y")
        if not (math.isfinite(x) and math.isfinite(y)):
            raise InputError("x", "must be a finite position")
        ax, ay = obstruction_anchor(old)
        if isinstance(old, Block):
            moved = old.translated(x - ax, y - ay)
            footprint = moved.footprint
            if "side_a" in values:
                e1, e2, a_old, b_old = _rectangle_axes(old.footprint)
                a, b = values.pop("side_a"), values.pop("side_b")
                if (a, b) != (a_old, b_old):
                    for key, side in (("side_a", a), ("side_b", b)):
                        if not side > 0:
                            raise InputError(key, "must be greater than zero", value=side,
                                             allowed="> 0")
                    c = np.array([x, y])
                    e2 = np.array([-e1[1], e1[0]]) * np.sign(e1[0] * e2[1] - e1[1] * e2[0])
                    footprint = [tuple(c + sa * a / 2 * e1 + sb * b / 2 * e2)
                                 for sa, sb in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
            return Block(footprint, values["top"], values["base"], kind=values["kind"],
                         name=values["name"])
        if isinstance(old, Cylinder):
            return Cylinder((x, y), values["radius"], values["top"], values["base"],
                            kind=values["kind"], name=values["name"])
        # the form does not show the foot's ground height or the growth: keep them
        return Tree((x, y), values["height"], values["crown_radius"], values["crown_base"],
                    values["trunk_radius"], crown_shape=values["crown_shape"],
                    transmittance=values["transmittance"], name=values["name"],
                    growth_m_per_yr=getattr(old, "growth_m_per_yr", 0.0),
                    ground_m=getattr(old, "ground_m", 0.0),
                    mature_height_m=getattr(old, "mature_height_m", None))

    def _show_error(self, err: InputError) -> None:
        key = _root(err.field)
        if key == "center":
            key = "x"
        if key == "footprint":
            key = "side_a" if "side_a" in self.rows else "x"
        row = self.rows.get(key)
        if row is not None:
            row.set_error(error_text(err))
            self.message.value = ""
        else:
            self.message.value = (f"<span style='color:#8a2d2d'>{html.escape(err.field)}: "
                                  f"{html.escape(error_text(err))}</span>")
