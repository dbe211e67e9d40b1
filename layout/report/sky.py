"""The sky of the worst module of each array: sun paths, each obstruction's skyline, its months.

The worst module of an array is the one with the lowest annual solar access (the first in
table order on a tie). Its chart is the planner's sky chart: the sun's paths on the 21st of
every month (:func:`layout.sky.paths.sun_paths`) over the parts of the sky each caster hides
from the module's centre (:func:`layout.shading.skyline.skyline_regions`, the exact ray tests
of the energy model). Beside it, the module's monthly energy, shade loss and solar access, from
the evaluation (:meth:`Evaluation.module_monthly
<layout.study.analysis.Evaluation.module_monthly>` and
:func:`layout.power.metrics.monthly_solar_access`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..power.energy import scene_casters
from ..power.metrics import monthly_solar_access
from ..shading.skyline import skyline_regions
from ..sky.paths import MONTH_NAMES, sun_paths
from .blocks import Beside, Figure, Paragraph, Section, Table, number

__all__ = ["SkyDrawing", "sky_section", "worst_modules_by_array"]


@dataclass(frozen=True)
class SkyDrawing:
    """The sky seen from one module: what the sky chart draws.

    Attributes
    ----------
    title : str
    paths : list of layout.sky.paths.SunPath
    regions : list of layout.shading.skyline.SkyRegion
    """

    title: str
    paths: list
    regions: list


def worst_modules_by_array(table) -> list[tuple[str, str]]:
    """Return (face, module id) of the module with the lowest solar access on each face."""
    out = []
    for face in dict.fromkeys(table["face"]):
        part = table[table["face"] == face]["solar_access_pct"].to_numpy(dtype=float)
        filled = np.where(np.isfinite(part), part, np.inf)
        index = table.index[table["face"] == face][int(np.argmin(filled))]
        out.append((face, str(index)))
    return out


def _monthly_table(evaluation, module_id: str, number_of: int) -> Table:
    column = [m.id for m in evaluation.modules].index(module_id)
    monthly = evaluation.module_monthly(module_id)
    access = monthly_solar_access(evaluation.irradiance, columns=[column])
    basis = evaluation.totals["energy_basis"]
    rows = tuple((MONTH_NAMES[m - 1], number(monthly.loc[m, "energy_kwh"]),
                  number(monthly.loc[m, "shade_loss_pct"]), number(access[m]))
                 for m in range(1, 13))
    row = evaluation.table.loc[module_id]
    total = ("year", number(row["energy_kwh"]), number(row["shade_loss_pct"]),
             number(row["solar_access_pct"]))
    return Table(("month", f"{basis} kWh", "shade loss %", "solar access %"), (*rows, total),
                 caption=f"Module {number_of} by month", total_rows=1,
                 key=f"sky_monthly:{module_id}")


def sky_section(evaluation, *, progress=None) -> Section:
    """One sky chart per array, of its worst module, with the module's monthly table.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)`` before each chart.
    """
    if not len(evaluation.table):
        return Section("sky", "The sky of the worst module of each array", (
            Paragraph("There are no modules, so there is no sky chart."),), new_page=True)
    project = evaluation.project
    casters = scene_casters(project)
    paths = sun_paths(project.site)
    numbers = {m.id: k + 1 for k, m in enumerate(evaluation.modules)}
    modules = {m.id: m for m in evaluation.modules}
    worst = worst_modules_by_array(evaluation.table)
    blocks = [Paragraph("The chart shows the sky as seen from the centre of the array's module "
                        "with the lowest solar access: the sun's paths on the 21st of each "
                        "month (bold: 21 June, 21 March and September, 21 December) over the "
                        "parts of the sky that each obstruction, roof face or the far horizon "
                        "hides. Where a path crosses a shaded region, the module is shaded at "
                        "that hour of that part of the year.")]
    for k, (face, module_id) in enumerate(worst):
        if progress is not None:
            progress(f"drawing the sky of module {module_id}", k, len(worst))
        module = modules[module_id]
        regions = skyline_regions(module.centre_3d, casters)
        title = f"Array {face}: module {numbers[module_id]} ({module_id})"
        drawing = SkyDrawing(title=title, paths=paths, regions=regions)
        caption = (f"{title}. Azimuth clockwise from north (180 = south), elevation above the "
                   "horizon, in degrees.")
        blocks.append(Beside(Figure("sky", drawing, caption=caption, key=f"sky:{module_id}"),
                             _monthly_table(evaluation, module_id, numbers[module_id])))
    return Section("sky", "The sky of the worst module of each array", tuple(blocks),
                   new_page=True)
