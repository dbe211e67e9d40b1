"""Command line: ``python -m layout COMMAND``.

Commands
--------
summary [PROJECT | --demo]
    Print the project's roofs, rules, the portrait/landscape comparison and the layout in force.
check PROJECT
    Check a project file and list every problem with its path; exit status 1 if any.
evaluate [PROJECT | --demo] [--json] [--weather FILE] [--csv DIR] [--shade-model MODEL]
    Annual energy, shade loss, solar access, TOF and TSRF of the layout in force: a readable
    summary (totals, faces, modules, months), or with ``--json`` one JSON object (below).
    ``--weather`` uses a TMY3/TMY2/EPW file instead of the project's ``energy.weather_file``
    (a relative path is taken from the working directory); ``--csv DIR`` also writes
    ``modules.csv``, ``faces.csv``, ``monthly.csv`` and ``month_hour.csv`` into DIR.
compare [PROJECT | --demo] [--orientations O,O] [--min-tsrf PCT] [--min-energy KWH]
        [--max-shade-loss PCT] [--keep-worst] [--json] [--weather FILE] [--shade-model MODEL]
    Portrait, landscape and mixed fills side by side, each also without its worst modules
    (TSRF below the project's threshold unless limits are given): :mod:`layout.study.compare`.
batch SOURCE -o OUT [--format parquet|csv] [--module-tables] [--scheduler ADDRESS | --serial]
    Evaluate every project of a folder (or listed in a CSV) on Dask, one row per project, with
    failures in their rows; a rerun skips what is already written (:mod:`layout.study.portfolio`;
    ``python -m layout batch --help`` lists the options).

Exit status 0 on success, 1 for bad input (one line on standard error: the file, the field and
the allowed range), 2 for a misused command line. Progress goes to standard error when it is
a terminal.

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

import argparse
import json
import math
import os
import sys
import textwrap
from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

import numpy as np

from .errors import InputError
from .fill.clearance import CAUTION
from .fill.faces import FILL_ORIENTATIONS
from .fill.placement import compare_orientations
from .power.electrical import SHADE_MODELS
from .power.metrics import face_table
from .project import Project, ProjectFileError, demo_project_path, load_project
from .study.analysis import Analysis, Evaluation
from .study.compare import Comparison, compare_layouts
from .units import format_length

#: Version of the JSON report of ``evaluate --json``; raised only when a key changes meaning.
REPORT_VERSION = 1

#: File names written by ``evaluate --csv DIR``.
CSV_FILES = ("modules.csv", "faces.csv", "monthly.csv", "month_hour.csv")

SHADE_MODEL_NOTES = {
    "irradiance": "irradiance-only shade model: power follows the shaded irradiance, "
                  "optimistic for hard shadows on part of a module",
    "module": "bypass diodes with module-level electronics: right for micro-inverters or "
              "optimisers; with a string inverter use the string model",
    "string": "bypass diodes with a string inverter: a module's shadow also costs its string",
}

SAFETY_LINES = (
    "Setbacks shown are defaults from the code edition named above; the authority having "
    "jurisdiction decides.",
    "Structural review of added load (IRC R324.4, ASCE 7) and PV electrical work (NFPA 70 "
    "Article 690, rapid shutdown 690.12) need licensed people.",
    "Roof work above 6 ft needs fall protection (OSHA 1926.501(b)(13)).",
)


def _table(headers: Sequence[str], rows: Sequence[Sequence], aligns: str = "") -> str:
    cells = [[str(h) for h in headers]] + [[str(c) for c in row] for row in rows]
    widths = [max(len(row[i]) for row in cells) for i in range(len(headers))]
    aligns = aligns or "l" + "r" * (len(headers) - 1)
    lines = []
    for n, row in enumerate(cells):
        parts = [c.ljust(w) if a == "l" else c.rjust(w) for c, w, a in zip(row, widths, aligns,
                                                                            strict=True)]
        lines.append("  " + "  ".join(parts).rstrip())
        if n == 0:
            lines.append("  " + "  ".join("-" * w for w in widths))
    return "\n".join(lines)


def project_summary(project: Project) -> str:
    """Return the plain-text summary that ``python -m layout summary`` prints."""
    units = project.units
    length = (lambda m: format_length(m, units))  # noqa: E731 - a local formatter
    site = project.site
    ns = "N" if site.latitude >= 0 else "S"
    ew = "E" if site.longitude >= 0 else "W"
    out = [
        f"eaveline project: {project.name or '(unnamed)'}",
        f"Site: {site.name or '(unnamed)'}, {abs(site.latitude):.4f}° {ns}, "
        f"{abs(site.longitude):.4f}° {ew}, {site.timezone}, "
        f"{site.altitude_m:.0f} m above sea level",
        f"Module: {project.module.name or 'module'}, {project.module.length_m:.3f} × "
        f"{project.module.width_m:.3f} m, {project.module.power_w:.0f} W, "
        f"efficiency {100 * project.module.efficiency:.1f} %",
        f"Clearance rules: {project.clearance.name} ({project.clearance.source})",
        "",
        "Roof faces",
    ]
    rows = []
    for building in project.buildings:
        for face in building.faces:
            rows.append((
                face.name, f"{face.pitch_deg:.1f}°", f"{face.azimuth_deg:.0f}°",
                length(face.eave_height_m), f"{face.plan_area_m2:.1f}", f"{face.true_area_m2:.1f}",
                " ".join(face.edge_kinds),
            ))
    out.append(_table(("face", "pitch", "azimuth", "eave height", "plan m²", "true m²",
                       "edges in order"), rows, "lrrrrrl"))
    arrays = "every face" if project.array_faces is None else ", ".join(project.array_faces)
    out += ["", f"Portrait against landscape (modules on: {arrays}; same rules)"]
    rows = []
    for building in project.buildings:
        table = compare_orientations(building, project.module, rules=project.clearance,
                                     options=project.fill, obstructions=project.scene_obstructions,
                                     pathway_faces=project.pathways,
                                     latitude=project.site.latitude,
                                     array_faces=project.array_faces_of(building))
        for record in table.itertuples():
            rows.append((building.name or "building", record.option, record.modules,
                         f"{record.power_kwp:.2f}", f"{record.usable_use_pct:.0f} %"))
    out.append(_table(("building", "option", "modules", "kWp", "usable area used"), rows,
                      "llrrr"))
    layout = project.layout()
    by_face: dict[str, int] = {}
    for module in layout.active_modules:
        by_face[module.face] = by_face.get(module.face, 0) + 1
    out += [
        "",
        f"Layout in force ({project.fill.orientation}, {project.fill.rows} rows): "
        f"{layout.count} modules, {layout.kwp(project.module):.2f} kWp"
        + (f", {len(layout.removed)} removed by the user" if layout.removed else ""),
    ]
    out.append(_table(("face", "modules"), sorted(by_face.items())))
    if layout.notes:
        out += ["", "Notes"]
        out += [textwrap.fill(note, 96, initial_indent="  - ", subsequent_indent="    ")
                for note in layout.notes]
    out += ["", "Cautions"]
    out += [textwrap.fill(line, 96, initial_indent="  - ", subsequent_indent="    ")
            for line in (CAUTION, *SAFETY_LINES[1:])]
    return "\n".join(out)


# --------------------------------------------------------------------------- evaluation
def _plain(value):
    """Plain JSON data: numpy scalars to Python, NaN and infinities to None."""
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return float(value) if math.isfinite(value) else None
    return value


def _cautions(evaluation: Evaluation) -> list[str]:
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
        "cautions": _cautions(evaluation),
    }
    return _plain(report)


def _number(value, digits: int = 1, *, thousands: bool = False) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    return f"{value:,.{digits}f}" if thousands else f"{value:.{digits}f}"


def _wrap(lines) -> list[str]:
    return [textwrap.fill(line, 96, initial_indent="  - ", subsequent_indent="    ")
            for line in lines]


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
        f"  annual energy {_number(totals['energy_kwh'], 0, thousands=True)} kWh {basis} "
        f"({_number(totals['energy_unshaded_kwh'], 0, thousands=True)} kWh without shade), "
        f"shade loss {_number(totals['shade_loss_pct'])} %",
        f"  specific yield {_number(totals['specific_yield_kwh_per_kwp'], 0, thousands=True)} "
        "kWh/kWp",
        f"  mean solar access {_number(totals['solar_access_pct'])} %, mean TSRF "
        f"{_number(totals['tsrf_pct'])} %; {totals['modules_below_tsrf']} modules below the "
        f"{threshold:g} % TSRF threshold",
    ]
    table = evaluation.table
    if len(table):
        faces = face_table(table, power_w=project.module.power_w, tsrf_threshold_pct=threshold)
        out += ["", "Faces"]
        out.append(_table(
            ("face", "modules", "kWp", "kWh/yr", "kWh/kWp", "shade loss %", "access %",
             "TSRF %", f"< {threshold:g} %"),
            [(face, r.modules, f"{r.power_kwp:.2f}", _number(r.energy_kwh, 0, thousands=True),
              _number(r.specific_yield_kwh_per_kwp, 0, thousands=True),
              _number(r.shade_loss_pct), _number(r.solar_access_pct), _number(r.tsrf_pct),
              r.modules_below_tsrf) for face, r in zip(faces.index, faces.itertuples(),
                                                        strict=True)]))
        out += ["", f"Modules (* TSRF below {threshold:g} %)"]
        out.append(_table(
            ("module", "kWh/yr", "shade loss %", "access %", "TOF %", "TSRF %", "flag"),
            [(module_id, _number(r.energy_kwh, 0, thousands=True), _number(r.shade_loss_pct),
              _number(r.solar_access_pct), _number(r.tof_pct), _number(r.tsrf_pct),
              "*" if r.tsrf_pct < threshold else "") for module_id, r in table.iterrows()],
            "lrrrrrl"))
        out += ["", "Months"]
        months = evaluation.monthly
        out.append(_table(
            ("month", "kWh", "kWh without shade", "shade loss %"),
            [(month, _number(r.energy_kwh, 0, thousands=True),
              _number(r.energy_unshaded_kwh, 0, thousands=True), _number(r.shade_loss_pct))
             for month, r in months.iterrows()]))
    notes = list(evaluation.weather.notes)
    if notes:
        out += ["", "Weather notes", *_wrap(notes)]
    out += ["", "Cautions", *_wrap(_cautions(evaluation))]
    return "\n".join(out)


def write_tables(evaluation: Evaluation, folder) -> list[Path]:
    """Write the per-module, per-face, monthly and month × hour tables as CSV files.

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
    frames = (evaluation.table, faces, evaluation.monthly, evaluation.month_hour)
    written = []
    for name, frame in zip(CSV_FILES, frames, strict=True):
        path = folder / name
        frame.to_csv(path)
        written.append(path)
    return written


# --------------------------------------------------------------------------- comparison
def comparison_report(comparison: Comparison) -> dict:
    """Return the JSON form of ``python -m layout compare --json``.

    Returns
    -------
    dict
        ``{"weather": {"source", "clear_sky", "caveat"}, "limits": {...}, "options":
        [{"name", "orientation", "dropped": [ids], "totals": {...}}, ...]}``.
    """
    weather = comparison.options[0].evaluation.weather
    return _plain({
        "report_version": REPORT_VERSION,
        "weather": {"source": weather.source, "clear_sky": weather.is_clear_sky,
                    "caveat": weather.caveat},
        "limits": comparison.limits,
        "options": [{"name": o.name, "orientation": o.orientation, "dropped": list(o.dropped),
                     "totals": dict(o.evaluation.totals)} for o in comparison.options],
    })


def comparison_summary(comparison: Comparison) -> str:
    """Return the side-by-side table that ``python -m layout compare`` prints."""
    table = comparison.table
    threshold = table.attrs.get("tsrf_threshold_pct")
    limits = ", ".join(f"{k} {v:g}" for k, v in comparison.limits.items() if v is not None)
    basis = table.attrs.get("energy_basis", "DC")
    rows = [(r.Index, r.modules, r.dropped, f"{r.power_kwp:.2f}",
             _number(r.energy_kwh, 0, thousands=True),
             _number(r.specific_yield_kwh_per_kwp, 0, thousands=True),
             _number(r.shade_loss_pct), _number(r.tsrf_mean_pct), r.modules_below_tsrf)
            for r in table.itertuples()]
    below = f"< {threshold:g} % TSRF" if threshold is not None else "below TSRF"
    out = [
        "Layouts side by side (each orientation refilled; \"without the worst\": "
        f"{limits})",
        _table(("option", "modules", "dropped", "kWp", f"kWh/yr {basis}", "kWh/kWp",
                "shade loss %", "TSRF mean %", below), rows),
        "",
        "Cautions",
        *_wrap([comparison.caveat]),
    ]
    return "\n".join(out)


# --------------------------------------------------------------------------- running
class _Progress:
    """Stage progress on standard error, drawn only when it is a terminal."""

    def __init__(self, stream):
        self.stream = stream
        self.active = False

    def __call__(self, label: str, done: int, total: int) -> None:
        self.stream.write(f"\r\033[K[{done + 1}/{total}] {label}")
        self.stream.flush()
        self.active = True

    def close(self) -> None:
        if self.active:
            self.stream.write("\r\033[K")
            self.stream.flush()
            self.active = False


def _progress():
    stream = sys.stderr
    isatty = getattr(stream, "isatty", None)
    return _Progress(stream) if isatty is not None and isatty() else None


def _one_line(err: Exception) -> str:
    """Return the error as one line: the file, the field, what is wrong."""
    if isinstance(err, ProjectFileError):
        head = f"{err.source}: " if err.source else ""
        path, message = err.problems[0] if err.problems else ("", "unreadable")
        first = f"{path}: {message}" if path else message
        if len(err.problems) == 1:
            return f"{head}{first}"
        return (f"{head}{len(err.problems)} problems in the project document; first: {first} "
                f"(python -m layout check FILE lists them all)")
    if isinstance(err, OSError):
        name = f"{err.filename}: " if err.filename else ""
        return f"{name}{err.strerror or err}"
    return " ".join(str(err).split())


def _load(path: str | None, demo: bool) -> tuple[Project, Path]:
    """Load the project; return it and the folder its relative paths are taken from."""
    if demo == (path is not None):
        raise InputError("project", "give a project file or --demo (one of the two)")
    source = demo_project_path() if demo else Path(path)
    return load_project(source), source.parent


def _with_options(project: Project, args) -> Project:
    energy = project.energy
    if getattr(args, "weather", None):
        energy = replace(energy, weather_file=os.fspath(Path(args.weather).expanduser()
                                                        .resolve()))
    if getattr(args, "shade_model", None):
        energy = replace(energy, electrical=replace(energy.electrical,
                                                    shade_model=args.shade_model))
    return project.with_changes(energy=energy) if energy is not project.energy else project


def _run_evaluate(args) -> None:
    project, folder = _load(args.project, args.demo)
    project = _with_options(project, args)
    if args.csv and Path(args.csv).exists() and not Path(args.csv).is_dir():
        raise InputError("--csv", "is a file, not a folder", value=os.fspath(args.csv))
    progress = _progress()
    try:
        evaluation = Analysis(project, base_dir=folder, progress=progress).result
    finally:
        if progress is not None:
            progress.close()
    written = write_tables(evaluation, args.csv) if args.csv else []
    if args.json:
        source = None if args.demo else os.fspath(args.project)
        print(json.dumps(evaluation_report(evaluation, source=source), indent=1,
                         allow_nan=False, ensure_ascii=False))
        return
    print(evaluation_summary(evaluation))
    if written:
        print(f"\nTables written: {', '.join(os.fspath(p) for p in written)}")


def _orientations(text: str) -> tuple[str, ...]:
    names = tuple(part.strip() for part in text.split(",") if part.strip())
    for name in names:
        if name not in FILL_ORIENTATIONS:
            raise argparse.ArgumentTypeError(
                f"unknown orientation {name!r} (allowed: {', '.join(FILL_ORIENTATIONS)})")
    return names


def _run_compare(args) -> None:
    project, folder = _load(args.project, args.demo)
    project = _with_options(project, args)
    progress = _progress()
    try:
        comparison = compare_layouts(
            project, orientations=args.orientations, without_worst=not args.keep_worst,
            min_tsrf_pct=args.min_tsrf, min_energy_kwh=args.min_energy,
            max_shade_loss_pct=args.max_shade_loss, base_dir=folder, progress=progress)
    finally:
        if progress is not None:
            progress.close()
    if args.json:
        print(json.dumps(comparison_report(comparison), indent=1, allow_nan=False,
                         ensure_ascii=False))
    else:
        print(comparison_summary(comparison))


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="python -m layout",
                                     description="eaveline: rooftop PV layout and shading.")
    commands = parser.add_subparsers(dest="command", required=True)
    summary = commands.add_parser("summary", help="print a project's layout summary")
    summary.add_argument("project", nargs="?", help="a .eaveline.json project file")
    summary.add_argument("--demo", action="store_true", help="use the bundled demo project")
    check = commands.add_parser("check", help="check a project file and list its problems")
    check.add_argument("project", help="a .eaveline.json project file")

    def common(sub):
        sub.add_argument("project", nargs="?", help="a .eaveline.json project file")
        sub.add_argument("--demo", action="store_true", help="use the bundled demo project")
        sub.add_argument("--weather", metavar="FILE",
                         help="a TMY3 .csv, TMY2 .tm2 or EPW .epw weather file (instead of "
                              "the project's; default clear sky)")
        sub.add_argument("--shade-model", choices=SHADE_MODELS,
                         help="bypass-diode shade model (instead of the project's)")
        sub.add_argument("--json", action="store_true", help="print one JSON object")

    evaluate = commands.add_parser("evaluate", help="annual energy and shade loss of the "
                                                    "layout, per module and in total")
    common(evaluate)
    evaluate.add_argument("--csv", metavar="DIR",
                          help="also write the module, face, monthly and month × hour tables "
                               "as CSV files into DIR")
    commands.add_parser("batch", help="evaluate many project files on Dask "
                        "(python -m layout batch --help)", add_help=False)
    compare = commands.add_parser("compare", help="portrait, landscape and mixed side by "
                                                  "side, with and without the worst modules")
    common(compare)
    compare.add_argument("--orientations", type=_orientations,
                         default=("portrait", "landscape", "mixed"), metavar="O,O",
                         help="comma-separated fill orientations (default "
                              "portrait,landscape,mixed)")
    compare.add_argument("--min-tsrf", type=float, metavar="PCT",
                         help="drop modules with TSRF below PCT (default: the project's "
                              "threshold when no limit is given)")
    compare.add_argument("--min-energy", type=float, metavar="KWH",
                         help="drop modules with annual energy below KWH")
    compare.add_argument("--max-shade-loss", type=float, metavar="PCT",
                         help="drop modules with shade loss above PCT")
    compare.add_argument("--keep-worst", action="store_true",
                         help="compare the full fills only")
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status.

    Bad input (a project file with problems, a missing weather file, a value out of range)
    gives one line on standard error and status 1, never a traceback. Set the environment
    variable ``EAVELINE_DEBUG=1`` to see the traceback of an unexpected error.
    """
    argv = list(sys.argv[1:] if argv is None else argv)
    if argv and argv[0] == "batch":  # many projects on Dask: its own options
        from .study.portfolio import portfolio_main

        return portfolio_main(argv[1:])
    args = _parser().parse_args(argv)
    try:
        if args.command == "summary":
            project, _ = _load(args.project, args.demo)
            print(project_summary(project))
        elif args.command == "check":
            project = load_project(args.project)
            print(f"{args.project}: no problems; {sum(len(b.faces) for b in project.buildings)} "
                  f"roof faces, {len(project.obstructions)} obstructions, "
                  f"{len(project.survey)} survey readings")
        elif args.command == "evaluate":
            _run_evaluate(args)
        elif args.command == "compare":
            _run_compare(args)
    except ProjectFileError as err:
        # check lists every problem; the other commands give one line
        print(err if args.command == "check" else f"error: {_one_line(err)}", file=sys.stderr)
        return 1
    except BrokenPipeError:
        # the reader went away (``| head``): say nothing more on a closed pipe
        # (the Python docs' recipe: point the descriptor at devnull so the exit flush is quiet)
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1
    except (InputError, OSError) as err:
        print(f"error: {_one_line(err)}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except Exception as err:  # the command line never shows a traceback
        if os.environ.get("EAVELINE_DEBUG"):
            raise
        print(f"error: unexpected {type(err).__name__}: {_one_line(err)} (set "
              "EAVELINE_DEBUG=1 for the traceback)", file=sys.stderr)
        return 3
    return 0


if __name__ == "__main__":
    from .runtime import quiet_hugepages

    quiet_hugepages()  # this command and its Dask workers (see layout.runtime)
    sys.exit(main())
