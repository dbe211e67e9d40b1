"""The loss range under the totals: its controls, its line of text and per-module bands.

A loss range (:class:`layout.study.outlook.ShadeLossRange`) carries the survey tolerances to
the annual shade loss. The planner runs it and keeps it while the project stays the same in
everything it depends on (:func:`range_key`); :class:`LossRangePanel` shows the band or says
what to do to get one, and :func:`module_bands` gives each module's band for its readout.
"""

from __future__ import annotations

import html
from collections.abc import Callable

import ipywidgets as w
import numpy as np

from layout.study.outlook import DEFAULT_SAMPLES, percentile_label

from . import style

__all__ = ["LossRangePanel", "band_text", "module_bands", "range_key"]


def range_key(project) -> tuple:
    """Return what a loss range depends on: all of a project but its units, name and notes."""
    return (project.site, project.buildings, project.module, project.clearance,
            project.fill, project.array_faces, project.obstructions, project.survey,
            project.removed, project.pathways, project.energy)


def _band_columns(band) -> tuple[str, str]:
    """Labels of the lowest and highest percentile of a loss range: ``("p5", "p95")``."""
    return percentile_label(min(band.percentiles)), percentile_label(max(band.percentiles))


def module_bands(band) -> dict:
    """Shade loss range [%] (low, high) per module id of a loss range, where it is finite."""
    low, high = _band_columns(band)
    modules = band.modules
    return {mid: (float(a), float(b)) for mid, a, b in zip(
        modules.index, modules[f"shade_loss_pct_{low}"],
        modules[f"shade_loss_pct_{high}"], strict=True) if np.isfinite(a)}


def band_text(band) -> str:
    """One line of HTML with a layout's shade loss range (a :class:`ShadeLossRange`).

    The band is the lowest to the highest percentile asked for (5th to 95th by default)
    around the nominal readings' loss, with the energy lost, the draws and the seed.
    """
    low, high = _band_columns(band)
    loss = band.totals.loc["shade_loss_pct"]
    lost = band.totals.loc["energy_lost_kwh"]
    seed = "none" if band.seed is None else str(band.seed)
    notes = "".join(f"<br>{html.escape(n)}" for n in band.notes)
    return (f"<span style='font-size:13px;color:{style.INK}'>Over the survey tolerances: "
            f"shade loss <b class='eaveline-band'>{loss[low]:.2f} to {loss[high]:.2f}</b> % "
            f"({low}–{high}) around {loss['nominal']:.2f} %; energy lost {lost[low]:,.1f} to "
            f"{lost[high]:,.1f} kWh a year</span>"
            f"<span style='font-size:12px;color:#5d6b6a'> · {band.samples} draws of the "
            f"readings, seed {seed}, {band.distribution} errors{notes}</span>")


class LossRangePanel(w.VBox):
    """The **Loss range** button with its draws and seed, and the line showing the band.

    Attributes
    ----------
    range_button : ipywidgets.Button
        Asks for a loss range (callbacks from :meth:`on_run`); disabled without a survey.
    range_samples, range_seed : ipywidgets.BoundedIntText, ipywidgets.IntText
        Draws of the readings and the generator's seed.
    band_label : ipywidgets.HTML
        The band, or what to do to get one.
    """

    def __init__(self):
        self.range_button = w.Button(description="Loss range", layout=w.Layout(width="auto"),
                                     tooltip="Draw the survey readings from their tolerances "
                                             "and evaluate each draw: the 5th to 95th "
                                             "percentile of the shade loss")
        self.range_button.add_class("eaveline-loss-range")
        self.range_samples = w.BoundedIntText(value=DEFAULT_SAMPLES, min=2, max=5000,
                                              description="Draws",
                                              layout=w.Layout(width="150px"))
        self.range_seed = w.IntText(value=0, description="Seed", layout=w.Layout(width="140px"))
        self.band_label = w.HTML()
        self.band_label.add_class("eaveline-loss-band")
        super().__init__([w.HBox([self.range_button, self.range_samples, self.range_seed],
                                 layout=w.Layout(align_items="center")),
                          self.band_label])

    def on_run(self, callback: Callable) -> None:
        """Call ``callback()`` when the **Loss range** button is pressed."""
        self.range_button.on_click(lambda _: callback())

    def show(self, band, *, current: bool, surveyed: bool) -> None:
        """Show a loss range, or say why there is none.

        Parameters
        ----------
        band : layout.study.outlook.ShadeLossRange or None
            The last loss range run.
        current : bool
            True when ``band`` was run on the project shown.
        surveyed : bool
            True when the project shown has survey readings.
        """
        self.range_button.disabled = not surveyed
        if current:
            self.band_label.value = band_text(band)
        elif band is not None and surveyed:
            self.band_label.value = (
                "<span style='font-size:12px;color:#2b7c79'>The project changed since the "
                "loss range: press <b>Loss range</b> to draw the readings again.</span>")
        elif surveyed:
            self.band_label.value = (
                "<span style='font-size:12px;color:#5d6b6a'>Press <b>Loss range</b> for the "
                "5th to 95th percentile of the shade loss over the survey tolerances.</span>")
        else:
            self.band_label.value = (
                "<span style='font-size:12px;color:#5d6b6a'>A loss range needs surveyed "
                "obstructions (Survey tab).</span>")
