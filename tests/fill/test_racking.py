import math

import numpy as np
import pytest
import shapely
from hypothesis import example, given, settings
from hypothesis import strategies as st
from pvlib.shading import shaded_fraction1d
from pvlib.solarposition import solar_azimuth_analytical, solar_zenith_analytical

from layout.errors import InputError
from layout.fill.racking import (
    fill_racks,
    gcr_from_row_pitch,
    row_pitch_from_gcr,
    row_pitch_no_shade_window,
    sun_from_hour_angle,
)
from layout.fill.rules import ifc_2021_commercial
from layout.fill.usable import usable_area
from layout.scene.building import flat_roof
from layout.scene.modules import generic_60_cell
from layout.scene.roof import RoofFace

MODULE = generic_60_cell(330)  # 1.650 m × 0.991 m, REFERENCES.md typical sizes


# --------------------------------------------------------------------------- sun geometry
def test_sun_at_9_solar_time_winter_solstice_40n():
    # REFERENCES.md (geometry, recomputed): 21 Dec, 40° N, 9:00 solar time: altitude 13.96°,
    # azimuth 41.95° east of south (= 138.05° from north), printed to 2 decimals
    altitude, azimuth = sun_from_hour_angle(40.0, -23.44, -45.0)
    assert altitude == pytest.approx(13.96, abs=0.006)
    assert 180.0 - azimuth == pytest.approx(41.95, abs=0.006)


def test_sun_at_noon_winter_solstice_40n():
    # REFERENCES.md: elevation 26.56° at solar noon; a vertical pole's shadow is 2.00 × its
    # height (Duffie & Beckman declination)
    altitude, azimuth = sun_from_hour_angle(40.0, -23.44, 0.0)
    assert altitude == pytest.approx(26.56, abs=0.005)
    assert azimuth == pytest.approx(180.0)
    assert 1 / math.tan(math.radians(altitude)) == pytest.approx(2.00, abs=0.005)


@settings(max_examples=40, deadline=None)
@given(lat=st.floats(-60, 60), dec=st.floats(-23.44, 23.44), hour=st.floats(-80, 80))
@example(lat=8.0, dec=8.0, hour=0.0)  # the sun overhead: pvlib's arccos gives NaN
def test_sun_matches_pvlib_analytical(lat, dec, hour):
    # pvlib.solarposition.solar_zenith_analytical / solar_azimuth_analytical (Duffie &
    # Beckman, Sproul 2007)
    altitude, azimuth = sun_from_hour_angle(lat, dec, hour)
    zen = solar_zenith_analytical(np.radians(lat), np.radians(hour), np.radians(dec))
    if np.isnan(zen):
        # pvlib takes arccos of a cosine that rounds just above 1 with the sun overhead
        # (latitude = declination at solar noon); the sun is then at the zenith
        assert lat == pytest.approx(dec, abs=1e-6) and hour == pytest.approx(0.0, abs=1e-6)
        assert altitude == pytest.approx(90.0, abs=1e-6)
        return
    assert altitude == pytest.approx(90 - np.degrees(zen), abs=1e-6)
    # azimuth is undefined at the zenith; pvlib's arccos formula takes the side from
    # sign(hour angle) and loses precision within a few hundredths of a degree of solar noon
    if 1.0 < altitude < 89.0 and abs(hour) > 0.1:
        az = np.degrees(solar_azimuth_analytical(np.radians(lat), np.radians(hour),
                                                 np.radians(dec), zen))
        assert (azimuth - az + 180) % 360 - 180 == pytest.approx(0, abs=1e-5)


def test_sun_array_input():
    altitude, azimuth = sun_from_hour_angle(40.0, -23.44, np.array([-45.0, 0.0, 45.0]))
    assert altitude.shape == (3,)
    assert altitude[0] == pytest.approx(altitude[2])
    assert azimuth[0] + azimuth[2] == pytest.approx(360.0)


# --------------------------------------------------------------------------- row spacing
def test_no_shade_window_worked_example():
    # REFERENCES.md (common practice, recomputed): 40° N, L = 1 m, tilt 20°:
    # D = 1.023 m, pitch 1.963 m, GCR 0.509, printed to 3 decimals
    pitch = row_pitch_no_shade_window(1.0, 20.0, 40.0)
    gap = pitch - math.cos(math.radians(20))
    assert gap == pytest.approx(1.023, abs=5e-4)
    assert pitch == pytest.approx(1.963, abs=5e-4)
    assert gcr_from_row_pitch(1.0, pitch) == pytest.approx(0.509, abs=5e-4)


@pytest.mark.parametrize("rack_azimuth", [180.0, 160.0, 205.0])
def test_no_shade_window_against_pvlib_shaded_fraction(rack_azimuth):
    # pvlib.shading.shaded_fraction1d (Anderson & Jensen 2024): zero row-to-row shade over
    # 9:00-15:00 solar time at the computed pitch, some shade at a pitch 1 cm shorter
    slant, tilt = 1.0, 20.0
    pitch = row_pitch_no_shade_window(slant, tilt, 40.0, rack_azimuth_deg=rack_azimuth)
    hours = np.linspace(9, 15, 73)
    altitude, azimuth = sun_from_hour_angle(40.0, -23.44, 15 * (hours - 12))
    kwargs = dict(solar_zenith=90 - altitude, solar_azimuth=azimuth,
                  axis_azimuth=rack_azimuth - 90, shaded_row_rotation=tilt,
                  collector_width=slant)
    assert np.max(shaded_fraction1d(**kwargs, pitch=pitch)) < 1e-9
    assert np.max(shaded_fraction1d(**kwargs, pitch=pitch - 0.01)) > 1e-4
    # at 9:00 and 15:00 for the south-facing case, the shade starts exactly there
    if rack_azimuth == 180.0:
        ends = shaded_fraction1d(**{**kwargs, "solar_zenith": (90 - altitude)[[0, -1]],
                                    "solar_azimuth": azimuth[[0, -1]]}, pitch=pitch - 0.01)
        assert (ends > 0).all()


def test_southern_hemisphere_uses_june_solstice():
    # mirror image: 40° S with north-facing racks needs the same pitch as 40° N facing south
    north = row_pitch_no_shade_window(1.65, 10.0, 40.0)
    south = row_pitch_no_shade_window(1.65, 10.0, -40.0, rack_azimuth_deg=0.0)
    assert south == pytest.approx(north, rel=1e-9)


def test_flat_rack_needs_no_gap_and_gcr_round_trip():
    assert row_pitch_no_shade_window(1.0, 0.0, 40.0) == pytest.approx(1.0)
    # GCR = collector width / pitch, as pvlib uses it (pvlib.shading.masking_angle)
    assert row_pitch_from_gcr(1.65, 0.5) == pytest.approx(3.3)
    assert gcr_from_row_pitch(1.65, row_pitch_from_gcr(1.65, 0.42)) == pytest.approx(0.42)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"latitude": 70.0}, "latitude"),
    ({"latitude": 65.0, "start_solar_hour": 8.0, "end_solar_hour": 16.0}, "start_solar_hour"),
    ({"end_solar_hour": 8.0}, "end_solar_hour"),
    ({"tilt_deg": 95.0}, "tilt_deg"),
])
def test_no_shade_window_errors(kwargs, field):
    args = {"slant_length_m": 1.0, "tilt_deg": 20.0, "latitude": 40.0, **kwargs}
    with pytest.raises(InputError) as err:
        row_pitch_no_shade_window(args.pop("slant_length_m"), args.pop("tilt_deg"),
                                  args.pop("latitude"), **args)
    assert err.value.field == field


def test_gcr_out_of_range():
    with pytest.raises(InputError) as err:
        row_pitch_from_gcr(1.0, 1.2)
    assert err.value.field == "gcr"


# --------------------------------------------------------------------------- fill
def flat_face(width=30.0, depth=20.0, azimuth=180.0):
    return RoofFace([(0, 0), (width, 0), (width, depth), (0, depth)], 0.0, azimuth, 8.0,
                    name="flat")


@pytest.mark.parametrize("orientation", ["portrait", "landscape"])
def test_rack_count_on_rectangle_matches_closed_form(orientation):
    face = flat_face()
    usable = shapely.box(1.0, 1.5, 27.3, 18.2)
    tilt = 15.0
    slant, along = ((1.650, 0.991) if orientation == "portrait" else (0.991, 1.650))
    depth = slant * math.cos(math.radians(tilt))
    pitch = row_pitch_no_shade_window(slant, tilt, 40.0)
    placed = fill_racks(face, usable, MODULE, tilt_deg=tilt, rack_azimuth_deg=180.0,
                        row_pitch_m=pitch, orientation=orientation, gap_m=0.02)
    # closed form: floor((W + g) / (w + g)) per row; rows floor((H − depth) / pitch) + 1
    per_row = math.floor((26.3 + 0.02) / (along + 0.02))
    rows = math.floor((16.7 - depth) / pitch) + 1
    assert len(placed) == per_row * rows
    # consecutive rows are exactly one pitch apart (plan, along the rack azimuth)
    fronts = sorted({round(m.corners_3d[0][1], 9) for m in placed})
    assert np.diff(fronts) == pytest.approx(np.full(rows - 1, pitch))


@settings(max_examples=15, deadline=None)
@given(rack_azimuth=st.floats(90, 270), tilt=st.floats(5, 35), face_azimuth=st.floats(0, 359),
       landscape=st.booleans())
def test_racked_modules_inside_apart_and_tilted(rack_azimuth, tilt, face_azimuth, landscape):
    face = flat_face(22.0, 14.0, face_azimuth)
    usable = shapely.difference(face.roof_polygon.buffer(-1.2, join_style="mitre"),
                                shapely.box(8, 5, 11, 8))  # a rooftop unit cut out
    orientation = "landscape" if landscape else "portrait"
    slant = MODULE.width_m if landscape else MODULE.length_m
    pitch = row_pitch_from_gcr(slant, 0.45)
    placed = fill_racks(face, usable, MODULE, tilt_deg=tilt, rack_azimuth_deg=rack_azimuth,
                        row_pitch_m=pitch, orientation=orientation)
    assert len(placed) > 10
    footprints = np.array([m.footprint() for m in placed])
    assert shapely.covers(usable.buffer(1e-6), footprints).all()
    tree = shapely.STRtree(footprints)
    a, b = tree.query(footprints, predicate="intersects")
    keep = a < b
    assert (shapely.area(shapely.intersection(footprints[a[keep]], footprints[b[keep]]))
            < 1e-9).all()
    for m in placed[:6]:
        c = np.asarray(m.corners_3d)
        # slant edge is the module side up the tilt; its rise is L·sin β
        assert np.linalg.norm(c[3] - c[0]) == pytest.approx(slant)
        assert c[3, 2] - c[0, 2] == pytest.approx(slant * math.sin(math.radians(tilt)))
        # counter-clockwise seen from the front: the corner normal is the module's normal
        n = np.cross(c[1] - c[0], c[3] - c[0])
        assert n / np.linalg.norm(n) == pytest.approx(m.normal, abs=1e-9)
        assert m.azimuth_deg == pytest.approx(rack_azimuth)
        # the plan footprint of the module is its uv footprint (flat face: u, v = plan)
        plan = shapely.Polygon(c[:, :2])
        assert shapely.area(shapely.symmetric_difference(
            plan, shapely.transform(m.footprint(), face.roof_to_plan))) < 1e-9


def test_racked_cells_follow_orientation():
    face = flat_face()
    usable = shapely.box(1, 1, 20, 15)
    for orientation, expected in (("portrait", {0, 1, 2}), ("landscape", {0})):
        m = fill_racks(face, usable, MODULE, tilt_deg=20, rack_azimuth_deg=180,
                       row_pitch_m=3.0, orientation=orientation)[0]
        points, _, substring = m.cell_points(MODULE, samples_per_cell=4)
        low = points[:, 2] < m.corners_3d[0][2] + 0.03  # a shadow along the lower edge
        assert set(substring[low].tolist()) == expected


def test_commercial_flat_roof_500_m2():
    # IFC 2021 §1205.3.1 perimeter (REFERENCES.md; 4 ft where an axis ≤ 250 ft, from memory)
    building = flat_roof(25, 20, 8.0)
    face = building.faces[0]
    rules = ifc_2021_commercial(building_length_m=25, building_width_m=20)
    usable = usable_area(face, rules)
    pitch = row_pitch_no_shade_window(MODULE.length_m, 10.0, 40.0)
    placed = fill_racks(face, usable, MODULE, tilt_deg=10.0, rack_azimuth_deg=180,
                        row_pitch_m=pitch)
    assert len(placed) > 0
    boundary = face.roof_polygon.exterior
    setback = rules.edge_setback_m["eave"]
    assert min(shapely.distance(m.footprint(), boundary) for m in placed) >= setback - 1e-6


def test_fill_racks_errors():
    face = flat_face()
    usable = face.roof_polygon
    with pytest.raises(InputError) as err:
        fill_racks(face, usable, MODULE, tilt_deg=20, rack_azimuth_deg=180, row_pitch_m=1.0)
    assert err.value.field == "row_pitch_m"
    with pytest.raises(InputError) as err:
        fill_racks(face, usable, MODULE, tilt_deg=20, rack_azimuth_deg=180, row_pitch_m=3.0,
                   orientation="upright")
    assert err.value.field == "orientation"
    assert fill_racks(face, shapely.Polygon(), MODULE, tilt_deg=20, rack_azimuth_deg=180,
                      row_pitch_m=3.0) == ()
