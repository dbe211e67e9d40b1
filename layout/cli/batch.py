"""``batch``: evaluate a portfolio of project files, then print what was done and what failed."""

from __future__ import annotations

import sys

from ..errors import InputError
from ..study.portfolio import run_portfolio

__all__ = ["run_batch"]


def run_batch(source, out, *, format: str = "parquet", module_tables: bool = False,
              scheduler: str | None = None, workers: int | None = None,
              chunk_size: int | None = None, retry_failed: bool = False,
              progress: bool = True) -> int:
    """Run :func:`layout.study.portfolio.run_portfolio` and print its outcome; return the status.

    Parameters
    ----------
    source : str or os.PathLike
        A folder of project files, or a CSV file with a ``path`` column.
    out : str or os.PathLike
        The output folder.
    format, module_tables, scheduler, workers, chunk_size, retry_failed, progress
        As :func:`~layout.study.portfolio.run_portfolio` takes them (``scheduler="serial"``
        for ``--serial``).

    Returns
    -------
    int
        0 when every project was evaluated, 1 when some failed (their rows say why; the table is
        written all the same), 2 for bad arguments or an unreadable portfolio (one line on
        standard error).
    """
    try:
        run = run_portfolio(source, out, format=format, module_tables=module_tables,
                            scheduler=scheduler, workers=workers, chunk_size=chunk_size,
                            retry_failed=retry_failed, progress=progress)
    except (InputError, OSError) as err:
        print(f"error: {err}", file=sys.stderr)
        return 2
    total = len(run.computed) + len(run.skipped)
    print(f"{total} projects: {len(run.computed)} evaluated, {len(run.skipped)} already done, "
          f"{len(run.failed)} failed; {run.seconds:.1f} s")
    print(f"summary: {run.summary_path}")
    if run.modules_path:
        print(f"modules: {run.modules_path}")
    if run.failed:
        table = run.table()
        for row in table[table["status"] != "ok"].itertuples():
            first = str(row.error).splitlines()[0]
            print(f"  failed: {row.project}: {first}")
        return 1
    return 0
