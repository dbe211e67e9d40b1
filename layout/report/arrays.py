"""The figures of each array (roof face) and of the whole system, and their solar access by month.

Every number is the evaluation's own: the face and system totals of
:func:`layout.power.metrics.face_table` and :attr:`Evaluation.totals
<layout.study.analysis.Evaluation.totals>`, the minimum and mean of the module table's columns,
and the monthly solar access of :func:`layout.power.metrics.monthly_solar_access`. TSRF is
solar access × TOF per module, as the trade defines it (see :mod:`layout.power.metrics`).
"""

from __future__ import annotations

import numpy as np

from ..power.metrics import face_table, monthly_solar_access
from ..sky.paths import MONTH_NAMES
from .blocks import Paragraph, Section, Table, number

__all__ = ["SYSTEM", "array_rows", "figures_section", "monthly_access_table"]

#: The name of the whole system's row and column.
SYSTEM = "system"

#: Columns of the figures table.
FIGURE_COLUMNS = ("array", "modules", "kWp", "energy kWh/yr", "shade loss %",
                  "solar access % (mean)", "TOF % (mean)", "TSRF % (min)", "TSRF % (mean)")


def array_rows(evaluation) -> list[tuple[str, dict]]:
    """Return the figures of each array and of the system, unformatted.

    Returns
    -------
    list of (str, dict)
        Array name (the face) or :data:`SYSTEM`, and its ``modules``, ``power_kwp``,
        ``energy_kwh``, ``shade_loss_pct``, ``solar_access_pct`` (mean), ``tof_pct`` (mean),
        ``tsrf_min_pct``, ``tsrf_pct`` (mean).
    """
    project = evaluation.project
    table = evaluation.table
    faces = face_table(table, power_w=project.module.power_w,
                       tsrf_threshold_pct=project.energy.tsrf_threshold_pct)
    rows = []
    parts = [(name, table[table["face"] == name], faces.loc[name]) for name in faces.index]
    parts.append((SYSTEM, table, evaluation.totals))
    for name, part, totals in parts:
        rows.append((name, {
            "modules": int(totals["modules"]), "power_kwp": float(totals["power_kwp"]),
            "energy_kwh": float(totals["energy_kwh"]),
            "shade_loss_pct": float(totals["shade_loss_pct"]),
            "solar_access_pct": float(totals["solar_access_pct"]),
            "tof_pct": float(part["tof_pct"].mean()) if len(part) else float("nan"),
            "tsrf_min_pct": float(part["tsrf_pct"].min()) if len(part) else float("nan"),
            "tsrf_pct": float(totals["tsrf_pct"]),
        }))
    return rows


def monthly_access_table(evaluation) -> Table:
    """Solar access month by month of each array and of the system [%]."""
    table = evaluation.table
    names = list(dict.fromkeys(table["face"]))
    columns = [table["face"].to_numpy() == name for name in names]
    columns.append(np.ones(len(table), dtype=bool))
    series = [monthly_solar_access(evaluation.irradiance, columns=c) for c in columns]
    rows = tuple((MONTH_NAMES[m - 1], *(number(s[m]) for s in series)) for m in range(1, 13))
    return Table(("month", *names, SYSTEM), rows,
                 caption="Solar access by month [%] of each array and of the whole system",
                 key="monthly_access")


def figures_section(evaluation) -> Section:
    """Return the section of figures: each array and the system, then solar access by month."""
    energy = evaluation.project.energy
    basis = evaluation.totals["energy_basis"]
    if not len(evaluation.table):
        return Section("figures", "Figures of each array", (
            Paragraph("There are no modules in this layout, so there are no figures to "
                      "report: every setback, clearance or removal left no room for a module."),
        ), new_page=True)
    rows = tuple(
        (name, str(r["modules"]), number(r["power_kwp"], 2),
         number(r["energy_kwh"], 0, thousands=True), number(r["shade_loss_pct"]),
         number(r["solar_access_pct"]), number(r["tof_pct"]), number(r["tsrf_min_pct"]),
         number(r["tsrf_pct"]))
        for name, r in array_rows(evaluation))
    below = evaluation.totals["modules_below_tsrf"]
    threshold = energy.tsrf_threshold_pct
    return Section("figures", "Figures of each array", (
        Paragraph(f"Annual energy is {basis}, from the '{energy.electrical.shade_model}' "
                  f"bypass-diode model (the assumptions section names every model). An array "
                  f"is the modules of one roof face."),
        Table(FIGURE_COLUMNS, rows, caption="Annual figures of each array and of the system",
              total_rows=1, key="arrays"),
        Paragraph(f"Solar access: insolation on the module with shade over the same without. "
                  f"TOF: unshaded insolation on the module's plane over that on the best plane "
                  f"at the site (tilt {number(evaluation.best.surface_tilt)}°, azimuth "
                  f"{number(evaluation.best.surface_azimuth)}°). TSRF = solar access × TOF per "
                  f"module. {below} modules are below the {threshold:g} % TSRF threshold.",
                  style="note"),
        monthly_access_table(evaluation),
    ), new_page=True)
