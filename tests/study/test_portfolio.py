"""Portfolio batch runs: serial and on a real dask.distributed cluster, failures, restarts.

The reference for every batch figure is the single-project evaluation
(:func:`layout.study.analysis.evaluate` on the loaded file), run fresh for each project.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import threading
import time
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
import shapely

from layout import load_project
from layout.cli import portfolio_main
from layout.errors import InputError
from layout.fill.usable import roof_mounted
from layout.project import project_to_dict
from layout.scene.obstructions import Block, Tree
from layout.study.analysis import evaluate
from layout.study.portfolio import (
    SUMMARY_COLUMNS,
    PortfolioEntry,
    PortfolioRun,
    _Analyses,
    _local_cluster,
    _rows_of_a_lost_task,
    find_projects,
    run_portfolio,
)
from layout.study.synthetic_portfolio import synthetic_portfolio, write_synthetic_portfolio

N_PROJECTS = 4
SMALL = {"n_sites": 2, "size_m": (6.0, 8.5), "sky_directions": 128}
FIGURES = ["modules", "power_kwp", "energy_kwh", "specific_yield_kwh_per_kwp",
           "shade_loss_pct", "modules_below_tsrf", "solar_access_pct", "tsrf_pct"]


@pytest.fixture(scope="module")
def portfolio(tmp_path_factory):
    """Four small synthetic projects on two sites, and their serial batch run."""
    root = tmp_path_factory.mktemp("portfolio")
    paths = write_synthetic_portfolio(root / "in", N_PROJECTS, seed=7, **SMALL)
    run = run_portfolio(root / "in", root / "serial", scheduler="serial", module_tables=True,
                        progress=False)
    return root, paths, run


def _figures(table: pd.DataFrame) -> pd.DataFrame:
    return table.set_index("project")[FIGURES].astype(float)


# --------------------------------------------------------------------------- the generator
def test_synthetic_portfolio_is_seeded_and_varied():
    a = synthetic_portfolio(30, seed=3)
    b = synthetic_portfolio(30, seed=3)
    c = synthetic_portfolio(30, seed=4)
    assert [project_to_dict(p) for p in a] == [project_to_dict(p) for p in b]
    assert [project_to_dict(p) for p in a] != [project_to_dict(p) for p in c]
    latitudes = {p.site.latitude for p in a}
    assert len(latitudes) == 3  # about one site per ten projects
    assert min(latitudes) >= -50 and max(latitudes) <= 60
    face_counts = {len(p.buildings[0].faces) for p in a}
    assert face_counts == {2, 4}  # gable roofs and hip roofs both occur
    chimneys = [ob for p in a for ob in p.obstructions if isinstance(ob, Block)]
    trees = [ob for p in a for ob in p.obstructions if isinstance(ob, Tree)]
    assert chimneys and trees
    for project in a:
        for ob in project.obstructions:
            if isinstance(ob, Block):
                # closed-form check: the chimney's centre stands on a face, its top above the
                # roof plane there
                centre = np.mean(np.asarray(ob.footprint), axis=0)
                face = next(f for f in project.faces if roof_mounted(f, ob))
                assert ob.top > float(face.height_at(centre[None, :])[0]) + 0.5
            else:
                outline = project.buildings[0].footprint
                assert outline.distance(shapely.Point(ob.center)) > 1.0


def test_synthetic_portfolio_rejects_bad_counts():
    with pytest.raises(InputError, match="n_projects"):
        synthetic_portfolio(0)
    with pytest.raises(InputError, match="size_m"):
        synthetic_portfolio(3, size_m=(10.0, 5.0))


def test_written_synthetic_files_load_back_exactly(tmp_path):
    projects = synthetic_portfolio(3, seed=11)
    paths = write_synthetic_portfolio(tmp_path, 3, seed=11)
    assert [project_to_dict(load_project(p)) for p in paths] == \
        [project_to_dict(p) for p in projects]


# --------------------------------------------------------------------------- the batch result
def test_batch_equals_evaluating_each_project_alone(portfolio):
    _root, paths, run = portfolio
    table = run.table()
    assert list(table.columns) == list(SUMMARY_COLUMNS)
    assert list(table["project"]) == [p.name for p in paths]
    assert (table["status"] == "ok").all()
    modules = run.module_table()
    assert table["modules"].sum() > 0
    for path, row in zip(paths, table.itertuples(), strict=True):
        alone = evaluate(load_project(path), base_dir=path.parent)  # the reference path
        totals = alone.totals
        for key in FIGURES:
            assert getattr(row, key) == pytest.approx(totals[key], rel=1e-9, abs=1e-9,
                                                      nan_ok=True), key
        # closed form: kWp is modules × 400 W, and the specific yield is kWh over kWp
        assert row.power_kwp == pytest.approx(row.modules * 0.400)
        if row.modules:
            assert row.specific_yield_kwh_per_kwp == pytest.approx(row.energy_kwh
                                                                   / row.power_kwp)
        mine = modules[modules["project"] == row.project].drop(columns="project")
        expected = alone.table.reset_index()
        assert len(mine) == len(expected)
        np.testing.assert_allclose(mine["energy_kwh"].to_numpy(),
                                   expected["energy_kwh"].to_numpy(), rtol=1e-9)
        assert list(mine["module_id"]) == list(expected["module_id"])


def test_two_sites_share_the_weather(portfolio):
    # Weather and best orientation are computed once per site group: with the cache of one
    # worker, the second project of a site must not read the weather again.
    _root, paths, _ = portfolio
    projects = [load_project(p) for p in paths]
    by_site = {}
    for p in projects:
        by_site.setdefault(p.site, []).append(p)
    _site, members = max(by_site.items(), key=lambda item: len(item[1]))
    assert len(members) >= 2
    cache = _Analyses()
    cache.evaluate("g", members[0], None)
    cache.evaluate("g", members[1], None)
    assert len(cache.held) == 1
    assert "weather" not in next(iter(cache.held.values())).recomputed


def test_projects_differing_only_in_sky_directions_match_fresh_evaluations(portfolio):
    _root, paths, _ = portfolio
    first = load_project(paths[0])
    second = first.with_changes(energy=replace(first.energy, sky_directions=64))
    cache = _Analyses()
    cache.evaluate("g", first, None)
    batch = cache.evaluate("g", second, None).totals
    alone = evaluate(second).totals  # the reference: a fresh single-project evaluation
    assert batch["energy_kwh"] == pytest.approx(alone["energy_kwh"], rel=1e-12)


# --------------------------------------------------------------------------- broken files
def test_broken_files_are_reported_and_good_results_kept(portfolio, tmp_path, capsys):
    _root, paths, serial = portfolio
    folder = tmp_path / "mixed"
    folder.mkdir()
    good = paths[:2]
    for path in good:
        shutil.copy(path, folder / path.name)
    (folder / "not-json.eaveline.json").write_text("{ this is not json", encoding="utf-8")
    (folder / "empty.eaveline.json").write_text("", encoding="utf-8")
    data = json.loads(good[0].read_text(encoding="utf-8"))
    data["site"]["latitude"] = 123.0
    (folder / "bad-latitude.eaveline.json").write_text(json.dumps(data), encoding="utf-8")
    data = json.loads(good[0].read_text(encoding="utf-8"))
    data["energy"]["weather_file"] = "nowhere/missing.epw"  # readable, cannot be evaluated
    (folder / "missing-weather.eaveline.json").write_text(json.dumps(data), encoding="utf-8")

    status = portfolio_main([str(folder), "--out", str(tmp_path / "out"), "--serial",
                             "--format", "csv", "--no-progress"])
    assert status == 1
    printed = capsys.readouterr().out
    table = pd.read_csv(tmp_path / "out" / "summary.csv").set_index("project")
    assert len(table) == 6
    errors = table["error"]
    assert table.loc["not-json.eaveline.json", "status"] == "error"
    assert "is not valid JSON" in errors["not-json.eaveline.json"]
    assert "is not valid JSON" in errors["empty.eaveline.json"]
    assert "site.latitude" in errors["bad-latitude.eaveline.json"]
    assert "-90 to 90" in errors["bad-latitude.eaveline.json"]
    assert "weather_file" in errors["missing-weather.eaveline.json"]
    assert "no such file" in errors["missing-weather.eaveline.json"]
    for name in ("not-json", "empty", "bad-latitude", "missing-weather"):
        assert f"failed: {name}.eaveline.json" in printed
    # no good result lost: equal to the clean run's rows
    clean = _figures(serial.table())
    pd.testing.assert_frame_equal(_figures(table.reset_index()).loc[[p.name for p in good]],
                                  clean.loc[[p.name for p in good]])


def test_csv_listing_and_a_missing_file(portfolio, tmp_path):
    _root, paths, serial = portfolio
    listing = tmp_path / "list.csv"
    relative = [os.path.relpath(paths[0], tmp_path), str(paths[1]), "gone.eaveline.json"]
    pd.DataFrame({"path": relative, "owner": ["a", "b", "c"]}).to_csv(listing, index=False)
    run = run_portfolio(listing, tmp_path / "out", scheduler="serial", progress=False)
    table = run.table().set_index("project")
    assert list(table.index) == relative
    assert table.loc["gone.eaveline.json", "status"] == "error"
    assert "cannot read the file" in table.loc["gone.eaveline.json", "error"]
    assert table.loc[relative[0], "energy_kwh"] == pytest.approx(
        serial.table().set_index("project").loc[paths[0].name, "energy_kwh"], rel=1e-12)
    assert run.failed == ("gone.eaveline.json",)


def test_bad_arguments_name_the_field(tmp_path):
    with pytest.raises(InputError, match="format"):
        run_portfolio(tmp_path, tmp_path / "o", format="xlsx")
    with pytest.raises(InputError, match="source"):
        find_projects(tmp_path / "nothing-here.txt")
    (tmp_path / "l.csv").write_text("file\nx.json\n", encoding="utf-8")
    with pytest.raises(InputError, match="'path' column"):
        find_projects(tmp_path / "l.csv")
    assert portfolio_main([str(tmp_path / "nothing.txt"), "-o", str(tmp_path / "o"),
                           "--serial", "--no-progress"]) == 2


def test_records_round_trip():
    entry = PortfolioEntry(project="a/b.eaveline.json", path="/x/a/b.eaveline.json")
    assert PortfolioEntry.from_dict(entry.to_dict()) == entry
    with pytest.raises(InputError, match="path"):
        PortfolioEntry.from_dict({"project": "a"})
    run = PortfolioRun(summary_path="/o/summary.csv", modules_path=None, format="csv",
                       computed=("a",), skipped=(), failed=("a",), seconds=1.5)
    assert PortfolioRun.from_dict(json.loads(json.dumps(run.to_dict()))) == run
    with pytest.raises(InputError, match="format"):
        PortfolioRun.from_dict({**run.to_dict(), "format": "xls"})


# --------------------------------------------------------------------------- restarts
def test_rerun_after_an_interruption_writes_only_what_is_missing(portfolio, tmp_path,
                                                                 monkeypatch):
    root, paths, serial = portfolio
    out = tmp_path / "out"
    real = _Analyses.evaluate
    calls = []

    def stop_on_the_third(self, group, project, base_dir):
        calls.append(project.name)
        if len(calls) == 3:
            raise KeyboardInterrupt  # the user presses Ctrl-C mid-run
        return real(self, group, project, base_dir)

    monkeypatch.setattr(_Analyses, "evaluate", stop_on_the_third)
    with pytest.raises(KeyboardInterrupt):
        run_portfolio(root / "in", out, scheduler="serial", progress=False)
    monkeypatch.setattr(_Analyses, "evaluate", real)
    written = {p: p.stat().st_mtime_ns for p in (out / "parts").glob("*.json")}
    assert len(written) == 2
    assert not (out / "summary.parquet").exists()
    assert not list((out / "parts").glob("*.tmp"))  # atomic: no half-written part

    rerun = run_portfolio(root / "in", out, scheduler="serial", progress=False)
    assert len(rerun.skipped) == 2 and len(rerun.computed) == N_PROJECTS - 2
    assert set(rerun.skipped).isdisjoint(rerun.computed)
    for path, stamp in written.items():
        assert path.stat().st_mtime_ns == stamp  # not rewritten
    pd.testing.assert_frame_equal(_figures(rerun.table()), _figures(serial.table()))

    # a third run has nothing to do; a file whose content changed is evaluated again, alone
    assert run_portfolio(root / "in", out, scheduler="serial", progress=False).computed == ()
    edited = tmp_path / "in"
    edited.mkdir()
    for path in paths[:3]:  # three projects of one site
        shutil.copy(path, edited / path.name)
    first = run_portfolio(edited, tmp_path / "out2", scheduler="serial", progress=False)
    assert len(first.computed) == 3  # other paths: nothing to reuse
    (edited / paths[2].name).write_text(paths[2].read_text(encoding="utf-8") + " ",
                                        encoding="utf-8")
    changed = run_portfolio(edited, tmp_path / "out2", scheduler="serial", progress=False)
    assert changed.computed == (paths[2].name,)


def test_failed_projects_are_kept_unless_asked_again(tmp_path, portfolio):
    _root, paths, _ = portfolio
    folder = tmp_path / "in"
    folder.mkdir()
    (folder / "bad.eaveline.json").write_text("[]", encoding="utf-8")
    shutil.copy(paths[0], folder / paths[0].name)
    first = run_portfolio(folder, tmp_path / "out", scheduler="serial", progress=False)
    assert first.failed == ("bad.eaveline.json",)
    second = run_portfolio(folder, tmp_path / "out", scheduler="serial", progress=False)
    assert second.computed == () and second.failed == ("bad.eaveline.json",)
    third = run_portfolio(folder, tmp_path / "out", scheduler="serial", progress=False,
                          retry_failed=True)
    assert third.computed == ("bad.eaveline.json",)


# --------------------------------------------------------------------------- a real cluster
@pytest.fixture(scope="module")
def cluster():
    distributed = pytest.importorskip("distributed")
    local = _local_cluster(2)  # the default cluster of run_portfolio, with two workers
    client = distributed.Client(local)
    yield local, client
    client.close()
    local.close()


def test_local_cluster_of_two_workers_gives_the_serial_result(portfolio, cluster, tmp_path):
    root, paths, serial = portfolio
    local, client = cluster
    addresses = [local.scheduler_address, *client.nthreads()]
    assert len(addresses) == 3
    assert all(a.startswith("tcp://127.0.0.1:") for a in addresses)  # loopback only
    # one project a worker fills the cores: each computes on one thread (layout.runtime)
    threads = client.run(lambda: __import__("layout.runtime").runtime.worker_threads())
    assert set(threads.values()) == {1}
    run = run_portfolio(root / "in", tmp_path / "out", scheduler=client, module_tables=True,
                        chunk_size=2, progress=True)
    assert len(run.computed) == N_PROJECTS and run.failed == ()
    pd.testing.assert_frame_equal(_figures(run.table()), _figures(serial.table()))
    pd.testing.assert_frame_equal(run.module_table(), serial.module_table())
    # the scheduler address path: connect to the same cluster by address
    again = run_portfolio([paths[3]], tmp_path / "out2", scheduler=local.scheduler_address,
                          progress=False)
    assert again.table()["energy_kwh"].iloc[0] == pytest.approx(
        serial.table()["energy_kwh"].iloc[3], rel=1e-12)


def test_a_killed_worker_has_its_projects_retried(portfolio, cluster, tmp_path):
    root, _paths, serial = portfolio
    _local, client = cluster
    out = tmp_path / "out"
    killed = []

    def kill_a_busy_worker():
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            parts = list((out / "parts").glob("*.json")) if (out / "parts").exists() else []
            busy = [w for w, tasks in client.processing().items() if tasks]
            if parts and busy:
                pid = client.run(os.getpid, workers=[busy[0]])[busy[0]]
                os.kill(pid, signal.SIGKILL)
                killed.append(pid)
                return
            time.sleep(0.05)

    killer = threading.Thread(target=kill_a_busy_worker)
    killer.start()
    run = run_portfolio(root / "in", out, scheduler=client, chunk_size=1, progress=False)
    killer.join()
    assert killed, "no worker was busy to be killed"
    assert len(run.computed) == N_PROJECTS and run.failed == ()
    pd.testing.assert_frame_equal(_figures(run.table()), _figures(serial.table()))
    client.wait_for_workers(2, timeout=30)  # the nanny restarted the killed worker


def test_a_task_lost_for_good_keeps_what_it_wrote(portfolio, tmp_path):
    root, paths, serial = portfolio
    entries = find_projects(paths[:2])
    stray = find_projects([tmp_path / "never-run.eaveline.json"])
    chunk = [(e.to_dict(), "g") for e in (*entries, *stray)]
    rows = _rows_of_a_lost_task(chunk, root / "serial", RuntimeError("worker gone"))
    assert [r["status"] for r in rows] == ["ok", "ok", "error"]
    assert rows[2]["error"] == "the batch task failed: RuntimeError: worker gone"
    assert rows[0]["energy_kwh"] == serial.table()["energy_kwh"].iloc[0]


def test_batch_is_a_command_of_python_m_layout(tmp_path):
    from layout.cli import main

    assert main(["batch", str(tmp_path / "nowhere"), "-o", str(tmp_path / "out"),
                 "--serial", "--no-progress"]) == 2
