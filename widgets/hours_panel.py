"""The Hours tab: shade loss by month and hour, for the selected module or the whole layout."""

from __future__ import annotations

from collections.abc import Callable

import ipywidgets as w

from .charts import HoursHeatMap

__all__ = ["HoursPanel"]


class HoursPanel(w.VBox):
    """The Hours tab: a scope switch over a month-by-hour heat map.

    Attributes
    ----------
    hours_scope : ipywidgets.ToggleButtons
        "module" (the selected module) or "layout" (the whole layout); a switch calls the
        callbacks from :meth:`on_scope_changed`.
    heat_map : widgets.charts.HoursHeatMap
        The month-by-hour shade loss shown.
    """

    def __init__(self):
        self.hours_scope = w.ToggleButtons(options=[("selected module", "module"),
                                                    ("whole layout", "layout")],
                                           value="module", style={"button_width": "120px"})
        self.heat_map = HoursHeatMap()
        super().__init__([self.hours_scope, self.heat_map])

    def on_scope_changed(self, callback: Callable) -> None:
        """Call ``callback()`` when the scope is switched."""
        self.hours_scope.observe(lambda _: callback(), names="value")

    def show(self, result, module_id: str | None) -> None:
        """Show the month-by-hour loss of ``module_id`` (or the layout, by the scope)."""
        if self.hours_scope.value == "module" and module_id is not None:
            self.heat_map.show(result.module_month_hour(module_id),
                               what=f"module {module_id}")
        else:
            self.heat_map.show(result.month_hour, what="the whole layout")
