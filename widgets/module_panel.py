"""The Module tab: module size and power, fill options, setback presets and values, refill.

:class:`ModulePanel` shows a project's module, fill and clearance rules as text in its units,
reads what was typed back through the core's own checks, and hands the new module, fill and
rules to its owner (:meth:`ModulePanel.on_change`), which refills the roof.
"""

from __future__ import annotations

import html
from collections.abc import Callable
from dataclasses import replace

import ipywidgets as w

from layout.errors import InputError
from layout.fill.faces import FILL_ORIENTATIONS
from layout.fill.rules import (
    ClearanceRules,
    ifc_2015_residential,
    ifc_2021_residential,
    no_setbacks,
)

from .forms import FieldRow, error_text, length_text, read_length
from .quiet import Quiet
from .unit_text import in_units

__all__ = ["SETBACK_PRESETS", "ModulePanel"]

#: Setback presets offered in the Module tab (label → rules factory).
SETBACK_PRESETS = {
    "IFC 2021 residential": ifc_2021_residential,
    "IFC 2021 residential, sprinklered": lambda: ifc_2021_residential(sprinklered=True),
    "IFC 2015 residential": ifc_2015_residential,
    "no setbacks": no_setbacks,
}
_AS_IN_PROJECT = "as in the project"
_EDGES = ("ridge", "eave", "rake", "hip", "valley")


def _html_lines(lines, *, colour: str = "#34403f") -> str:
    items = "".join(f"<li>{html.escape(line)}</li>" for line in lines)
    return f"<ul style='margin:2px 0 0 16px;padding:0;color:{colour};font-size:12px'>{items}</ul>"


def _number(text: str, field: str) -> float:
    try:
        return float(str(text).strip())
    except ValueError:
        raise InputError(field, "must be a number", value=text) from None


def _whole(text: str, field: str) -> int:
    number = _number(text, field)
    if not number.is_integer() or number < 0:
        raise InputError(field, "must be a whole number", value=text, allowed="0, 1, 2, ...")
    return int(number)


class ModulePanel(Quiet, w.VBox):
    """The Module tab: every field that changes the fill, and the rules in force.

    Show a project with :meth:`show`. Every edit of a field reads them all (:meth:`refill`);
    when they are valid and differ from the project, the callbacks registered with
    :meth:`on_change` get ``module=``, ``fill=`` and ``clearance=`` and return True when their
    owner took them.

    Attributes
    ----------
    project : layout.project.Project
        The project shown: the values a refill starts from.
    module_rows : dict of str to FieldRow
        Module long and short side, power, gaps in a row and between rows.
    orientation, rows_mode : ipywidgets.ToggleButtons
        Fill orientation, and one grid or sliding rows.
    preset : ipywidgets.Dropdown
        A setback preset, or the project's own rules.
    setback_rows : dict of str to FieldRow
        Edge setbacks, the large-array ridge setback, the ring around objects, pathways.
    rule_label : ipywidgets.HTML
        Module count, kWp, the rules' name and the ridge setbacks the fill applied.
    module_message : ipywidgets.HTML
        Cleared when a refill is refused for a bad field.
    """

    def __init__(self):
        self.project = None
        self._callbacks: list[Callable] = []
        self._base_rules: ClearanceRules | None = None
        self._shown_module: dict[str, str] = {}
        self._shown_setbacks: dict[str, str] = {}

        def text():
            return w.Text(continuous_update=False)

        self.module_rows = {
            "length_m": FieldRow("length_m", "Module long side", text()),
            "width_m": FieldRow("width_m", "Module short side", text()),
            "power_w": FieldRow("power_w", "Power at STC [W]", text()),
            "gap_along_eave_m": FieldRow("gap_along_eave_m", "Gap in a row", text()),
            "gap_up_slope_m": FieldRow("gap_up_slope_m", "Gap between rows", text()),
        }
        self.orientation = w.ToggleButtons(options=list(FILL_ORIENTATIONS),
                                           style={"button_width": "90px"})
        self.rows_mode = w.ToggleButtons(options=[("one grid", "grid"),
                                                  ("sliding rows", "sliding")],
                                         style={"button_width": "110px"})
        self.preset = w.Dropdown(options=[_AS_IN_PROJECT, *SETBACK_PRESETS],
                                 value=_AS_IN_PROJECT, description="Setbacks",
                                 layout=w.Layout(width="360px"))
        self.preset.observe(self._preset_chosen, names="value")
        self.setback_rows = {
            "ridge": FieldRow("ridge", "Ridge", text()),
            "ridge_setback_high_m": FieldRow("ridge_setback_high_m", "Ridge, large array",
                                             text()),
            "eave": FieldRow("eave", "Eave", text()),
            "rake": FieldRow("rake", "Rake", text()),
            "hip": FieldRow("hip", "Hip", text()),
            "valley": FieldRow("valley", "Valley", text()),
            "obstruction_clearance_m": FieldRow("obstruction_clearance_m",
                                                "Ring around objects", text()),
            "pathway_width_m": FieldRow("pathway_width_m", "Pathway width", text()),
            "pathway_count": FieldRow("pathway_count", "Pathways needed", text()),
        }
        self.refill_button = w.Button(description="Refill", button_style="",
                                      tooltip="Fill the roof again with these values")
        self.refill_button.add_class("eaveline-refill")
        self.refill_button.on_click(lambda _: self.refill())
        self.rule_label = w.HTML()
        self.rule_label.add_class("eaveline-rules")
        self.module_message = w.HTML()
        for row in [*self.module_rows.values(), *self.setback_rows.values()]:
            row.input.observe(self._field_edited, names="value")
        self.orientation.observe(self._field_edited, names="value")
        self.rows_mode.observe(self._field_edited, names="value")
        heading = "<div style='margin-top:8px;color:#34403f'><b>{}</b></div>".format
        super().__init__([
            self.rule_label,
            w.HTML(heading("Module")), *self.module_rows.values(),
            w.HBox([w.Label("Orientation", layout=w.Layout(width="150px")), self.orientation]),
            w.HBox([w.Label("Rows", layout=w.Layout(width="150px")), self.rows_mode]),
            w.HTML(heading("Setbacks and clearances (on the roof surface)")),
            self.preset, *self.setback_rows.values(),
            w.HBox([self.refill_button, self.module_message],
                   layout=w.Layout(align_items="center")),
        ])

    # ----------------------------------------------------------------- public
    def on_change(self, callback: Callable) -> None:
        """Call ``callback(module=, fill=, clearance=)`` with valid values; it returns a bool."""
        self._callbacks.append(callback)

    def show(self, project, rules: ClearanceRules | None = None) -> None:
        """Show a project's module, fill and clearance rules (or ``rules`` in their place)."""
        self.project = p = project
        rules = rules or p.clearance
        units = p.units
        values = {
            "length_m": length_text(p.module.length_m, units),
            "width_m": length_text(p.module.width_m, units),
            "power_w": f"{p.module.power_w:g}",
            "gap_along_eave_m": length_text(p.fill.gap_along_eave_m, units),
            "gap_up_slope_m": length_text(p.fill.gap_up_slope_m, units),
        }
        setbacks = {kind: length_text(rules.edge_setback_m[kind], units) for kind in _EDGES}
        setbacks["ridge_setback_high_m"] = ("" if rules.ridge_setback_high_m is None
                                            else length_text(rules.ridge_setback_high_m, units))
        setbacks["obstruction_clearance_m"] = length_text(rules.obstruction_clearance_m, units)
        setbacks["pathway_width_m"] = length_text(rules.pathway_width_m, units)
        setbacks["pathway_count"] = str(rules.pathway_count)
        with self._silently():
            for key, value in values.items():
                self.module_rows[key].input.value = value
                self.module_rows[key].set_error(None)
            for key, value in setbacks.items():
                self.setback_rows[key].input.value = value
                self.setback_rows[key].set_error(None)
            self.orientation.value = p.fill.orientation
            self.rows_mode.value = p.fill.rows
        self._base_rules = rules
        self._shown_module = dict(values)
        self._shown_setbacks = dict(setbacks)

    def show_rules(self, project, layout) -> None:
        """Show the module count, kWp, the rules' name and the ridge setbacks of a fill."""
        notes = [in_units(n, project.units) for n in layout.notes]
        rules = [n for n in notes if n.startswith("ridge setback")]
        others = [n for n in notes if not n.startswith("ridge setback")]
        self.rule_label.value = (
            f"<div style='font-size:13px;color:#34403f'><b>{layout.count}</b> modules · "
            f"<b>{layout.kwp(project.module):.2f}</b> kWp · "
            f"{html.escape(project.clearance.name)}</div>"
            + _html_lines(rules or ["no ridge setback applies to these faces"])
            + (_html_lines(others, colour="#5d6b6a") if others else ""))

    def refill(self) -> bool:
        """Read the fields, and hand them on when every one is valid.

        Returns
        -------
        bool
            True when the project changed or was already as typed.
        """
        p = self.project
        rows, setback_rows = self.module_rows, self.setback_rows
        for row in [*rows.values(), *setback_rows.values()]:
            row.set_error(None)
        bad = False

        def attempt(row_map, key, make):
            nonlocal bad
            try:
                return make()
            except InputError as err:
                target = row_map.get(err.field.split(".")[-1], row_map.get(key))
                target.set_error(error_text(err))
                bad = True
                return None

        sm, ss = self._shown_module, self._shown_setbacks
        base = self._base_rules
        length = attempt(rows, "length_m",
                         lambda: self._length(rows, sm, "length_m", p.module.length_m))
        width = attempt(rows, "width_m",
                        lambda: self._length(rows, sm, "width_m", p.module.width_m))
        power = attempt(rows, "power_w", lambda: _number(rows["power_w"].input.value,
                                                         "power_w"))
        gap_u = attempt(rows, "gap_along_eave_m", lambda: self._length(
            rows, sm, "gap_along_eave_m", p.fill.gap_along_eave_m))
        gap_v = attempt(rows, "gap_up_slope_m", lambda: self._length(
            rows, sm, "gap_up_slope_m", p.fill.gap_up_slope_m))
        edge = {}
        for kind in _EDGES:
            edge[kind] = attempt(setback_rows, kind, lambda k=kind: self._length(
                setback_rows, ss, k, base.edge_setback_m[k]))
        high_text = setback_rows["ridge_setback_high_m"].input.value.strip()
        high = None if not high_text else attempt(
            setback_rows, "ridge_setback_high_m", lambda: self._length(
                setback_rows, ss, "ridge_setback_high_m", base.ridge_setback_high_m))
        ring = attempt(setback_rows, "obstruction_clearance_m", lambda: self._length(
            setback_rows, ss, "obstruction_clearance_m", base.obstruction_clearance_m))
        path_w = attempt(setback_rows, "pathway_width_m", lambda: self._length(
            setback_rows, ss, "pathway_width_m", base.pathway_width_m))
        path_n = attempt(setback_rows, "pathway_count", lambda: _whole(
            setback_rows["pathway_count"].input.value, "pathway_count"))
        if bad:
            self.module_message.value = ""
            return False
        module = attempt(rows, "length_m", lambda: replace(
            p.module, length_m=length, width_m=width, power_w=power))
        fill = attempt(rows, "gap_along_eave_m", lambda: replace(
            p.fill, gap_along_eave_m=gap_u, gap_up_slope_m=gap_v,
            orientation=self.orientation.value, rows=self.rows_mode.value))
        setbacks = dict(base.edge_setback_m)
        setbacks.update(edge)
        rules = attempt(setback_rows, "ridge", lambda: replace(
            base, edge_setback_m=setbacks, ridge_setback_high_m=high,
            obstruction_clearance_m=ring, pathway_width_m=path_w, pathway_count=path_n))
        if bad:
            return False
        if rules != base and not rules.name.endswith("(edited)"):
            rules = replace(rules, name=f"{rules.name} (edited)")
        if rules == p.clearance and module == p.module and fill == p.fill:
            return True
        results = [callback(module=module, fill=fill, clearance=rules)
                   for callback in self._callbacks]
        return all(results)

    # ----------------------------------------------------------------- internals
    def _field_edited(self, change) -> None:
        if not self._quiet:
            self.refill()

    def _preset_chosen(self, change) -> None:
        if change["new"] == _AS_IN_PROJECT:
            self.show(self.project)
        else:
            self.show(self.project, SETBACK_PRESETS[change["new"]]())
        self.refill()

    def _length(self, rows, shown, key, exact):
        text = rows[key].input.value
        if text == shown[key]:
            return exact
        return read_length(text, self.project.units, field=key)
