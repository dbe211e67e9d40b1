"""Portfolio batch: serial against the Dask local cluster, and how time grows with the count.

    .venv/bin/python benchmarks/portfolio.py               # 200 projects, then 50 and 200
    .venv/bin/python benchmarks/portfolio.py --with-800    # also 800 (several minutes)
    .venv/bin/python benchmarks/portfolio.py --growth-only --with-800   # 50, 200, 800 only

Invented projects (``layout.study.synthetic_portfolio``, seed 0, about one site per ten
projects, hourly clear sky, default module and rules). Every run writes into a fresh folder, so
nothing is skipped. The Dask timings include starting and stopping the local cluster (one
single-threaded worker process per core, 127.0.0.1 only). On a shared machine the load average
is printed beside each timing: other processes take cores away from both runs.
"""

from __future__ import annotations

import argparse
import os
import resource
import tempfile
import time
from pathlib import Path

from layout.runtime import HUGEPAGE_VARIABLE, hugepage_advice, process_settings
from layout.study.portfolio import run_portfolio
from layout.study.synthetic_portfolio import write_synthetic_portfolio


def _cpu_seconds() -> float:
    usage = resource.getrusage(resource.RUSAGE_SELF)
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime + children.ru_utime + children.ru_stime


def _time(source, out, scheduler, workers=None) -> tuple[float, float, int]:
    cpu = _cpu_seconds()
    start = time.perf_counter()
    run = run_portfolio(source, out, scheduler=scheduler, workers=workers, progress=False)
    wall = time.perf_counter() - start
    assert not run.failed, run.failed
    return wall, _cpu_seconds() - cpu, len(run.computed)


def _compare(tmp: Path, count: int, workers, cores) -> None:
    """Time the same portfolio serially and on the Dask local cluster; print the speed-up."""
    started = time.perf_counter()
    write_synthetic_portfolio(tmp / "p200", count, seed=0)
    print(f"wrote {count} synthetic projects in {time.perf_counter() - started:.1f} s")
    serial, cpu, n = _time(tmp / "p200", tmp / "serial", "serial")
    print(f"serial     : {serial:7.1f} s  {serial / n:6.3f} s/project  "
          f"(this process's CPU {cpu:.1f} s; load {os.getloadavg()[0]:.2f})")
    dask, dask_cpu, n = _time(tmp / "p200", tmp / "dask", None, workers)
    print(f"dask local : {dask:7.1f} s  {dask / n:6.3f} s/project  "
          f"(CPU of client and workers {dask_cpu:.1f} s; load {os.getloadavg()[0]:.2f})")
    print(f"speed-up   : {serial / dask:.2f}x on {workers or cores} workers")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=200, help="projects of the serial/Dask "
                                                               "comparison (default 200)")
    parser.add_argument("--with-800", action="store_true", help="add 800 to the growth series")
    parser.add_argument("--growth-only", action="store_true",
                        help="skip the serial/Dask comparison; only the growth series")
    parser.add_argument("--workers", type=int, default=None,
                        help="worker processes (default one per core)")
    args = parser.parse_args()
    process_settings()  # as python -m layout batch runs, workers included (layout/runtime.py)
    print(f"numpy huge-page advice: {'on' if hugepage_advice() else 'off'} "
          f"({HUGEPAGE_VARIABLE}={os.environ.get(HUGEPAGE_VARIABLE)})")
    cores = os.cpu_count()
    print(f"cores: {cores}; workers: {args.workers or cores}; load average at start: "
          f"{os.getloadavg()[0]:.2f}")
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        if not args.growth_only:
            _compare(tmp, args.count, args.workers, cores)

        counts = [50, 200] + ([800] if args.with_800 else [])
        print("\ngrowth on the Dask local cluster (each count a fresh portfolio, seed 1):")
        print("  projects   sites   wall [s]   s/project")
        for count in counts:
            folder = tmp / f"g{count}"
            write_synthetic_portfolio(folder, count, seed=1)
            wall, _, n = _time(folder, tmp / f"g{count}-out", None, args.workers)
            sites = max(1, round(count / 10))
            print(f"  {n:8d}  {sites:6d}  {wall:9.1f}  {wall / n:10.3f}   "
                  f"(load {os.getloadavg()[0]:.2f})")


if __name__ == "__main__":
    main()
