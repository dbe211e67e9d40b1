"""``python -m layout import-footprint``: a new project at the footprints, or buildings added.

Outside reference: pyproj.Geod (WGS 84) for the footprint's true area, and the IANA zone of
Portland, Oregon (America/Los_Angeles, public record).
"""

import json

import pyproj
import pytest

from layout import load_demo_project, load_project, save_project
from layout.cli import main

CORNERS = [[-122.6765, 45.5231], [-122.67624, 45.5231], [-122.67624, 45.52317],
           [-122.6765, 45.52317], [-122.6765, 45.5231]]


@pytest.fixture()
def footprint_file(tmp_path):
    path = tmp_path / "studio.geojson"
    path.write_text(json.dumps({"type": "Feature", "properties": {"name": "studio"},
                                "geometry": {"type": "Polygon", "coordinates": [CORNERS]}}))
    return path


def test_a_new_project_at_the_footprints(footprint_file, tmp_path, capsys):
    out = tmp_path / "studio"
    assert main(["import-footprint", str(footprint_file), "-o", str(out), "--pitch", "4/12",
                 "--eave-height", "10 ft"]) == 0
    printed = capsys.readouterr().out
    assert "America/Los_Angeles" in printed and "authority having jurisdiction" in printed
    project = load_project(tmp_path / "studio.eaveline.json")
    (building,) = project.buildings
    lons, lats = zip(*CORNERS, strict=True)
    area, _ = pyproj.Geod(ellps="WGS84").polygon_area_perimeter(lons, lats)
    assert building.plan_area_m2 == pytest.approx(abs(area), rel=1e-3)
    assert building.faces[0].eave_height_m == pytest.approx(10 * 0.3048)
    assert project.site.timezone == "America/Los_Angeles"


def test_buildings_added_to_an_existing_project_keep_its_site(footprint_file, tmp_path,
                                                             capsys):
    demo = load_demo_project()
    existing = save_project(demo, tmp_path / "demo.eaveline.json")
    # the studio is some 1,500 km from the demo's site: it is added, and a note says so
    assert main(["import-footprint", str(footprint_file), "--into", str(existing), "-o",
                 str(tmp_path / "both.eaveline.json")]) == 0
    assert "km from the site" in capsys.readouterr().out
    both = load_project(tmp_path / "both.eaveline.json")
    assert both.site == demo.site and len(both.buildings) == len(demo.buildings) + 1


def test_errors_are_one_line(tmp_path, capsys):
    bad = tmp_path / "bad.geojson"
    bad.write_text('{"type": "FeatureCollection", "features": []}')
    assert main(["import-footprint", str(bad), "-o", str(tmp_path / "x")]) == 1
    error = capsys.readouterr().err.strip()
    assert error.startswith("error: footprint_file: holds no polygon") and "\n" not in error
    assert not (tmp_path / "x.eaveline.json").exists()
