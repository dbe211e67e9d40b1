"""The Sky tab: a module chooser and the sun paths and skyline seen from the chosen module."""

from __future__ import annotations

from collections.abc import Callable

import ipywidgets as w

from layout.power.energy import scene_casters

from .quiet import Quiet
from .sky_chart import SkyChart

__all__ = ["SkyPanel"]


class SkyPanel(Quiet, w.VBox):
    """The Sky tab: choose a module, see its sky chart and monthly figures.

    Attributes
    ----------
    sky_module : ipywidgets.Dropdown
        The active modules; a choice calls the callbacks from :meth:`on_module_chosen`.
    sky_chart : widgets.sky_chart.SkyChart
        Sun paths, skyline and monthly figures of the module shown.
    """

    def __init__(self):
        self._callbacks: list[Callable] = []
        self.sky_module = w.Dropdown(description="Module", layout=w.Layout(width="300px"))
        self.sky_module.observe(self._chosen, names="value")
        self.sky_chart = SkyChart(width_px=400, height_px=300)
        super().__init__([
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>Choose a module here, or switch "
                   "clicks to <i>select</i> and click it on the plan.</div>"),
            self.sky_module, self.sky_chart])

    def on_module_chosen(self, callback: Callable) -> None:
        """Call ``callback(module_id)`` when a module is chosen in the menu."""
        self._callbacks.append(callback)

    def show(self, project, result, module_id: str | None) -> None:
        """Offer the active modules of ``result`` and chart the sky of ``module_id``."""
        ids = list(result.table.index)
        with self._silently():
            if list(self.sky_module.options) != ids:
                self.sky_module.options = ids
            self.sky_module.value = module_id if module_id in ids else None
        if module_id is None:
            return
        module = next(m for m in result.modules if m.id == module_id)
        self.sky_chart.show(site=project.site, casters=scene_casters(project),
                            point=module.centre_3d, module_id=module.id,
                            monthly=result.module_monthly(module.id),
                            year=int(result.weather.data.index[0].year),
                            basis=result.table.attrs.get("energy_basis", "DC"))

    def _chosen(self, change) -> None:
        if self._quiet or change["new"] is None:
            return
        for callback in self._callbacks:
            callback(change["new"])
