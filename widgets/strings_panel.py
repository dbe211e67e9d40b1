"""The Strings tab: string sizing, the three stringings side by side, drawing strings by hand.

:class:`StringsPanel` renders a :class:`layout.study.string_options.StringingComparison` the
planner made with :func:`layout.study.string_options.compare_stringing`: the values the
sizing used and the limit that sets each length (NEC 690.7(A)), and the options by rows,
shade-aware and as drawn, with their annual energy and the gain over the row stringing. It
reports edits through callbacks and never changes the project itself:

- **Apply** hands the planner the design values typed above the sizing: the record low and
  design high temperatures [°C], the Voc correction (module coefficient or Table 690.7(A))
  and the code's voltage limit;
- **Use by rows** / **Use shade-aware** hand the planner that option's strings to keep;
- **Draw a string**: while it is pressed, clicks on modules add them in order to a new string
  (a click on the last one takes it back); **Finish string** hands the planner the project's
  strings with the new one added; **Clear strings** hands it none.

Which option the plan shows is chosen with **Show on plan**.
"""

from __future__ import annotations

import html
from collections.abc import Callable

import ipywidgets as w

__all__ = ["StringsPanel", "options_table"]

_CAUTION = ("String sizing is a planning aid: the installer's licensed electrician and the "
            "inverter maker's tools decide (NFPA 70 Article 690).")


def options_table(table) -> str:
    """Return the stringing options (one row per method) as an HTML table."""
    rows = []
    for method, r in table.iterrows():
        gain = ("" if method == "rows" or r.gain_kwh != r.gain_kwh  # NaN: other modules
                else f"{r.gain_kwh:+,.0f} ({r.gain_pct:+.2f} %)")
        rows.append(
            f"<tr data-method='{html.escape(str(method))}'><td>{html.escape(r.label)}</td>"
            f"<td style='text-align:right'>{int(r.strings)}</td>"
            f"<td style='text-align:right'>{int(r.modules)}</td>"
            f"<td style='text-align:right'>{int(r.inputs_used)}</td>"
            f"<td style='text-align:right'>{r.dc_ac_ratio:.2f}</td>"
            f"<td style='text-align:right'>{r.energy_kwh:,.0f}</td>"
            f"<td style='text-align:right'>{gain}</td></tr>")
    return ("<table style='font-size:12px;border-collapse:collapse'>"
            "<tr><th style='text-align:left'>stringing</th><th>strings</th><th>modules</th>"
            "<th>inputs</th><th>DC/AC</th><th>kWh a year (DC)</th><th>over rows kWh</th>"
            "</tr>" + "".join(rows) + "</table>")


class StringsPanel(w.VBox):
    """The Strings tab.

    Attributes
    ----------
    sizing_html : ipywidgets.HTML
        The values used and the limits, or why sizing cannot run.
    options_html : ipywidgets.HTML
        The options' table (:func:`options_table`).
    show_on_plan : ipywidgets.ToggleButtons
        Which option's strings the plan shows: ``"rows"``, ``"shade"`` or ``"project"``.
    use_rows, use_shade : ipywidgets.Button
        Keep that option's strings as the project's.
    draw_toggle : ipywidgets.ToggleButton
        While pressed, module clicks build a new string.
    finish_button, clear_button : ipywidgets.Button
    note : ipywidgets.HTML
        What happened last, or an error.
    comparison : layout.study.string_options.StringingComparison or None
        The comparison shown.
    draft : list of str
        The string being drawn.
    own_strings : tuple of tuple of str
        The project's own strings, as last shown.
    """

    def __init__(self):
        self.sizing_html = w.HTML()
        self.options_html = w.HTML()
        self.options_html.add_class("eaveline-strings-table")
        self.show_on_plan = w.ToggleButtons(
            options=[("by rows", "rows"), ("shade-aware", "shade"), ("as drawn", "project")],
            value="project", description="Show on plan", style={"button_width": "96px"})
        self.use_rows = w.Button(description="Use by rows")
        self.use_shade = w.Button(description="Use shade-aware")
        self.draw_toggle = w.ToggleButton(value=False, description="Draw a string",
                                          tooltip="Click modules in wiring order")
        self.finish_button = w.Button(description="Finish string", disabled=True)
        self.clear_button = w.Button(description="Clear strings")
        self.note = w.HTML()
        for widget, name in ((self.draw_toggle, "draw"), (self.finish_button, "finish"),
                             (self.clear_button, "clear"), (self.use_rows, "use-rows"),
                             (self.use_shade, "use-shade"), (self.note, "note"),
                             (self.sizing_html, "sizing")):
            widget.add_class(f"eaveline-strings-{name}")
        self.comparison = None
        self.draft: list[str] = []
        self._callbacks: dict[str, list[Callable]] = {"use": [], "strings": [], "redraw": [],
                                                      "design": []}
        self.own_strings: tuple = ()
        self.use_rows.on_click(lambda _: self._call("use", "rows"))
        self.use_shade.on_click(lambda _: self._call("use", "shade"))
        self.finish_button.on_click(lambda _: self.finish())
        self.clear_button.on_click(lambda _: self._call("strings", None))
        self.draw_toggle.observe(self._drawing_changed, names="value")
        self.show_on_plan.observe(lambda _: self._call("redraw"), names="value")
        self.low_text = w.Text(description="Record low °C", placeholder="typed, e.g. -18",
                               style={"description_width": "100px"},
                               layout=w.Layout(width="210px"))
        self.high_text = w.Text(description="Design high °C", placeholder="e.g. 36",
                                style={"description_width": "100px"},
                                layout=w.Layout(width="210px"))
        self.method_menu = w.Dropdown(options=[("module coefficient", "coefficient"),
                                               ("Table 690.7(A)", "table")],
                                      description="Voc", layout=w.Layout(width="230px"))
        self.code_menu = w.Dropdown(options=[("600 V (1-2 family dwelling)", 600.0),
                                             ("1000 V", 1000.0), ("1500 V", 1500.0)],
                                    description="Code limit", layout=w.Layout(width="290px"))
        self.apply_design = w.Button(description="Apply", tooltip="Size again with these")
        self.apply_design.on_click(lambda _: self._design_typed())
        for widget, name in ((self.low_text, "low"), (self.high_text, "high"),
                             (self.apply_design, "apply")):
            widget.add_class(f"eaveline-strings-{name}")
        super().__init__([
            w.HBox([self.low_text, self.high_text, self.method_menu]),
            w.HBox([self.code_menu, self.apply_design]),
            self.sizing_html, self.options_html, self.show_on_plan,
            w.HBox([self.use_rows, self.use_shade]),
            w.HBox([self.draw_toggle, self.finish_button, self.clear_button]),
            self.note,
            w.HTML(f"<div style='font-size:11px;color:#5d6b6a'>{html.escape(_CAUTION)}</div>"),
        ])
        self.add_class("eaveline-strings")

    # ----------------------------------------------------------------- callbacks
    def on_use(self, callback: Callable) -> None:
        """Call ``callback(method)`` when an option is to become the project's strings."""
        self._callbacks["use"].append(callback)

    def on_strings(self, callback: Callable) -> None:
        """Call ``callback(strings)`` with the project's new strings (None: clear them)."""
        self._callbacks["strings"].append(callback)

    def on_design(self, callback: Callable) -> None:
        """Call ``callback(values)`` with the typed design values (StringDesign fields)."""
        self._callbacks["design"].append(callback)

    def _design_typed(self) -> None:
        values = {"voc_method": self.method_menu.value,
                  "code_max_voltage_v": float(self.code_menu.value)}
        for key, field in (("record_low_c", self.low_text), ("design_high_c", self.high_text)):
            text = field.value.strip().replace("°C", "").replace("−", "-")
            try:
                values[key] = float(text) if text else None
            except ValueError:
                self.say(f"{key}: {field.value!r} is not a temperature (°C, e.g. -18)",
                         error=True)
                return
        self._call("design", values)

    def on_redraw(self, callback: Callable) -> None:
        """Call ``callback()`` when the strings on the plan should be drawn again."""
        self._callbacks["redraw"].append(callback)

    def _call(self, event: str, *args) -> None:
        for callback in self._callbacks[event]:
            callback(*args)

    # ----------------------------------------------------------------- drawing
    @property
    def drawing(self) -> bool:
        """True while module clicks build a new string."""
        return bool(self.draw_toggle.value)

    def _drawing_changed(self, change) -> None:
        if change["new"]:
            self.show_on_plan.value = "project"
            self.say("Click the modules of the new string in wiring order; click the last "
                     "one again to take it back.")
        self.finish_button.disabled = not change["new"]
        self._call("redraw")

    def add_module(self, module_id: str) -> None:
        """Add a clicked module to the string being drawn (the last one clicked again: out)."""
        if self.draft and self.draft[-1] == module_id:
            self.draft.pop()
        elif module_id in self.draft or any(module_id in s for s in self.own_strings):
            self.say(f"{module_id} is already in a string.", error=True)
            return
        else:
            self.draft.append(module_id)
        self.say(f"New string: {len(self.draft)} module(s).")
        self._call("redraw")

    def finish(self) -> None:
        """Hand on the project's strings with the one drawn added."""
        if not self.draft:
            self.say("Click modules first.", error=True)
            return
        strings = (*self.own_strings, tuple(self.draft))
        self._call("strings", strings)

    def drawn_accepted(self) -> None:
        """Forget the draft: the planner kept it."""
        self.draft = []
        self.draw_toggle.value = False

    # ----------------------------------------------------------------- showing
    def say(self, text: str, *, error: bool = False) -> None:
        """Show one line under the buttons."""
        colour = "#8a2d2d" if error else "#34403f"
        self.note.value = f"<span style='font-size:12px;color:{colour}'>{html.escape(text)}</span>"

    def plan_strings(self):
        """Return the strings the plan should show, by **Show on plan**."""
        if self.show_on_plan.value == "project":
            return self.own_strings
        if self.comparison is not None and self.show_on_plan.value in self.comparison.plans:
            return self.comparison.plans[self.show_on_plan.value].strings
        return ()

    def show(self, project, comparison=None, *, problem: str = "") -> None:
        """Show a comparison, or the problem that stopped it; remember the project's strings."""
        self.own_strings = tuple(project.energy.electrical.strings or ())
        self.comparison = comparison
        design = project.strings
        self.low_text.value = "" if design.record_low_c is None else f"{design.record_low_c:g}"
        self.high_text.value = "" if design.design_high_c is None else f"{design.design_high_c:g}"
        self.method_menu.value = design.voc_method
        self.code_menu.value = design.code_max_voltage_v
        if comparison is None:
            self.sizing_html.value = (
                "<div style='font-size:12px;color:#8a2d2d'>String sizing cannot run: "
                f"{html.escape(problem)}</div>")
            self.options_html.value = ""
            return
        if not self.own_strings and not self.drawing and self.show_on_plan.value == "project":
            self.show_on_plan.value = "shade"  # nothing drawn yet: show the suggestion
        lines = "".join(f"<li>{html.escape(line)}</li>" for line in comparison.sizing.lines())
        self.sizing_html.value = (
            "<div style='font-size:12px'><b>String sizing (NEC 690.7(A))</b>"
            f"<ul style='margin:2px 0 4px 0'>{lines}</ul></div>")
        notes = "".join(f"<div>{html.escape(n)}</div>" for n in comparison.notes)
        self.options_html.value = options_table(comparison.table) + (
            f"<div style='font-size:11px;color:#5d6b6a'>{notes}</div>" if notes else "")
