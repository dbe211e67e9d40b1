"""Building footprints from GeoJSON (layout.scene.footprints).

Outside references: pyproj.Geod on the WGS 84 ellipsoid (Karney's geodesic algorithms) gives
the true edge lengths and area of a footprint given in longitude and latitude; the projected
outline must agree with them within 0.1 % (the issue's bound), and the round trip site frame →
longitude/latitude → site frame within 1 mm. A file in UTM (EPSG:32610, the 2008 GeoJSON 'crs'
member) must land where the same corners in longitude and latitude land.
"""

import json

import numpy as np
import pyproj
import pytest
import shapely

from layout.errors import InputError
from layout.scene.footprints import building_from_footprint, read_footprints
from layout.scene.geodesy import lonlat_to_site, site_to_lonlat

GEOD = pyproj.Geod(ellps="WGS84")
START = (-122.6765, 45.5231)  # a corner in Portland, Oregon (invented building)


def _l_shape_lonlat():
    """Corners of an L of our own, walked with geodesic steps: (bearing°, metres) each."""
    steps = [(90, 20.0), (0, 8.0), (270, 12.0), (0, 7.0), (270, 8.0)]
    lon, lat = START
    corners = [(lon, lat)]
    for bearing, distance in steps:
        lon, lat, _ = GEOD.fwd(lon, lat, bearing, distance)
        corners.append((lon, lat))
    return corners


def _feature_collection(rings, crs=None, names=("studio",)):
    data = {"type": "FeatureCollection", "features": [
        {"type": "Feature", "properties": {"name": name},
         "geometry": {"type": "Polygon", "coordinates": [list(map(list, ring))]}}
        for name, ring in zip(names, rings, strict=True)]}
    if crs:
        data["crs"] = {"type": "name", "properties": {"name": crs}}
    return data


def test_lengths_and_area_match_the_ellipsoid(tmp_path):
    corners = _l_shape_lonlat()
    path = tmp_path / "studio.geojson"
    path.write_text(json.dumps(_feature_collection([[*corners, corners[0]]])))
    found = read_footprints(path)
    assert found.names == ("studio",) and "centroid" in found.notes[-1]
    outline = found.outlines[0]
    assert len(outline) == 6
    ring = [*corners, corners[0]]
    lons, lats = zip(*ring, strict=True)
    _, _, geodesic = GEOD.inv(lons[:-1], lats[:-1], lons[1:], lats[1:])
    projected = np.linalg.norm(np.roll(outline, -1, axis=0) - outline, axis=1)
    np.testing.assert_allclose(projected, geodesic, rtol=1e-3)
    area, _ = GEOD.polygon_area_perimeter(lons, lats)
    assert shapely.Polygon(outline).area == pytest.approx(abs(area), rel=1e-3)
    # round trip: site frame -> longitude, latitude -> site frame within a millimetre
    lon, lat = site_to_lonlat(outline[:, 0], outline[:, 1], site_latitude=found.site_latitude,
                              site_longitude=found.site_longitude)
    x, y = lonlat_to_site(lon, lat, site_latitude=found.site_latitude,
                          site_longitude=found.site_longitude)
    np.testing.assert_allclose(np.stack([x, y], axis=1), outline, atol=1e-3)


def test_a_projected_file_lands_where_its_longitude_and_latitude_do():
    corners = _l_shape_lonlat()
    to_utm = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:32610", always_xy=True)
    utm = [to_utm.transform(lon, lat) for lon, lat in corners]
    site = {"site_latitude": 45.5235, "site_longitude": -122.6760}
    from_lonlat = read_footprints(_feature_collection([corners]), **site)
    from_utm = read_footprints(_feature_collection([utm], crs="EPSG:32610"), **site)
    np.testing.assert_allclose(from_utm.outlines[0], from_lonlat.outlines[0], atol=0.01)
    assert "UTM zone 10N" in from_utm.crs
    assert from_lonlat.notes == ()  # the site was given: no centroid taken


def test_multipolygons_are_one_building_each_and_courtyards_are_dropped():
    square = [[-122.0, 45.0], [-122.0002, 45.0], [-122.0002, 45.0002], [-122.0, 45.0002]]
    hole = [[-122.00005, 45.00005], [-122.00015, 45.00005], [-122.00015, 45.00015]]
    other = [[-122.001, 45.0], [-122.0012, 45.0], [-122.0012, 45.0001]]
    data = {"type": "Feature", "properties": {"name": "farm"},
            "geometry": {"type": "MultiPolygon", "coordinates": [[square, hole], [other]]}}
    found = read_footprints(data, site_latitude=45.0, site_longitude=-122.0)
    assert found.names == ("farm 1", "farm 2")
    assert any("courtyard" in note for note in found.notes)
    bare = read_footprints({"type": "Polygon", "coordinates": [square]},
                           site_latitude=45.0, site_longitude=-122.0)
    assert bare.names == ("building 1",)


@pytest.mark.parametrize("content, field, words", [
    ("not json at all", "footprint_file", "not JSON"),
    ('{"features": []}', "footprint_file", "no 'type'"),
    ('{"type": "FeatureCollection", "features": []}', "footprint_file", "no polygon"),
    ('{"type": "Point", "coordinates": [0, 0]}', "footprint_file", "not building outlines"),
    # projected coordinates without a 'crs' member: out of range as longitude and latitude
    ('{"type": "Polygon", "coordinates": [[[525000, 5040000], [525020, 5040000], '
     '[525020, 5040010]]]}', "coordinates", "out of range"),
    ('{"type": "Polygon", "crs": {"type": "name", "properties": {"name": "EPSG:999999"}}, '
     '"coordinates": [[[0, 0], [1, 0], [1, 1]]]}', "crs", "pyproj"),
    ('{"type": "Polygon", "coordinates": [[[0, 0], ["a", 0], [1, 1]]]}', "coordinates",
     "positions"),
])
def test_bad_files_name_the_problem(tmp_path, content, field, words):
    path = tmp_path / "bad.geojson"
    path.write_text(content)
    with pytest.raises(InputError, match=words) as caught:
        read_footprints(path)
    assert caught.value.field.startswith(field)


def test_a_missing_file_is_named():
    with pytest.raises(InputError, match="cannot be read") as caught:
        read_footprints("/nonexistent/footprints.geojson")
    assert caught.value.field == "footprint_file"


def test_a_footprint_becomes_a_flat_or_sloped_building():
    outline = [(0, 0), (12, 0), (12, 8), (0, 8)]
    flat = building_from_footprint(outline, "shop")
    assert flat.faces[0].pitch_deg == 0 and flat.plan_area_m2 == pytest.approx(96)
    shed = building_from_footprint(outline, "shop", pitch_deg=10, eave_height_m=4, eave_edge=2)
    assert shed.faces[0].azimuth_deg == pytest.approx(0.0)  # eave on the north edge
    with pytest.raises(InputError, match="crosses itself"):
        building_from_footprint([(0, 0), (1, 0), (0, 1), (1, 1)], "bad")
