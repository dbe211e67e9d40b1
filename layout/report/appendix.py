"""The appendix: every module's figures, numbered as on the plan."""

from __future__ import annotations

from .blocks import Paragraph, Section, Table, number

__all__ = ["appendix_section"]


def appendix_section(evaluation) -> Section:
    """One row per module: number, id, array, row and column, energy, loss, access, TOF, TSRF."""
    table = evaluation.table
    if not len(table):
        return Section("appendix", "Appendix: every module", (
            Paragraph("There are no modules."),), new_page=True)
    threshold = evaluation.project.energy.tsrf_threshold_pct
    basis = evaluation.totals["energy_basis"]
    rows = tuple(
        (str(k + 1), str(module_id), str(r.face), str(int(r.row)), str(int(r.column)),
         number(r.energy_kwh), number(r.shade_loss_pct), number(r.solar_access_pct),
         number(r.tof_pct), number(r.tsrf_pct) + (" *" if r.tsrf_pct < threshold else ""))
        for k, (module_id, r) in enumerate(zip(table.index, table.itertuples(), strict=True)))
    return Section("appendix", "Appendix: every module", (
        Paragraph(f"Rows count from the eave, columns from the left. * TSRF below the "
                  f"{threshold:g} % threshold.", style="note"),
        Table(("no.", "module", "array", "row", "col.", f"{basis} kWh/yr", "shade loss %",
               "solar access %", "TOF %", "TSRF %"), rows, align="lllrrrrrrr",
              key="modules"),
    ), new_page=True)
