"""python -m layout from-points: a project from a tile of our own scene, and its bad input."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from layout.cli.dispatch import main
from layout.elevation import PROVENANCE, synthetic
from layout.project import load_project, project_from_dict, project_to_dict


@pytest.fixture(scope="module")
def tile(tmp_path_factory):
    folder = tmp_path_factory.mktemp("tile")
    scene = synthetic.demo_scene()
    points = synthetic.sample_points(scene, half_size_m=45.0, density=10.0, seed=4)
    synthetic.write_las(folder / "tile.laz", points)
    return folder / "tile.laz", scene


def test_from_points_writes_a_project_with_the_roof_and_its_surroundings(tile, tmp_path,
                                                                         capsys):
    path = tile[0]
    status = main(["from-points", str(path), "--site", "47.3,8.5", "--radius", "40", "-o",
                   str(tmp_path / "house")])
    assert status == 0
    out = capsys.readouterr().out
    assert "4 roof faces" in out and PROVENANCE in out and "2023-04-18" in out
    assert "authority having jurisdiction" in out
    project = load_project(tmp_path / "house.eaveline.json")
    assert len(project.faces) == 4
    assert {type(o).__name__ for o in project.obstructions} == {"Block", "Tree"}
    assert len([o for o in project.obstructions if type(o).__name__ == "Tree"]) == 3
    # every imported item is marked as data, not a survey
    for name in (*[f.name for f in project.faces], *[o.name for o in project.obstructions]):
        assert project.source_of(name) == PROVENANCE
    assert project.sources[0]["acquired"] == "2023-04-18"
    assert abs(project.site.altitude_m - synthetic.DEMO_GROUND_ALTITUDE_M) < 0.2
    assert main(["summary", str(tmp_path / "house.eaveline.json")]) == 0
    summary = " ".join(capsys.readouterr().out.split())  # the bullets wrap
    assert "Imported items" in summary and "tree 1, tree 2, tree 3" in summary
    assert f"{PROVENANCE} (tile.laz, acquired 2023-04-18)" in summary


def test_sources_round_trip_and_old_files_still_load(tile, tmp_path):
    main(["from-points", str(tile[0]), "--site", "47.3,8.5", "-o", str(tmp_path / "p")])
    project = load_project(tmp_path / "p.eaveline.json")
    data = project_to_dict(project)
    assert project_from_dict(json.loads(json.dumps(data))).sources == project.sources
    old = dict(data)
    del old["sources"]
    assert project_from_dict(old).sources == ()
    assert "sources" not in project_to_dict(project_from_dict(old))
    bad = {**data, "sources": [{"kind": "elevation data", "note": "x", "items": "tree 1"}]}
    with pytest.raises(Exception, match=r"sources\[0\]\.items"):
        project_from_dict(bad)


@pytest.mark.parametrize(("args", "message"), [
    (["--site", "48.3,8.5"], "does not cover the site"),
    (["--site", "47.3,8.5", "--crs", "EPSG:999999"], "pyproj knows"),
    (["--site", "47.3,8.5", "--radius", "0"], "radius_m"),
])
def test_bad_input_gives_one_line(tile, tmp_path, capsys, args, message):
    assert main(["from-points", str(tile[0]), *args, "-o", str(tmp_path / "x")]) == 1
    err = capsys.readouterr().err
    assert message in err and err.count("\n") == 1


def test_site_must_be_lat_lon(tile, tmp_path):
    # argparse's own error (status 2), run as the command line would be
    done = subprocess.run([sys.executable, "-m", "layout", "from-points", str(tile[0]),
                           "--site", "95,8.5", "-o", str(tmp_path / "x")],
                          capture_output=True, text=True)
    assert done.returncode == 2 and "--site takes LAT,LON" in done.stderr


def test_a_footprint_file_and_the_time_zone_from_the_site(tile, tmp_path, capsys):
    # the house's own footprint as GeoJSON in longitude and latitude about the same site
    from layout.scene.geodesy import site_to_lonlat

    path, scene = tile
    outline = [tuple(c) for c in scene.house.footprint.exterior.coords]
    lon, lat = site_to_lonlat([c[0] for c in outline], [c[1] for c in outline],
                              site_latitude=47.3, site_longitude=8.5)
    footprint = tmp_path / "house.geojson"
    footprint.write_text(json.dumps({"type": "Polygon", "coordinates": [
        [[float(a), float(b)] for a, b in zip(lon, lat, strict=True)]]}))
    status = main(["from-points", str(path), "--site", "47.3,8.5", "--radius", "40",
                   "--footprint", str(footprint), "-o", str(tmp_path / "given")])
    assert status == 0
    project = load_project(tmp_path / "given.eaveline.json")
    assert len(project.faces) == 4
    # the IANA zone of Zurich (47.3 N, 8.5 E) is a matter of public record
    assert project.site.timezone == "Europe/Zurich"
    plan = sum(f.plan_area_m2 for f in project.faces)
    assert plan == pytest.approx(scene.house.footprint.area, rel=0.01)
