"""The figures under the plan: module count and kWp, annual totals, the selected module, notes.

:class:`TotalsPanel` renders what :class:`layout.study.analysis.Evaluation` computed; the text
of each line comes from the functions here (:func:`totals_text`, :func:`module_note`), which
format figures and compute nothing.
"""

from __future__ import annotations

import html
from collections import namedtuple

import ipywidgets as w
import numpy as np

from . import style

__all__ = ["TotalsPanel", "module_note", "totals_text"]


def _unsigned_zero(value: float) -> str:
    """Format to 0.01 without a minus on a loss that rounds to zero (no shade: -1e-12)."""
    text = f"{value:.2f}"
    return "0.00" if text == "-0.00" else text


def totals_text(totals: dict) -> str:
    """Return the layout's annual figures as one line of HTML (from :attr:`Evaluation.totals`).

    Shade loss is shown to 0.01 %, TSRF to 0.1 %, energy to 1 kWh.
    """
    basis = html.escape(str(totals.get("energy_basis", "DC")))
    below = totals["modules_below_tsrf"]
    threshold = totals["tsrf_threshold_pct"]
    tsrf = totals["tsrf_pct"]
    tsrf_text = "–" if not np.isfinite(tsrf) else f"{tsrf:.1f}"
    return (
        f"<span style='font-size:14px;color:{style.INK}'>"
        f"<b>{totals['energy_kwh']:,.0f}</b> kWh a year ({basis}) · "
        f"shade loss <b class='eaveline-shade-loss'>{_unsigned_zero(totals['shade_loss_pct'])}"
        "</b> % · "
        f"mean TSRF <b>{tsrf_text}</b> %</span>"
        f"<span style='font-size:12px;color:#5d6b6a'> · {below} "
        f"{'module' if below == 1 else 'modules'} below {threshold:g} % TSRF "
        f"(thick outline)</span>")


#: Columns of the module table that :func:`module_note` reads.
NOTE_COLUMNS = ("energy_kwh", "shade_loss_pct", "tsrf_pct")
#: A row of those columns (a module table's row serves as well).
NoteRow = namedtuple("NoteRow", NOTE_COLUMNS)


def module_note(module_id: str, row, band: tuple[float, float] | None = None) -> str:
    """Hover text of one module: its id and annual figures (a row of the module table).

    ``band`` is the module's shade loss range [%] over the survey tolerances (low, high),
    shown after its shade loss when given.
    """
    loss = f"shade loss {row.shade_loss_pct:.1f} %"
    if band is not None:
        loss += f" (range {band[0]:.1f} to {band[1]:.1f} %)"
    return f"{module_id}: {row.energy_kwh:.0f} kWh, {loss}, TSRF {row.tsrf_pct:.1f} %"


class TotalsPanel(w.VBox):
    """The figures column under the plan.

    Parameters
    ----------
    band : ipywidgets.Widget
        Shown between the totals and the selected module (the loss range controls).

    Attributes
    ----------
    count_label, totals_label, module_readout, caveat_label, last_move : ipywidgets.HTML
        Module count and kWp; the annual totals; the selected module's figures; the weather
        caveat; the last obstruction moved.
    """

    def __init__(self, band: w.Widget):
        self.count_label = w.HTML()
        self.count_label.add_class("eaveline-count")
        self.totals_label = w.HTML()
        self.totals_label.add_class("eaveline-totals")
        self.caveat_label = w.HTML()
        self.caveat_label.add_class("eaveline-caveat")
        self.module_readout = w.HTML()
        self.module_readout.add_class("eaveline-module-readout")
        self.last_move = w.HTML()
        self.last_move.add_class("eaveline-last-move")
        super().__init__([self.count_label, self.totals_label, band, self.module_readout,
                          self.caveat_label, self.last_move])

    def show(self, project, result) -> None:
        """Show a project's module count, kWp, annual totals and weather caveat."""
        layout = result.layout
        self.count_label.value = (
            f"<span style='font-size:14px;color:#34403f'><b>{layout.count}</b> modules · "
            f"<b>{layout.kwp(project.module):.2f}</b> kWp</span>")
        self.totals_label.value = totals_text(result.totals)
        caveat = result.weather.caveat if project.energy.weather_file is None else ""
        self.caveat_label.value = ("" if not caveat else
                                   f"<div style='font-size:11px;color:#5d6b6a;max-width:620px'>"
                                   f"{html.escape(caveat)}</div>")

    def show_totals(self, totals: dict) -> None:
        """Show annual totals alone (a preview during a drag)."""
        self.totals_label.value = totals_text(totals)

    def show_selected(self, module_id: str | None, row=None,
                      band: tuple[float, float] | None = None) -> None:
        """Show the selected module's figures (a row of the module table), or nothing.

        ``band`` is its shade loss range [%] (low, high), when one is current.
        """
        if module_id is None or row is None:
            self.module_readout.value = ""
            return
        band_part = ("" if band is None else
                     f" <span class='eaveline-module-band'>(range {band[0]:.2f} to "
                     f"{band[1]:.2f} %)</span>")
        self.module_readout.value = (
            f"<span style='font-size:12px;color:{style.INK}'>Selected module "
            f"<b>{html.escape(module_id)}</b> (diamond): {row.energy_kwh:.0f} kWh · "
            f"shade loss {row.shade_loss_pct:.2f} %{band_part} · solar access "
            f"{row.solar_access_pct:.1f} % · TOF {row.tof_pct:.1f} % · TSRF {row.tsrf_pct:.1f} %"
            f"</span>")

    def show_move(self, text: str) -> None:
        """Say which obstruction moved where."""
        self.last_move.value = (f"<span style='font-size:12px;color:#5d6b6a'>"
                                f"{html.escape(text)}</span>")
