"""From argv to exit status: parse, run the command asked for, and turn errors into one line."""

from __future__ import annotations

import os
import sys
from collections.abc import Sequence

from ..errors import InputError
from ..project import ProjectFileError
from .check import run_check
from .compare import run_compare
from .evaluate import run_evaluate
from .parser import batch_parser, command_parser
from .report import run_report
from .strings import run_strings
from .summary import run_summary

__all__ = ["main", "one_line", "portfolio_main"]


def one_line(err: Exception) -> str:
    """Return the error as one line: the file, the field, what is wrong.

    Parameters
    ----------
    err : Exception
        A :class:`layout.project.ProjectFileError` (its first problem, and how many there are),
        an :class:`OSError` (the file and the reason) or any other error (its message).

    Returns
    -------
    str
    """
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


def portfolio_main(argv: Sequence[str] | None = None) -> int:
    """Run ``python -m layout batch``; return the exit status.

    0 when every project was evaluated, 1 when some failed (their rows say why; the table is
    written all the same), 2 for bad arguments or an unreadable portfolio.
    """
    from .batch import run_batch  # Dask is loaded for this command only

    args = batch_parser().parse_args(argv)
    return run_batch(args.source, args.out, format=args.format,
                     module_tables=args.module_tables,
                     scheduler="serial" if args.serial else args.scheduler,
                     workers=args.workers, chunk_size=args.chunk_size,
                     retry_failed=args.retry_failed, progress=not args.no_progress)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status.

    Bad input (a project file with problems, a missing weather file, a value out of range)
    gives one line on standard error and status 1, never a traceback. Set the environment
    variable ``EAVELINE_DEBUG=1`` to see the traceback of an unexpected error.
    """
    argv = list(sys.argv[1:] if argv is None else argv)
    if argv and argv[0] == "batch":  # many projects on Dask: its own options
        return portfolio_main(argv[1:])
    args = command_parser().parse_args(argv)
    try:
        if args.command == "summary":
            run_summary(args.project, demo=args.demo)
        elif args.command == "check":
            run_check(args.project)
        elif args.command == "evaluate":
            run_evaluate(args.project, demo=args.demo, weather=args.weather,
                         shade_model=args.shade_model, as_json=args.json, csv_dir=args.csv)
        elif args.command == "compare":
            run_compare(args.project, demo=args.demo, weather=args.weather,
                        shade_model=args.shade_model, orientations=args.orientations,
                        keep_worst=args.keep_worst, min_tsrf=args.min_tsrf,
                        min_energy=args.min_energy, max_shade_loss=args.max_shade_loss,
                        as_json=args.json)
        elif args.command == "report":
            run_report(args.project, demo=args.demo, output=args.output, weather=args.weather,
                       shade_model=args.shade_model, paper=args.paper,
                       with_range=args.with_range, with_compare=args.with_compare,
                       metric=args.metric, preparer=args.preparer, licence=args.licence)
        elif args.command == "import-footprint":
            from .footprints import run_import_footprint  # pyproj for this one only

            run_import_footprint(args.footprints, out=args.out, into=args.into, pitch=args.pitch,
                                 eave_height=args.eave_height)
        elif args.command == "from-points":
            from .from_points import run_from_points  # laspy and rasterio for this one only

            run_from_points(args.tile, site=args.site, radius_m=args.radius, out=args.out,
                            crs=args.crs, surface=args.surface, timezone=args.timezone,
                            footprint=args.footprint)
        elif args.command == "strings":
            run_strings(args.project, demo=args.demo, inverter=args.inverter,
                        method=args.method, as_json=args.json, weather=args.weather)
    except ProjectFileError as err:
        # check lists every problem; the other commands give one line
        print(err if args.command == "check" else f"error: {one_line(err)}", file=sys.stderr)
        return 1
    except BrokenPipeError:
        # the reader went away (``| head``): say nothing more on a closed pipe
        # (the Python docs' recipe: point the descriptor at devnull so the exit flush is quiet)
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 1
    except (InputError, OSError) as err:
        print(f"error: {one_line(err)}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    except Exception as err:  # the command line never shows a traceback
        if os.environ.get("EAVELINE_DEBUG"):
            raise
        print(f"error: unexpected {type(err).__name__}: {one_line(err)} (set "
              "EAVELINE_DEBUG=1 for the traceback)", file=sys.stderr)
        return 3
    return 0
