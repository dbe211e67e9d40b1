"""``evaluate``: annual energy, shade loss, solar access, TOF and TSRF of the layout in force.

Printed as a readable summary (totals, faces, modules, months) or, with ``--json``, as one JSON
object (below); ``--csv DIR`` also writes the tables as CSV files.

The JSON report of ``evaluate --json``
---------------------------------------
Outside checks read these keys; they are kept stable (new keys may be added). Numbers are
plain JSON numbers; a figure that is undefined (no modules, no light) is ``null``, never NaN.

``report_version``
    1 (:data:`REPORT_VERSION`).
``project``
    ``{"name": str, "file": str or null}``.
``site``
    The project's site (:meth:`layout.scene.site.Site.to_dict`).
``weather``
    ``{"source": str, "clear_sky": bool, "step_minutes": int, "ghi_kwh_m2": float,
    "caveat": str, "notes": [str]}``; the caveat says what clear sky means for shade loss.
``settings``
    ``{"shade_model": str, "sky_model": str, "iam_model": str or null,
    "energy_basis": "AC" or "DC", "tsrf_threshold_pct": float}``.
``best_orientation``
    The best unshaded plane at the site, for TOF: ``{"surface_tilt", "surface_azimuth",
    "insolation_kwh_m2"}``.
``totals``
    :func:`layout.power.metrics.layout_totals`: ``modules``, ``power_kwp``, ``energy_kwh``,
    ``energy_unshaded_kwh``, ``shade_loss_pct``, ``specific_yield_kwh_per_kwp``,
    ``solar_access_pct`` (mean), ``tsrf_pct`` (mean), ``modules_below_tsrf``,
    ``tsrf_threshold_pct``, ``energy_basis``.
``faces``
    One object per face with modules: ``face`` and the columns of
    :func:`layout.power.metrics.face_table`.
``modules``
    One object per active module, in table order: ``id``, ``face``, ``row``, ``column``,
    ``orientation``, ``surface_tilt``, ``surface_azimuth`` [degrees], ``energy_kwh``,
    ``energy_unshaded_kwh``, ``shade_loss_pct``, ``poa_kwh_m2``, ``poa_unshaded_kwh_m2``,
    ``solar_access_pct``, ``tof_pct``, ``tsrf_pct``, ``below_tsrf_threshold`` (bool).
``monthly``
    Twelve objects: ``month``, ``energy_kwh``, ``energy_unshaded_kwh``, ``shade_loss_pct``.
``cautions``
    Short plain-language cautions (list of str).
"""

from __future__ import annotations

import os
from pathlib import Path

from ..errors import InputError
from ..power.metrics import face_table
from ..study.analysis import Analysis, Evaluation
from ..study.string_options import evaluation_strings, module_string_columns
from .json_output import REPORT_VERSION, plain_json, print_json
from .progress import terminal_progress
from .project_input import load_command_project, with_overrides
from .text import bullets, number, text_table

__all__ = [
    "CSV_FILES",
    "SHADE_MODEL_NOTES",
    "evaluation_cautions",
    "evaluation_report",
    "evaluation_summary",
    "run_evaluate",
    "write_tables",
]

#: File names written by ``evaluate --csv DIR``.
CSV_FILES = ("modules.csv", "faces.csv", "monthly.csv", "month_hour.csv")

SHADE_MODEL_NOTES = {
    "irradiance": "irradiance-only shade model: power follows the shaded irradiance, "
                  "optimistic for hard shadows on part of a module",
    "module": "bypass diodes with module-level electronics: right for micro-inverters or "
              "optimisers; with a string inverter use the string model",
    "string": "bypass diodes with a string inverter: a module's shadow also costs its string",
}


def evaluation_cautions(evaluation: Evaluation) -> list[str]:
    """Return the plain-language cautions of an evaluation: weather, shade model, basis, TSRF."""
    energy = evaluation.project.energy
    lines = [evaluation.weather.caveat,
             f"Shade model: {SHADE_MODEL_NOTES[energy.electrical.shade_model]}."]
    if evaluation.totals["energy_basis"] == "DC":
        lines.append("Energy is DC, before inverter and wiring losses.")
    lines.append(f"TSRF threshold {energy.tsrf_threshold_pct:g} % (incentive programmes "
                 "commonly ask 75-80 %; check the programme's own rule).")
    return lines


def evaluation_report(evaluation: Evaluation, *, source: str | None = None) -> dict:
    """Return the JSON report of ``python -m layout evaluate --json`` (keys in the module doc).

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
    source : str, keyword-only, optional
        The project file, for the report.

    Returns
    -------
    dict
        Plain JSON data; undefined figures are None.
    """
    project = evaluation.project
    energy = project.energy
    weather = evaluation.weather
    table = evaluation.table
    threshold = energy.tsrf_threshold_pct
    modules = []
    for module, (module_id, row) in zip(evaluation.modules, table.iterrows(), strict=True):
        entry = {"id": module_id, "face": row["face"], "row": module.row,
                 "column": module.column}
        entry.update({key: row[key] for key in table.columns if key != "face"})
        entry["below_tsrf_threshold"] = bool(row["tsrf_pct"] < threshold)
        modules.append(entry)
    faces = face_table(table, power_w=project.module.power_w, tsrf_threshold_pct=threshold)
    best = evaluation.best
    report = {
        "report_version": REPORT_VERSION,
        "project": {"name": project.name, "file": source},
        "site": project.site.to_dict(),
        "weather": {"source": weather.source, "clear_sky": weather.is_clear_sky,
                    "step_minutes": weather.step_minutes,
                    "ghi_kwh_m2": weather.annual_kwh_m2("ghi"), "caveat": weather.caveat,
                    "notes": list(weather.notes)},
        "settings": {"shade_model": energy.electrical.shade_model,
                     "sky_model": energy.sky_model, "iam_model": energy.iam_model,
                     "energy_basis": evaluation.totals["energy_basis"],
                     "tsrf_threshold_pct": threshold},
        "best_orientation": {"surface_tilt": best.surface_tilt,
                             "surface_azimuth": best.surface_azimuth,
                             "insolation_kwh_m2": best.insolation_kwh_m2},
        "totals": dict(evaluation.totals),
        "faces": faces.reset_index().to_dict("records"),
        "modules": modules,
        "monthly": evaluation.monthly.reset_index().to_dict("records"),
        "cautions": evaluation_cautions(evaluation),
    }
    return plain_json(report)


def evaluation_summary(evaluation: Evaluation) -> str:
    """Return the plain-text summary that ``python -m layout evaluate`` prints."""
    project = evaluation.project
    energy = project.energy
    totals = evaluation.totals
    basis = totals["energy_basis"]
    threshold = energy.tsrf_threshold_pct
    best = evaluation.best
    out = [
        f"eaveline evaluation: {project.name or '(unnamed)'}",
        f"Weather: {evaluation.weather.source}"
        + (" (overstates the shade loss: see the cautions)" if evaluation.weather.is_clear_sky
           else ""),
        f"Best unshaded plane at the site (for TOF): tilt {best.surface_tilt:.1f}°, azimuth "
        f"{best.surface_azimuth:.1f}°, {best.insolation_kwh_m2:,.0f} kWh/m² a year",
        f"Shade model: {energy.electrical.shade_model}; sky model: {energy.sky_model}; "
        f"energy basis: {basis}",
        "",
        "Totals",
        f"  {totals['modules']} modules, {totals['power_kwp']:.2f} kWp",
        f"  annual energy {number(totals['energy_kwh'], 0, thousands=True)} kWh {basis} "
        f"({number(totals['energy_unshaded_kwh'], 0, thousands=True)} kWh without shade), "
        f"shade loss {number(totals['shade_loss_pct'])} %",
        f"  specific yield {number(totals['specific_yield_kwh_per_kwp'], 0, thousands=True)} "
        "kWh/kWp",
        f"  mean solar access {number(totals['solar_access_pct'])} %, mean TSRF "
        f"{number(totals['tsrf_pct'])} %; {totals['modules_below_tsrf']} modules below the "
        f"{threshold:g} % TSRF threshold",
    ]
    table = evaluation.table
    if len(table):
        faces = face_table(table, power_w=project.module.power_w, tsrf_threshold_pct=threshold)
        out += ["", "Faces"]
        out.append(text_table(
            ("face", "modules", "kWp", "kWh/yr", "kWh/kWp", "shade loss %", "access %",
             "TSRF %", f"< {threshold:g} %"),
            [(face, r.modules, f"{r.power_kwp:.2f}", number(r.energy_kwh, 0, thousands=True),
              number(r.specific_yield_kwh_per_kwp, 0, thousands=True),
              number(r.shade_loss_pct), number(r.solar_access_pct), number(r.tsrf_pct),
              r.modules_below_tsrf) for face, r in zip(faces.index, faces.itertuples(),
                                                        strict=True)]))
        out += ["", f"Modules (* TSRF below {threshold:g} %)"]
        out.append(text_table(
            ("module", "kWh/yr", "shade loss %", "access %", "TOF %", "TSRF %", "flag"),
            [(module_id, number(r.energy_kwh, 0, thousands=True), number(r.shade_loss_pct),
              number(r.solar_access_pct), number(r.tof_pct), number(r.tsrf_pct),
              "*" if r.tsrf_pct < threshold else "") for module_id, r in table.iterrows()],
            "lrrrrrl"))
        out += ["", "Months"]
        months = evaluation.monthly
        out.append(text_table(
            ("month", "kWh", "kWh without shade", "shade loss %"),
            [(month, number(r.energy_kwh, 0, thousands=True),
              number(r.energy_unshaded_kwh, 0, thousands=True), number(r.shade_loss_pct))
             for month, r in months.iterrows()]))
    notes = list(evaluation.weather.notes)
    if notes:
        out += ["", "Weather notes", *bullets(notes)]
    out += ["", "Cautions", *bullets(evaluation_cautions(evaluation))]
    return "\n".join(out)


def write_tables(evaluation: Evaluation, folder) -> list[Path]:
    """Write the per-module, per-face, monthly and month × hour tables as CSV files.

    The module table gains the ``string`` and ``input`` columns of
    :func:`layout.study.string_options.module_string_columns` (empty without strings).

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
    folder : str or os.PathLike
        Created when missing; files :data:`CSV_FILES` are written (replaced) in it.

    Returns
    -------
    list of pathlib.Path
        The files written.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise InputError("--csv", "is a file, not a folder", value=os.fspath(folder))
    folder.mkdir(parents=True, exist_ok=True)
    project = evaluation.project
    faces = face_table(evaluation.table, power_w=project.module.power_w,
                       tsrf_threshold_pct=project.energy.tsrf_threshold_pct)
    strings, inputs = evaluation_strings(evaluation)
    columns = module_string_columns(list(evaluation.table.index), strings, inputs)
    columns.index = evaluation.table.index
    modules = evaluation.table.join(columns)
    frames = (modules, faces, evaluation.monthly, evaluation.month_hour)
    written = []
    for name, frame in zip(CSV_FILES, frames, strict=True):
        path = folder / name
        frame.to_csv(path)
        written.append(path)
    return written


def run_evaluate(project: str | None, *, demo: bool = False, weather: str | None = None,
                 shade_model: str | None = None, as_json: bool = False,
                 csv_dir: str | None = None) -> None:
    """Evaluate a project and print the summary or the JSON report (``evaluate``).

    Parameters
    ----------
    project, demo, weather, shade_model
        The project file or ``--demo``, and ``--weather`` and ``--shade-model`` in place of
        the project's own: :mod:`layout.cli.project_input` applies them.
    as_json : bool, keyword-only, optional
        Print :func:`evaluation_report` instead of :func:`evaluation_summary` (``--json``).
    csv_dir : str, keyword-only, optional
        Also write the tables there (``--csv``); refused before any work when it is a file.
    """
    loaded, folder = load_command_project(project, demo)
    loaded = with_overrides(loaded, weather=weather, shade_model=shade_model)
    if csv_dir and Path(csv_dir).exists() and not Path(csv_dir).is_dir():
        raise InputError("--csv", "is a file, not a folder", value=os.fspath(csv_dir))
    with terminal_progress() as progress:
        evaluation = Analysis(loaded, base_dir=folder, progress=progress).result
    written = write_tables(evaluation, csv_dir) if csv_dir else []
    if as_json:
        source = None if demo else os.fspath(project)
        print_json(evaluation_report(evaluation, source=source))
        return
    print(evaluation_summary(evaluation))
    if written:
        print(f"\nTables written: {', '.join(os.fspath(p) for p in written)}")
