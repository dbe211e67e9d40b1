"""Time a full annual evaluation stage by stage, and the electrical models, and print ratios.

Three cases, each a full evaluation (:class:`layout.study.analysis.Analysis`) with hourly clear sky
for a typical year:

* the bundled demo project (13 modules);
* the 40-module reference scene of our own: a 10.2 × 12 m gable house at 40° N with 4 rows
  of 10 portrait modules on its 30° south face, and 10 obstructions around it (6 blocks:
  neighbours, a garage, walls, a shed; 4 trees);
* a 500-module roof (a 10° shed roof, 50 × 10 portrait modules, one tree and one building
  beside it) with the string model, to show that the electrical string model does not dominate
  the evaluation; then the power stage alone under each shade model on the same irradiance.

The stages are those of :attr:`layout.study.analysis.Analysis.timings`, grouped as the issue names
them: sun (weather, sun path and the best-orientation search for TOF), shading (sample points,
ray tests, sky view), irradiance, electrical (power); fill and tables are shown apart. Every
figure is a ratio measured in this run, on this machine; nothing here is asserted.

Run: ``.venv/bin/python benchmarks/evaluation.py [--skip-big]``.
"""

from __future__ import annotations

import argparse
import math
import os
import resource
import statistics
import time
from dataclasses import replace

from layout import Block, Project, Site, Tree, gable_roof, generic_60_cell, no_setbacks
from layout.power.electrical import ElectricalOptions
from layout.power.energy import EnergyOptions, load_weather, sun_steps
from layout.power.metrics import best_orientation
from layout.project import load_demo_project
from layout.runtime import HUGEPAGE_VARIABLE, hugepage_advice, process_settings
from layout.scene.building import shed_roof
from layout.study.analysis import Analysis

SITE = Site(40.0, -105.0, "America/Denver", altitude_m=1600.0, name="benchmark site")

GROUPS = {
    "sun": ("weather",),
    "shading": ("points", "rays", "sky"),
    "irradiance": ("irradiance",),
    "electrical": ("power",),
    "fill and tables": ("fill", "tables"),
}


def reference_project() -> Project:
    """The 40-module reference scene (invented): a gable house with 10 obstructions around."""
    house = gable_roof(10.2, 12.0, 30.0, 5.0, name="")
    ridge = 5.0 + 6.0 * math.tan(math.radians(30.0))
    obstructions = (
        Block([(14.0, -9.0), (24.0, -9.0), (24.0, 3.0), (14.0, 3.0)], 9.0, kind="building",
              name="neighbour east"),
        Block([(-16.0, -4.0), (-6.0, -4.0), (-6.0, 6.0), (-16.0, 6.0)], ridge + 1.0,
              kind="building", name="neighbour west"),
        Block([(2.0, -9.0), (7.0, -9.0), (7.0, -4.0), (2.0, -4.0)], 3.2, kind="building",
              name="garage"),
        Block([(-5.0, -6.0), (18.0, -6.0), (18.0, -5.8), (-5.0, -5.8)], 2.0, kind="wall",
              name="garden wall"),
        Block([(-5.0, -15.0), (-4.8, -15.0), (-4.8, -6.0), (-5.0, -6.0)], 2.0, kind="wall",
              name="side wall"),
        Block([(-9.0, -12.0), (-4.0, -12.0), (-4.0, -9.0), (-6.0, -9.0), (-6.0, -7.0),
               (-9.0, -7.0)], 3.5, kind="building", name="L-shaped shed"),
        Tree.deciduous((8.0, -12.0), 12.0, 3.5, 4.0, name="maple"),
        Tree.deciduous((16.0, -16.0), 14.0, 4.0, 5.0, name="oak"),
        Tree((-6.0, 2.0), 15.0, 2.5, 2.0, crown_shape="cone", name="spruce"),
        Tree((22.0, 10.0), 10.0, 3.0, 3.0, name="elm"),
    )
    return Project(site=SITE, buildings=(house,), module=generic_60_cell(400.0),
                   clearance=no_setbacks(), array_faces=("south",), obstructions=obstructions,
                   name="40-module reference scene")


def big_project() -> Project:
    """500 portrait modules on a 10° shed roof, string model (invented)."""
    slope_m = 10 * 1.65 + 9 * 0.02 + 0.05
    roof = shed_roof(50 * 0.991 + 49 * 0.02 + 0.05, slope_m * math.cos(math.radians(10.0)),
                     10.0, 6.0, name="warehouse")
    obstructions = (
        Tree((-6.0, 8.0), 14.0, 4.0, 4.0, name="tree"),
        Block([(20.0, -8.0), (30.0, -8.0), (30.0, -6.0), (20.0, -6.0)], 9.0, kind="building",
              name="neighbour"),
    )
    return Project(site=SITE, buildings=(roof,), module=generic_60_cell(400.0),
                   clearance=no_setbacks(), obstructions=obstructions,
                   energy=EnergyOptions(electrical=ElectricalOptions(shade_model="string")),
                   name="500-module roof")


def peak_rss_mb() -> float:
    """Peak resident memory of this process so far [MB] (Linux reports kB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def stage_report(project: Project) -> tuple[Analysis, float]:
    """Evaluate from scratch; print seconds and share of each stage group; return the total."""
    started = time.perf_counter()
    analysis = Analysis(project)
    total = time.perf_counter() - started
    timings = analysis.timings
    print(f"\n{project.name}: {len(analysis.result.modules)} modules, "
          f"{len(project.obstructions)} obstructions, "
          f"{int(analysis.result.weather.solar_position['sun_up'].sum())} sun-up hours; "
          f"full evaluation {total:.2f} s")
    for group, stages in GROUPS.items():
        seconds = sum(timings.get(s, 0.0) for s in stages)
        print(f"  {group:<16} {seconds:7.3f} s   {100 * seconds / total:5.1f} % of the total")
    return analysis, total


def sun_split(project: Project) -> None:
    """Split the sun stage: weather and sun path against the best-orientation search."""
    started = time.perf_counter()
    weather = load_weather(project.site, project.energy)
    sun_steps(weather)
    read = time.perf_counter() - started
    started = time.perf_counter()
    best_orientation(weather, model=project.energy.sky_model)
    search = time.perf_counter() - started
    print(f"  of the sun stage: weather and sun path {read:.3f} s, best-orientation search "
          f"{search:.3f} s ({100 * search / (read + search):.0f} %)")


def electrical_models(analysis: Analysis, project: Project, repeat: int = 3) -> dict:
    """Median seconds of the power stage alone under each shade model, same irradiance.

    Each run changes the temperature coefficient by a negligible step, so that the analysis
    recomputes the power stage (and the tables) only.
    """
    seconds = {}
    for model in ("irradiance", "module", "string"):
        runs = []
        for k in range(repeat):
            electrical = ElectricalOptions(shade_model=model, gamma_pdc=-0.0037 - 1e-7 * k)
            analysis.update(project.with_changes(
                energy=replace(project.energy, electrical=electrical)))
            assert analysis.recomputed == ("power", "tables"), analysis.recomputed
            runs.append(analysis.timings["power"])
        seconds[model] = statistics.median(runs)
    return seconds


def main() -> None:
    """Run the cases and print the ratios."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--skip-big", action="store_true", help="skip the 500-module roof")
    args = parser.parse_args()
    process_settings()  # as python -m layout and python -m widgets run (layout/runtime.py)
    print(f"numpy huge-page advice: {'on' if hugepage_advice() else 'off'} "
          f"({HUGEPAGE_VARIABLE}={os.environ.get(HUGEPAGE_VARIABLE)})")

    demo = load_demo_project()
    stage_report(demo)
    sun_split(demo)

    reference = reference_project()
    analysis, total = stage_report(reference)
    models = electrical_models(analysis, reference)
    print("  power stage alone: " + ", ".join(f"{m} {s * 1e3:.1f} ms"
                                              for m, s in models.items()))

    if args.skip_big:
        return
    big = big_project()
    analysis, total = stage_report(big)
    string_s = analysis.timings["power"]
    print(f"  string model's power stage: {string_s:.3f} s = {100 * string_s / total:.1f} % "
          "of the full evaluation (it must not dominate)")
    models = electrical_models(analysis, big)
    print("  power stage alone: " + ", ".join(f"{m} {s:.3f} s" for m, s in models.items()))
    print(f"  ratio string / module model: {models['string'] / models['module']:.2f}; "
          f"string / irradiance-only: {models['string'] / models['irradiance']:.1f}")
    print(f"  peak resident memory of this run: {peak_rss_mb():.0f} MB")


if __name__ == "__main__":
    main()
