"""Command line: ``python -m layout COMMAND`` (installed: ``eaveline COMMAND``).

Commands
--------
summary [PROJECT | --demo]
    Print the project's roofs, rules, the portrait/landscape comparison and the layout in force.
check PROJECT
    Check a project file and list every problem with its path; exit status 1 if any.
evaluate [PROJECT | --demo] [--json] [--weather FILE] [--csv DIR] [--shade-model MODEL]
    Annual energy, shade loss, solar access, TOF and TSRF of the layout in force: a readable
    summary (totals, faces, modules, months), or with ``--json`` one JSON object (its keys
    are listed in :mod:`layout.cli.evaluate`).
    ``--weather`` uses a TMY3/TMY2/EPW file instead of the project's ``energy.weather_file``
    (a relative path is taken from the working directory); ``--csv DIR`` also writes
    ``modules.csv``, ``faces.csv``, ``monthly.csv`` and ``month_hour.csv`` into DIR.
compare [PROJECT | --demo] [--orientations O,O] [--min-tsrf PCT] [--min-energy KWH]
        [--max-shade-loss PCT] [--keep-worst] [--json] [--weather FILE] [--shade-model MODEL]
    Portrait, landscape and mixed fills side by side, each also without its worst modules
    (TSRF below the project's threshold unless limits are given): :mod:`layout.study.compare`.
strings [PROJECT | --demo] [--inverter FILE | --from-project]
        [--method rows|shade|project] [--json] [--weather FILE]
    String sizing by NEC 690.7(A) from the project's design temperatures, module and inverter;
    the row, shade-aware and drawn stringings side by side with their annual energy
    (:mod:`layout.study.string_options`), and the chosen one's strings and inputs.
batch SOURCE -o OUT [--format parquet|csv] [--module-tables] [--scheduler ADDRESS | --serial]
    Evaluate every project of a folder (or listed in a CSV) on Dask, one row per project, with
    failures in their rows; a rerun skips what is already written (:mod:`layout.study.portfolio`;
    ``python -m layout batch --help`` lists the options).
report [PROJECT | --demo] -o OUT.pdf|OUT.html [--paper a4|letter] [--with-range N]
       [--with-compare] [--metric FIGURE] [--preparer NAME] [--licence NO] [--weather FILE]
    The shade report (:mod:`layout.report`): the file is written whole or not at all, and
    its path printed; the output path is checked before any work.

Exit status 0 on success, 1 for bad input (one line on standard error: the file, the field and
the allowed range), 2 for a misused command line. Progress goes to standard error when it is
a terminal.

Modules
-------
:mod:`.parser` holds every command's options and help; :mod:`.dispatch` turns argv into a call
of the command's function and errors into exit statuses; one module per command does the work
and the printing from plain values (:mod:`.summary`, :mod:`.check`, :mod:`.evaluate`, with the
keys of the JSON report, :mod:`.compare`, :mod:`.strings`, :mod:`.batch`, :mod:`.report`,
:mod:`.footprints`, :mod:`.from_points`). Nothing else in ``layout`` imports this package.
"""

from .compare import comparison_report, comparison_summary
from .dispatch import main, portfolio_main
from .evaluate import CSV_FILES, evaluation_report, evaluation_summary, write_tables
from .json_output import REPORT_VERSION
from .summary import project_summary

__all__ = [
    "CSV_FILES",
    "REPORT_VERSION",
    "comparison_report",
    "comparison_summary",
    "evaluation_report",
    "evaluation_summary",
    "main",
    "portfolio_main",
    "project_summary",
    "write_tables",
]
