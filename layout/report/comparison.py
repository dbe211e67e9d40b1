"""Portrait against landscape: the table of :func:`layout.study.compare.compare_layouts`."""

from __future__ import annotations

from .blocks import Paragraph, Section, Table, number

__all__ = ["comparison_section"]

_LIMITS = {"min_tsrf_pct": "TSRF below {:g} %", "min_energy_kwh": "energy below {:g} kWh/yr",
           "max_shade_loss_pct": "shade loss above {:g} %"}


def comparison_section(comparison) -> Section:
    """Return the layouts side by side, each also without its worst modules.

    Parameters
    ----------
    comparison : layout.study.compare.Comparison
    """
    table = comparison.table
    basis = table.attrs.get("energy_basis", "DC")
    threshold = table.attrs.get("tsrf_threshold_pct")
    rows = tuple((str(name), str(int(r.modules)), str(int(r.dropped)), number(r.power_kwp, 2),
                  number(r.energy_kwh, 0, thousands=True),
                  number(r.specific_yield_kwh_per_kwp, 0, thousands=True),
                  number(r.shade_loss_pct), number(r.tsrf_mean_pct), str(int(r.modules_below_tsrf)))
                 for name, r in zip(table.index, table.itertuples(), strict=True))
    limits = " or ".join(_LIMITS[k].format(v) for k, v in comparison.limits.items()
                         if v is not None)
    below = f"< {threshold:g} % TSRF" if threshold is not None else "below TSRF"
    return Section("comparison", "Portrait against landscape", (
        Paragraph(f"Each orientation refills the roof under the same rules; \"without the "
                  f"worst\" drops the modules with {limits} and evaluates again."),
        Table(("option", "modules", "dropped", "kWp", f"kWh/yr {basis}", "kWh/kWp",
               "shade loss %", "TSRF % (mean)", below), rows, key="comparison"),
        Paragraph(comparison.caveat, style="note"),
    ), new_page=True)
