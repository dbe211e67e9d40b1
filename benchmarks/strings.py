"""Time the shade-aware stringing against the evaluation it starts from, and print ratios.

Two cases, each evaluated first (hourly clear sky, a typical year) with
:class:`layout.study.analysis.Analysis`, whose time is the reference of this run:

* the bundled demo project (13 modules, its own generic 7.6 kW inverter); target: the
  shade-aware stringing is interactive, at most 300 ms;
* the 500-module roof of ``benchmarks/evaluation.py`` (a 10° shed roof, 50 × 10 portrait
  modules, a tree and a building beside it) on four generic 50 kW inverters (24 tracking
  inputs), design temperatures -20 °C and 35 °C, the 1000 V code limit of a building that is
  not a dwelling; target: at most 10 s.

For each case: the sizing, the row stringing and the shade-aware stringing alone (median of
a few runs), the whole comparison (:func:`layout.study.string_options.compare_stringing`,
which adds the exact energy of each option), the gain of the shade-aware stringing, and each
time as a ratio to the case's own evaluation. Nothing here is asserted.

Run: ``.venv/bin/python benchmarks/strings.py [--skip-big]``.
"""

from __future__ import annotations

import argparse
import statistics
import time

from evaluation import big_project

from layout.power.string_sizing import StringDesign
from layout.power.stringing import string_by_rows, string_by_shade
from layout.project import load_demo_project
from layout.runtime import process_settings
from layout.scene.inverter import generic_inverter_50kw
from layout.study.analysis import Analysis
from layout.study.string_options import compare_stringing, project_sizing


def timed(fn, repeat=3):
    """Median seconds of ``repeat`` calls, and the last result."""
    times, result = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


def run_case(name: str, project, *, target_s: float, repeat: int) -> None:
    start = time.perf_counter()
    evaluation = Analysis(project).result
    reference = time.perf_counter() - start
    sizing = project_sizing(project)
    modules = evaluation.modules
    irr = evaluation.irradiance
    gamma = project.energy.electrical.gamma_pdc
    step = evaluation.weather.step_minutes
    t_rows, _ = timed(lambda: string_by_rows(modules, sizing), repeat)
    t_shade, plan = timed(lambda: string_by_shade(
        modules, sizing, irr.substring_effective, irr.temp_cell, project.module.power_w,
        gamma_pdc=gamma, step_minutes=step), repeat)
    t_all, comparison = timed(lambda: compare_stringing(evaluation), repeat)
    table = comparison.table
    print(f"\n{name}: {len(modules)} modules, {len(plan.strings)} strings of "
          f"{sizing.min_length} to {sizing.max_length}, {plan.inputs_used} inputs")
    print(f"  evaluation (reference)       {reference:8.3f} s   1.00")
    for label, seconds in (("row stringing", t_rows), ("shade-aware stringing", t_shade),
                           ("whole comparison", t_all)):
        print(f"  {label:<28} {seconds:8.3f} s   {seconds / reference:.3f} of the evaluation")
    verdict = "met" if t_shade <= target_s else "missed"
    print(f"  target: shade-aware stringing <= {target_s:g} s: {verdict} "
          f"({t_shade:.3f} s)")
    print(f"  energy: rows {table.loc['rows', 'energy_kwh']:,.0f} kWh, shade-aware "
          f"{table.loc['shade', 'energy_kwh']:,.0f} kWh, gain "
          f"{comparison.shade_gain_kwh:,.1f} kWh ({comparison.shade_gain_pct:.2f} %)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--skip-big", action="store_true", help="the demo only")
    args = parser.parse_args()
    process_settings()
    run_case("demo project", load_demo_project(), target_s=0.3, repeat=5)
    if not args.skip_big:
        big = big_project().with_changes(
            inverter=generic_inverter_50kw(count=4),
            strings=StringDesign(record_low_c=-20.0, design_high_c=35.0,
                                 code_max_voltage_v=1000.0))
        run_case("500-module roof", big, target_s=10.0, repeat=1)


if __name__ == "__main__":
    main()
