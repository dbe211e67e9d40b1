"""The command line's grammar: the argparse parsers of every command, their options and help."""

from __future__ import annotations

import argparse

from ..fill.faces import FILL_ORIENTATIONS
from ..power.electrical import SHADE_MODELS
from ..power.stringing import STRINGING_METHODS

__all__ = ["batch_parser", "command_parser", "fill_orientations", "footprint_parser",
           "report_parser"]


def fill_orientations(text: str) -> tuple[str, ...]:
    """Parse ``--orientations``: comma-separated names of :data:`FILL_ORIENTATIONS`.

    Parameters
    ----------
    text : str
        As typed, e.g. ``"portrait,landscape"``; blanks around names are ignored.

    Returns
    -------
    tuple of str
        The names in the order given.
    """
    names = tuple(part.strip() for part in text.split(",") if part.strip())
    for name in names:
        if name not in FILL_ORIENTATIONS:
            raise argparse.ArgumentTypeError(
                f"unknown orientation {name!r} (allowed: {', '.join(FILL_ORIENTATIONS)})")
    return names


def command_parser() -> argparse.ArgumentParser:
    """Return the parser of ``python -m layout``: summary, check, evaluate, batch, compare, ...

    ``batch`` is listed for its help line only; its options are :func:`batch_parser`'s.
    """
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
    compare.add_argument("--orientations", type=fill_orientations,
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
    report_parser(commands)
    footprint_parser(commands)
    points = commands.add_parser("from-points", help="start a project from a LiDAR tile "
                                                     "(LAS/LAZ): roof faces, chimneys, trees")
    points.add_argument("tile", help="a .las or .laz point cloud")
    points.add_argument("--site", required=True, type=_site, metavar="LAT,LON",
                        help="the building's latitude and longitude in degrees")
    points.add_argument("--radius", type=float, default=40.0, metavar="M",
                        help="crop radius about the site in metres (default 40)")
    points.add_argument("-o", "--out", required=True, metavar="PROJECT",
                        help="the project file to write (.eaveline.json)")
    points.add_argument("--crs", help="the tile's CRS (e.g. EPSG:32632) when the file has none")
    points.add_argument("--surface", metavar="DSM.tif",
                        help="a GeoTIFF surface model for the far horizon")
    points.add_argument("--timezone", help="IANA time zone of the site (default: looked up "
                                           "offline from --site)")
    points.add_argument("--footprint", metavar="FILE.geojson",
                        help="the building's footprint from a GeoJSON file (default: found "
                             "from the points)")
    strings = commands.add_parser("strings", help="string sizing (NEC 690.7(A)) and the rows, "
                                                  "shade-aware and drawn stringings compared")
    strings.add_argument("project", nargs="?", help="a .eaveline.json project file")
    strings.add_argument("--demo", action="store_true", help="use the bundled demo project")
    source = strings.add_mutually_exclusive_group()
    source.add_argument("--inverter", metavar="FILE",
                        help="a JSON file with the inverter's fields (instead of the "
                             "project's)")
    source.add_argument("--from-project", action="store_true",
                        help="use the project's inverter (the default)")
    strings.add_argument("--method", choices=STRINGING_METHODS, default="shade",
                         help="the stringing printed in full (default shade); all are "
                              "compared")
    strings.add_argument("--weather", metavar="FILE",
                         help="a TMY3 .csv, TMY2 .tm2 or EPW .epw weather file (instead of "
                              "the project's; default clear sky)")
    strings.add_argument("--json", action="store_true", help="print one JSON object")
    return parser


def footprint_parser(commands) -> argparse.ArgumentParser:
    """Add ``import-footprint`` (buildings from GeoJSON) to the subcommands; return its parser."""
    footprint = commands.add_parser("import-footprint",
                                    help="buildings from a GeoJSON footprint file, in a new "
                                         "project or an existing one")
    footprint.add_argument("footprints", help="a GeoJSON file (longitude/latitude, or a "
                                              "projected CRS named in its 'crs' member)")
    footprint.add_argument("-o", "--out", required=True, metavar="PROJECT",
                           help="the project file to write (.eaveline.json)")
    footprint.add_argument("--into", metavar="PROJECT",
                           help="add the buildings to this project (about its site) instead "
                                "of starting one at the footprints' centroid")
    footprint.add_argument("--pitch", default="0",
                           help="roof pitch in degrees or rise in 12, e.g. 4/12 (default 0: "
                                "flat)")
    footprint.add_argument("--eave-height", default="3 m",
                           help="eave height with its unit, e.g. '10 ft' (default 3 m)")
    return footprint


def _site(text: str):
    from .from_points import parse_site

    return parse_site(text)

def report_parser(commands) -> argparse.ArgumentParser:
    """Add ``report`` (the shade report as PDF or HTML) to the subcommands; return its parser."""
    # imported here: the report options are light, the report's writers are loaded on use
    from ..report.options import PAPERS, PLAN_METRICS

    report = commands.add_parser("report", help="write the shade report of a project as PDF "
                                                "or HTML")
    report.add_argument("project", nargs="?", help="a .eaveline.json project file")
    report.add_argument("--demo", action="store_true", help="use the bundled demo project")
    report.add_argument("-o", "--output", required=True, metavar="OUT",
                        help="the report file: OUT.pdf or OUT.html")
    report.add_argument("--weather", metavar="FILE",
                        help="a TMY3 .csv, TMY2 .tm2 or EPW .epw weather file (instead of the "
                             "project's; default clear sky)")
    report.add_argument("--shade-model", choices=SHADE_MODELS,
                        help="bypass-diode shade model (instead of the project's)")
    report.add_argument("--paper", choices=tuple(PAPERS),
                        help="PDF paper (default: letter for imperial projects, else a4)")
    report.add_argument("--with-range", type=int, metavar="N",
                        help="add the 5-95 %% shade loss band over the survey's tolerances, "
                             "from N draws")
    report.add_argument("--with-compare", action="store_true",
                        help="add portrait against landscape")
    report.add_argument("--metric", choices=tuple(PLAN_METRICS), default="shade_loss_pct",
                        help="the figure the plan colours modules by (default shade_loss_pct)")
    report.add_argument("--preparer", default="", help="name of the person preparing it")
    report.add_argument("--licence", default="", help="their licence number")
    return report


def batch_parser() -> argparse.ArgumentParser:
    """Return the parser of ``python -m layout batch`` (a portfolio on Dask)."""
    # imported here: the portfolio module loads Dask, which the other commands do without
    from ..study.portfolio import FORMATS

    parser = argparse.ArgumentParser(
        prog="python -m layout batch",
        description="Evaluate every project of a portfolio and write one summary table.")
    parser.add_argument("source", help="a folder of *.eaveline.json files, or a CSV with a "
                                       "'path' column")
    parser.add_argument("-o", "--out", required=True, help="output folder")
    parser.add_argument("--format", choices=FORMATS, default="parquet",
                        help="table format (default parquet)")
    parser.add_argument("--module-tables", action="store_true",
                        help="also write the per-module tables of all projects")
    where = parser.add_mutually_exclusive_group()
    where.add_argument("--scheduler", metavar="ADDRESS",
                       help="address of a running Dask scheduler (tcp://host:port); default a "
                            "local cluster on 127.0.0.1")
    where.add_argument("--serial", action="store_true",
                       help="evaluate in this process, without Dask")
    parser.add_argument("--workers", type=int, help="worker processes of the local cluster "
                                                    "(default one per core)")
    parser.add_argument("--chunk-size", type=int, help="most projects per task")
    parser.add_argument("--retry-failed", action="store_true",
                        help="evaluate again the projects an earlier run recorded as failed")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar")
    return parser
