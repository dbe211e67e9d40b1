"""Many roofs at once: evaluate a portfolio of project files, on one machine or on a Dask cluster.

A portfolio is a folder of project files (``*.eaveline.json``, searched recursively) or a CSV
file with a ``path`` column. :func:`run_portfolio` evaluates every project with
:class:`layout.study.analysis.Analysis` and writes one summary table, a row per project, and on
request the per-module tables of all projects, as Parquet or CSV.

How the work is split
---------------------
The weather and the sun path of a site (clear sky or a weather file) and the best unshaded
plane at the site take about a second; the rest of a small roof takes a few tenths. Projects are
therefore grouped by what decides their weather (site, weather file, time step), each group is
cut into chunks, and a chunk is one task. A worker keeps one
:class:`~layout.study.analysis.Analysis` per weather group it has seen and brings it to each next
project of the group with :meth:`~layout.study.analysis.Analysis.update`, which reuses the weather
and recomputes the rest; so a site's weather is computed at most once per worker, not once per
project.

Failures and restarts
---------------------
- A project that cannot be read or evaluated gets ``status = "error"`` and the message in its
  row; the batch goes on. After an error the worker drops that group's Analysis, so no state
  from a failed update is reused.
- Each project's result is written as soon as it is computed, to ``OUT/parts/``, atomically (a
  temporary file renamed over the target). A run that is stopped and started again skips every
  project whose part exists and whose file content (SHA-256) is unchanged; rows of projects that
  failed are kept too unless ``retry_failed`` is given.
- On Dask, a worker that dies has its tasks rerun elsewhere (the scheduler's allowed failures),
  and a task that raises is retried ``retries`` times; a rerun task skips the projects its first
  attempt already wrote.

Dask
----
By default :func:`run_portfolio` starts a ``distributed.LocalCluster`` sized to the machine:
one single-threaded worker process per core, scheduler and workers listening on 127.0.0.1
only, no dashboard. Processes rather than threads, because much of an evaluation is Python
code (placement, pvlib's pandas steps, the tables) that holds the GIL, and because a process
that crashes takes only its own tasks down. An existing cluster is used when its scheduler
address is given; its workers must see the portfolio and output folders at the same paths (a
shared file system) and have eaveline installed.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import queue
import re
import sys
import tempfile
import time
import uuid
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError, check_whole
from ..project import FILE_SUFFIX, load_project
from ..runtime import THREADS_VARIABLE

try:  # the cache below is a Dask worker plugin when Dask is there; serial runs need no Dask
    from distributed import WorkerPlugin as _PluginBase
except ImportError:  # pragma: no cover - distributed is a dependency
    _PluginBase = object

__all__ = [
    "FORMATS",
    "SUMMARY_COLUMNS",
    "PortfolioEntry",
    "PortfolioRun",
    "find_projects",
    "run_portfolio",
]

FORMATS = ("parquet", "csv")

#: Columns of the summary table, in order.
SUMMARY_COLUMNS = (
    "project", "name", "latitude", "longitude", "modules", "power_kwp", "energy_kwh",
    "specific_yield_kwh_per_kwp", "shade_loss_pct", "modules_below_tsrf", "tsrf_threshold_pct",
    "solar_access_pct", "tsrf_pct", "energy_basis", "status", "error", "seconds",
)

_PARTS = "parts"
_ANALYSES_PLUGIN = "eaveline-analyses"
_ANALYSES_KEPT = 4  # Analysis objects a worker keeps (each holds one project's arrays)


# --------------------------------------------------------------------------- the portfolio
@dataclass(frozen=True)
class PortfolioEntry:
    """One project of a portfolio, as found on disk. Built by :func:`find_projects`.

    Parameters
    ----------
    project : str
        Identifier of the project in the tables: its path relative to the portfolio folder
        (or as listed in the CSV), with ``/`` separators.
    path : str
        Absolute path of the project file.
    """

    project: str
    path: str

    def to_dict(self) -> dict:
        """Plain-data form."""
        return {"project": self.project, "path": self.path}

    @classmethod
    def from_dict(cls, data: dict) -> PortfolioEntry:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        if not isinstance(data, dict):
            raise InputError("portfolio entry", "must be a mapping", value=type(data).__name__)
        for key in ("project", "path"):
            if not isinstance(data.get(key), str) or not data[key]:
                raise InputError(key, "must be non-empty text", value=data.get(key))
        unknown = set(data) - {"project", "path"}
        if unknown:
            raise InputError(sorted(unknown)[0], "unknown field", allowed="project, path")
        return cls(project=data["project"], path=data["path"])

    @property
    def part_name(self) -> str:
        """File-name stem of this project's results in ``OUT/parts/`` (unique per path)."""
        digest = hashlib.sha1(self.path.encode("utf-8")).hexdigest()[:12]
        stem = re.sub(r"[^A-Za-z0-9._-]+", "_", Path(self.project).name)[:60]
        return f"{stem}.{digest}"


def find_projects(source) -> tuple[PortfolioEntry, ...]:
    """List the projects of a portfolio.

    Parameters
    ----------
    source : str or os.PathLike or sequence of paths
        A folder (every ``*.eaveline.json`` below it, recursively, in sorted order), a ``.csv``
        file whose ``path`` column names the project files (relative paths are relative to the
        CSV's folder), or a sequence of project file paths.

    Returns
    -------
    tuple of PortfolioEntry
    """
    if isinstance(source, (list, tuple)):
        paths = [Path(p) for p in source]
        return _entries([(str(p), p) for p in paths])
    root = Path(source)
    if root.is_dir():
        files = sorted(root.rglob(f"*{FILE_SUFFIX}"))
        return _entries([(p.relative_to(root).as_posix(), p) for p in files])
    if root.suffix.lower() == ".csv" and root.is_file():
        listing = pd.read_csv(root, dtype=str, keep_default_na=False)
        if "path" not in listing.columns:
            raise InputError("path", "the portfolio CSV has no 'path' column",
                             value=list(listing.columns), allowed="a column named 'path'")
        rows = []
        for number, text in enumerate(listing["path"], start=2):
            if not text.strip():
                raise InputError(f"path (line {number})", "is empty",
                                 allowed="a project file path")
            path = Path(text.strip()).expanduser()
            rows.append((text.strip(), path if path.is_absolute() else root.parent / path))
        return _entries(rows)
    raise InputError("source", "is neither a folder nor a CSV file", value=os.fspath(source),
                     allowed="a folder of *.eaveline.json files or a .csv with a 'path' column")


def _entries(rows) -> tuple[PortfolioEntry, ...]:
    entries, seen = [], set()
    for project, path in rows:
        absolute = os.path.abspath(path)
        if absolute in seen:
            continue
        seen.add(absolute)
        entries.append(PortfolioEntry(project=project, path=absolute))
    return tuple(entries)


def _file_sha(path: str) -> str | None:
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


def _weather_group(path: str) -> str:
    """Return what decides a project's weather, read cheaply from the raw JSON (unchecked).

    Projects with the same key share one weather computation. A file that cannot be read gets
    its own key; the worker that evaluates it reports the real error.
    """
    try:
        data = json.loads(Path(path).read_text(encoding="utf-8"))
        site = data["site"]
        energy = data.get("energy") or {}
        weather_file = energy.get("weather_file")
        folder = os.path.dirname(path) if weather_file else None
        key = [site, weather_file, folder, energy.get("step_minutes", 60)]
        return json.dumps(key, sort_keys=True)
    except Exception:  # anything unreadable is reported by the worker that loads it
        return "unreadable:" + path


# --------------------------------------------------------------------------- one project
def _nan_to_none(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _error_row(entry: PortfolioEntry, message: str, seconds: float = 0.0) -> dict:
    row = dict.fromkeys(SUMMARY_COLUMNS)
    row.update(project=entry.project, status="error", error=message, seconds=seconds)
    return row


def _ok_row(entry: PortfolioEntry, project, totals: dict, seconds: float) -> dict:
    row = dict.fromkeys(SUMMARY_COLUMNS)
    row.update(project=entry.project, name=project.name, latitude=project.site.latitude,
               longitude=project.site.longitude, status="ok", error=None, seconds=seconds)
    for key in ("modules", "power_kwp", "energy_kwh", "specific_yield_kwh_per_kwp",
                "shade_loss_pct", "modules_below_tsrf", "tsrf_threshold_pct",
                "solar_access_pct", "tsrf_pct", "energy_basis"):
        value = totals[key]
        row[key] = _nan_to_none(value.item() if isinstance(value, np.generic) else value)
    return row


def _describe(err: BaseException) -> str:
    return f"{type(err).__name__}: {err}"


def _atomic_write(target: Path, write: Callable[[Path], None]) -> None:
    """Write through ``write(temp_path)`` into a temporary file, then rename it over ``target``."""
    handle, temp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    os.close(handle)
    try:
        write(Path(temp))
        os.replace(temp, target)
    except BaseException:
        Path(temp).unlink(missing_ok=True)
        raise


def _write_table(table: pd.DataFrame, path: Path, fmt: str) -> None:
    if fmt == "parquet":
        table.to_parquet(path, index=False)
    else:
        table.to_csv(path, index=False)


def _read_table(path: Path, fmt: str) -> pd.DataFrame:
    return pd.read_parquet(path) if fmt == "parquet" else pd.read_csv(path)


def _read_part(parts: Path, entry: PortfolioEntry) -> dict | None:
    try:
        return json.loads((parts / f"{entry.part_name}.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _part_is_current(part: dict | None, sha: str | None, *, retry_failed: bool,
                     module_tables: bool, parts: Path, entry: PortfolioEntry, fmt: str) -> bool:
    if part is None or sha is None or part.get("sha256") != sha:
        return False
    if part["row"]["status"] != "ok":
        return not retry_failed
    if module_tables:
        return (parts / f"{entry.part_name}.modules.{fmt}").is_file()
    return True


class _Analyses(_PluginBase):
    """The Analysis objects of one worker, one per weather group, least recently used dropped."""

    name = _ANALYSES_PLUGIN

    def __init__(self, keep: int = _ANALYSES_KEPT):
        self.keep = keep
        self.held: OrderedDict = OrderedDict()

    def setup(self, worker):
        """Start empty on a worker (a ``distributed.WorkerPlugin`` hook)."""
        self.held = OrderedDict()

    def teardown(self, worker):
        """Drop everything held."""
        self.held.clear()

    def evaluate(self, group: str, project, base_dir: str):
        """Evaluate ``project`` with the Analysis of its weather group (made on first use)."""
        from .analysis import Analysis

        # Analysis.update does not notice a change of sky_directions alone (the sky-view
        # stage is keyed on the casters only), so projects that differ in it never share one.
        key = (group, project.energy.sky_directions)
        analysis = self.held.pop(key, None)
        if analysis is None:
            analysis = Analysis(project, base_dir=base_dir)
        else:
            analysis.update(project)  # an error leaves the analysis out of the cache
        self.held[key] = analysis
        while len(self.held) > self.keep:
            self.held.popitem(last=False)
        return analysis.result


def _worker_analyses() -> _Analyses:
    """Return the worker plugin's cache on a Dask worker, a fresh one elsewhere."""
    try:
        from distributed import get_worker

        plugin = get_worker().plugins.get(_ANALYSES_PLUGIN)
    except (ImportError, ValueError):
        plugin = None
    return plugin if plugin is not None else _Analyses()


def _run_chunk(chunk, out_dir: str, fmt: str, module_tables: bool, topic: str | None,
               analyses: _Analyses | None = None,
               report: Callable[[dict], None] | None = None) -> list[dict]:
    """Evaluate one chunk of projects of one weather group; write each result as it finishes.

    ``chunk`` is a list of ``(entry_dict, group)``. Returns the summary rows.
    """
    parts = Path(out_dir) / _PARTS
    analyses = analyses if analyses is not None else _worker_analyses()
    if report is None and topic is not None:
        from distributed import get_worker

        worker = get_worker()

        def report(row):
            worker.log_event(topic, {"project": row["project"], "status": row["status"]})
    rows = []
    for data, group in chunk:
        entry = PortfolioEntry.from_dict(data)
        sha = _file_sha(entry.path)
        done = _read_part(parts, entry)
        if _part_is_current(done, sha, retry_failed=False, module_tables=module_tables,
                            parts=parts, entry=entry, fmt=fmt):
            rows.append(done["row"])  # written by an earlier attempt of this task
            if report is not None:
                report(done["row"])
            continue
        started = time.perf_counter()
        table = None
        try:
            project = load_project(entry.path)
            result = analyses.evaluate(group, project, os.path.dirname(entry.path))
            row = _ok_row(entry, project, result.totals, time.perf_counter() - started)
            table = result.table
        except Exception as err:  # a per-project failure goes into its row
            row = _error_row(entry, _describe(err), time.perf_counter() - started)
        if module_tables and table is not None:
            modules = table.reset_index()
            modules.insert(0, "project", entry.project)
            _atomic_write(parts / f"{entry.part_name}.modules.{fmt}",
                          lambda p, t=modules: _write_table(t, p, fmt))
        text = json.dumps({"sha256": sha, "row": row})
        _atomic_write(parts / f"{entry.part_name}.json",
                      lambda p, s=text: p.write_text(s, encoding="utf-8"))
        rows.append(row)
        if report is not None:
            report(row)
    return rows


# --------------------------------------------------------------------------- the batch
@dataclass(frozen=True)
class PortfolioRun:
    """What one :func:`run_portfolio` call did and wrote.

    Parameters
    ----------
    summary_path : str
        The summary table, a row per project (:data:`SUMMARY_COLUMNS`).
    modules_path : str or None
        The per-module tables of all projects with a ``project`` column, or None when not
        asked for.
    format : {"parquet", "csv"}
    computed : tuple of str
        Projects evaluated by this run.
    skipped : tuple of str
        Projects whose results an earlier run had written.
    failed : tuple of str
        Projects whose row has ``status = "error"`` (this run's or an earlier one's).
    seconds : float
        Wall time of the run [s].
    """

    summary_path: str
    modules_path: str | None
    format: str
    computed: tuple[str, ...]
    skipped: tuple[str, ...]
    failed: tuple[str, ...]
    seconds: float

    def table(self) -> pd.DataFrame:
        """Read the summary table back."""
        return _read_table(Path(self.summary_path), self.format)

    def module_table(self) -> pd.DataFrame:
        """Read the per-module table back; raises InputError when it was not written."""
        if self.modules_path is None:
            raise InputError("module_tables", "the run did not write per-module tables")
        return _read_table(Path(self.modules_path), self.format)

    def to_dict(self) -> dict:
        """Plain-data form."""
        return {"summary_path": self.summary_path, "modules_path": self.modules_path,
                "format": self.format, "computed": list(self.computed),
                "skipped": list(self.skipped), "failed": list(self.failed),
                "seconds": self.seconds}

    @classmethod
    def from_dict(cls, data: dict) -> PortfolioRun:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("summary_path", "modules_path", "format", "computed", "skipped", "failed",
                 "seconds")
        for key in known:
            if key not in data:
                raise InputError(key, "is missing")
        if data["format"] not in FORMATS:
            raise InputError("format", "unknown table format", value=data["format"],
                             allowed=", ".join(FORMATS))
        return cls(summary_path=data["summary_path"], modules_path=data["modules_path"],
                   format=data["format"], computed=tuple(data["computed"]),
                   skipped=tuple(data["skipped"]), failed=tuple(data["failed"]),
                   seconds=float(data["seconds"]))


def _default_chunk_size(pending: int, n_workers: int) -> int:
    """About two tasks per worker, at most 64 projects a task.

    Whole weather groups are kept in one task where they fit, so that a site's weather is
    computed once; a larger group is cut, and its pieces cost one weather computation per
    worker that runs one (the worker keeps the group's Analysis between tasks).
    """
    return int(np.clip(math.ceil(pending / (2 * n_workers)), 1, 64))


def _chunks(groups: dict, chunk_size: int) -> list[list]:
    """Cut each weather group into even chunks of at most ``chunk_size``; largest first."""
    chunks = []
    for group, members in groups.items():
        count = math.ceil(len(members) / chunk_size)
        for piece in np.array_split(np.arange(len(members)), count):
            chunks.append([(members[i].to_dict(), group) for i in piece])
    # Largest tasks first: the last tasks to start are short, so workers finish together.
    return sorted(chunks, key=len, reverse=True)


class _Progress:
    """Projects done, failed and remaining, on a tqdm bar (or silently)."""

    def __init__(self, total: int, skipped: int, *, show: bool):
        self.total, self.seen, self.failed = total, set(), 0
        self.done = skipped
        self.bar = None
        if show:
            from tqdm import tqdm

            self.bar = tqdm(total=total, initial=skipped, unit="project", file=sys.stderr,
                            dynamic_ncols=True)
            self._postfix()

    def _postfix(self):
        self.bar.set_postfix(done=self.done - self.failed, failed=self.failed,
                             remaining=self.total - self.done, refresh=False)

    def record(self, project: str, status: str) -> None:
        if project in self.seen:
            return
        self.seen.add(project)
        self.done += 1
        self.failed += status != "ok"
        if self.bar is not None:
            self._postfix()
            self.bar.update(1)

    def close(self):
        if self.bar is not None:
            self.bar.close()


def _local_cluster(workers: int | None):
    """Start a local cluster for portfolio work: 127.0.0.1 only, one thread per process.

    Dask's nanny sets ``MALLOC_TRIM_THRESHOLD_=65536`` in the workers' environment by default,
    which switches off glibc's adaptive mmap threshold: every large numpy temporary of the
    shading and irradiance stages is then mapped and unmapped afresh. Measured here it cost
    about 25× the page faults, 3× the system time and 1.5× the time per project, so it is
    left unset for these workers (and out of the environment while they spawn). The workers
    already fill the cores, one project each, so each computes on one thread
    (``EAVELINE_THREADS=1``, :func:`layout.runtime.parallel_map`) unless the user set it.
    """
    import dask
    from distributed import LocalCluster

    count = workers or os.cpu_count() or 1
    held = os.environ.pop("MALLOC_TRIM_THRESHOLD_", None)
    try:
        threads = os.environ.get(THREADS_VARIABLE, "1")
        with dask.config.set({"distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_":
                              None,
                              f"distributed.nanny.pre-spawn-environ.{THREADS_VARIABLE}":
                              threads}):
            return LocalCluster(n_workers=count, threads_per_worker=1, processes=True,
                                host="127.0.0.1", dashboard_address=None)
    finally:
        if held is not None:
            os.environ["MALLOC_TRIM_THRESHOLD_"] = held


def run_portfolio(source, out_dir, *, format: str = "parquet", module_tables: bool = False,
                  scheduler=None, workers: int | None = None, chunk_size: int | None = None,
                  retries: int = 2, retry_failed: bool = False,
                  progress: bool = True) -> PortfolioRun:
    """Evaluate every project of a portfolio and write the summary table.

    Parameters
    ----------
    source : str or os.PathLike or sequence of paths
        A folder, a CSV with a ``path`` column, or a list of files (:func:`find_projects`).
    out_dir : str or os.PathLike
        Output folder: ``summary.<format>``, ``modules.<format>`` when asked for, and
        ``parts/`` with one result per project (what a restarted run skips).
    format : {"parquet", "csv"}, keyword-only, default "parquet"
    module_tables : bool, keyword-only, default False
        Also write the per-module tables of all projects in one table.
    scheduler : None, "serial", str or distributed.Client, keyword-only
        None starts a local Dask cluster sized to the machine (127.0.0.1 only) and closes it at
        the end; ``"serial"`` evaluates in this process without Dask; a ``tcp://host:port``
        address connects to a running scheduler; a ``Client`` is used as it is.
    workers : int, keyword-only, optional
        Worker processes of the local cluster; default one per core.
    chunk_size : int, keyword-only, optional
        Most projects per task. Default: a quarter of the projects per worker, from 1 to 16;
        a task's projects share one weather group.
    retries : int, keyword-only, default 2
        Times Dask reruns a task that raised (a worker that dies is handled by the
        scheduler's own allowed failures).
    retry_failed : bool, keyword-only, default False
        Evaluate again the projects an earlier run recorded as failed.
    progress : bool, keyword-only, default True
        Show a progress bar on stderr with projects done, failed and remaining.

    Returns
    -------
    PortfolioRun
    """
    if format not in FORMATS:
        raise InputError("format", "unknown table format", value=format,
                         allowed=", ".join(FORMATS))
    for name, count in (("workers", workers), ("chunk_size", chunk_size)):
        if count is not None:
            check_whole(name, count, 1, problem="must be a whole number of at least 1")
    started = time.perf_counter()
    entries = find_projects(source)
    out = Path(out_dir)
    parts = out / _PARTS
    parts.mkdir(parents=True, exist_ok=True)

    rows: dict[str, dict] = {}
    todo: dict[str, list[PortfolioEntry]] = {}
    skipped = []
    for entry in entries:
        part = _read_part(parts, entry)
        if _part_is_current(part, _file_sha(entry.path), retry_failed=retry_failed,
                            module_tables=module_tables, parts=parts, entry=entry, fmt=format):
            rows[entry.project] = part["row"]
            skipped.append(entry.project)
        else:
            todo.setdefault(_weather_group(entry.path), []).append(entry)
    pending = sum(len(v) for v in todo.values())
    bar = _Progress(len(entries), len(skipped), show=progress)
    for project in skipped:
        bar.seen.add(project)
        bar.failed += rows[project]["status"] != "ok"
    try:
        if pending:
            if scheduler == "serial":
                size = chunk_size or pending
                analyses = _Analyses()
                for chunk in _chunks(todo, size):
                    for row in _run_chunk(chunk, os.fspath(out), format, module_tables, None,
                                          analyses=analyses,
                                          report=lambda r: bar.record(r["project"],
                                                                      r["status"])):
                        rows[row["project"]] = row
            else:
                rows.update(_run_on_dask(todo, out, format, module_tables, scheduler, workers,
                                         chunk_size, retries, bar))
    finally:
        bar.close()

    ordered = [rows[e.project] for e in entries if e.project in rows]
    summary = pd.DataFrame(ordered, columns=list(SUMMARY_COLUMNS))
    summary_path = out / f"summary.{format}"
    _atomic_write(summary_path, lambda p: _write_table(summary, p, format))
    modules_path = None
    if module_tables:
        tables = []
        for entry in entries:
            path = parts / f"{entry.part_name}.modules.{format}"
            if rows.get(entry.project, {}).get("status") == "ok" and path.is_file():
                tables.append(_read_table(path, format))
        combined = pd.concat(tables, ignore_index=True) if tables else pd.DataFrame(
            {"project": pd.Series(dtype=str)})
        modules_path = out / f"modules.{format}"
        _atomic_write(modules_path, lambda p: _write_table(combined, p, format))
    skipped_set = set(skipped)
    return PortfolioRun(
        summary_path=os.fspath(summary_path),
        modules_path=None if modules_path is None else os.fspath(modules_path),
        format=format,
        computed=tuple(e.project for e in entries
                       if e.project in rows and e.project not in skipped_set),
        skipped=tuple(skipped),
        failed=tuple(r["project"] for r in ordered if r["status"] != "ok"),
        seconds=time.perf_counter() - started)


def _run_on_dask(todo, out: Path, fmt: str, module_tables: bool, scheduler, workers,
                 chunk_size, retries: int, bar: _Progress) -> dict[str, dict]:
    from distributed import Client, wait

    cluster = None
    if scheduler is None:
        cluster = _local_cluster(workers)
        client = Client(cluster)
    elif isinstance(scheduler, str):
        client = Client(scheduler)
    else:
        client = scheduler
    owned = client is not scheduler
    topic = f"eaveline-portfolio-{uuid.uuid4().hex}"
    events: queue.Queue = queue.Queue()
    rows: dict[str, dict] = {}
    try:
        client.register_plugin(_Analyses(), name=_ANALYSES_PLUGIN)
        client.subscribe_topic(topic, lambda event: events.put(event[1]))
        n_workers = max(1, len(client.nthreads()))
        pending = sum(len(v) for v in todo.values())
        size = chunk_size or _default_chunk_size(pending, n_workers)
        chunks = _chunks(todo, size)
        futures = {client.submit(_run_chunk, chunk, os.fspath(out), fmt, module_tables, topic,
                                 retries=retries, pure=False,
                                 key=f"eaveline-chunk-{topic[-8:]}-{n}"): chunk
                   for n, chunk in enumerate(chunks)}
        waiting = set(futures)
        while waiting:
            try:
                finished, waiting = wait(waiting, timeout=0.25, return_when="FIRST_COMPLETED")
            except TimeoutError:
                finished = set()
            while not events.empty():
                event = events.get_nowait()
                bar.record(event["project"], event["status"])
            for future in finished:
                try:
                    chunk_rows = future.result()
                except Exception as err:  # the task is lost for good (KilledWorker, say)
                    chunk_rows = _rows_of_a_lost_task(futures[future], out, err)
                for row in chunk_rows:
                    rows[row["project"]] = row
                    bar.record(row["project"], row["status"])
        client.unsubscribe_topic(topic)
    finally:
        if owned:
            client.close()
        if cluster is not None:
            cluster.close()
    return rows


def _rows_of_a_lost_task(chunk, out: Path, err: BaseException) -> list[dict]:
    """Rows of a task that failed for good: what it wrote before, an error for the rest.

    The error rows are not written as parts, so the next run evaluates those projects again.
    """
    rows = []
    for data, _ in chunk:
        entry = PortfolioEntry.from_dict(data)
        part = _read_part(out / _PARTS, entry)
        if part is not None and part.get("sha256") == _file_sha(entry.path):
            rows.append(part["row"])
        else:
            rows.append(_error_row(entry, f"the batch task failed: {_describe(err)}"))
    return rows
