"""Tests for layout.units: feet and inches, typed lengths, rise in 12.

Outside references used here:
- the international foot and inch are exact: 1 ft = 0.3048 m, 1 in = 25.4 mm (international
  yard and pound agreement, 1959);
- REFERENCES.md fire-access rows: 18 in = 457 mm and 36 in = 914 mm (IFC 2021 §1205.2.1.2),
  6 ft = 1829 mm (IFC 2021 §1205.3.1), printed to the millimetre;
- REFERENCES.md "roof pitch" (geometry): atan(r/12) and √(1 + (r/12)²);
- REFERENCES.md survey row: a 50 ft baseline, as a tape reading.
"""

import math

import numpy as np
import pytest

from layout.errors import InputError
from layout.units import (
    FOOT_M,
    INCH_M,
    feet_inches_to_m,
    feet_to_m,
    format_length,
    inches_to_m,
    m_to_feet,
    m_to_inches,
    parse_length,
    pitch_from_rise,
    rise_from_pitch,
    slope_length_factor,
)


def test_exact_definitions():
    # international yard and pound agreement (1959): exact values
    assert FOOT_M == 0.3048
    assert INCH_M == 0.0254
    assert 12 * INCH_M == pytest.approx(FOOT_M, rel=1e-15)


@pytest.mark.parametrize("inches, mm", [(18, 457), (36, 914), (72, 1829)])
def test_setback_conversions_match_the_code_text(inches, mm):
    # IFC 2021 §1205.2.1.2 / §1205.3.1 print the metric values rounded to the millimetre
    assert round(inches_to_m(inches) * 1000) == mm
    assert m_to_inches(inches_to_m(inches)) == pytest.approx(inches, rel=1e-15)


def test_scalars_and_arrays():
    assert isinstance(feet_to_m(6), float)
    assert feet_to_m(6) == pytest.approx(1.8288, rel=1e-15)
    out = feet_to_m([1.0, 3.0, 50.0])
    assert isinstance(out, np.ndarray)
    np.testing.assert_allclose(out, [0.3048, 0.9144, 15.24], rtol=1e-15)
    np.testing.assert_allclose(m_to_feet(out), [1.0, 3.0, 50.0], rtol=1e-15)
    np.testing.assert_allclose(inches_to_m(np.array([1.0, 12.0])), [0.0254, 0.3048], rtol=1e-15)
    assert isinstance(m_to_inches(1.0), float)
    assert feet_inches_to_m(11, 6) == pytest.approx(11.5 * 0.3048, rel=1e-15)
    assert feet_inches_to_m(5) == pytest.approx(1.524, rel=1e-15)


@pytest.mark.parametrize("text, metres", [
    ("11 ft 6 in", 11.5 * 0.3048),
    ("11' 6\"", 11.5 * 0.3048),
    ("11'6\"", 11.5 * 0.3048),
    ("5’ 2”", 62 * 0.0254),
    ("2 feet 3 inches", 27 * 0.0254),
    ("18 in", 0.4572),
    ("36\"", 0.9144),
    ("6 FT", 1.8288),
    ("457 mm", 0.457),
    ("45.7 cm", 0.457),
    ("3.2 m", 3.2),
    (".5 m", 0.5),
    ("  1.5  ", 1.5),
    (2.25, 2.25),
    (7, 7.0),
])
def test_parse_length(text, metres):
    assert parse_length(text) == pytest.approx(metres, rel=1e-12)


def test_parse_length_default_unit():
    assert parse_length("18", default_unit="in") == pytest.approx(0.4572, rel=1e-12)
    assert parse_length(50, default_unit="ft") == pytest.approx(15.24, rel=1e-12)


@pytest.mark.parametrize("text", ["", "   ", "tall", "5 furlongs", "3 m high", "m 3", None,
                                  float("nan"), float("inf"), True])
def test_parse_length_rejects_non_lengths(text):
    with pytest.raises(InputError) as err:
        parse_length(text, field="crown_base")
    assert err.value.field == "crown_base"


def test_format_length():
    assert format_length(1.8288, "imperial") == "6 ft 0 in"
    assert format_length(0.4572, "imperial") == "1 ft 6 in"
    assert format_length(0.3048 * 11.5, "imperial") == "11 ft 6 in"
    assert format_length(3.14159) == "3.14 m"
    assert format_length(3.14159, digits=3) == "3.142 m"
    # round trip through the parser, to the quarter inch the format keeps
    for metres in (0.5, 2.3, 7.77):
        back = parse_length(format_length(metres, "imperial"))
        assert abs(back - metres) <= 0.125 * 0.0254 + 1e-12
    with pytest.raises(InputError) as err:
        format_length(1.0, "cubits")
    assert err.value.field == "system"


@pytest.mark.parametrize("rise, degrees, factor", [
    (4, 18.435, math.sqrt(1 + (4 / 12) ** 2)),
    (6, 26.565, 1.1180),
    (12, 45.0, math.sqrt(2)),
])
def test_rise_in_12(rise, degrees, factor):
    # REFERENCES.md "roof pitch" (geometry): values printed to 3 and 4 decimals
    pitch = pitch_from_rise(rise)
    assert pitch == pytest.approx(degrees, abs=5e-4)
    assert slope_length_factor(pitch) == pytest.approx(factor, abs=5e-5)
    assert rise_from_pitch(pitch) == pytest.approx(rise, rel=1e-12)
    assert pitch_from_rise(rise * 2, run=24) == pytest.approx(pitch, rel=1e-12)


def test_rise_arrays():
    rises = np.array([2.0, 4.0, 6.0])
    pitches = pitch_from_rise(rises)
    assert isinstance(pitches, np.ndarray)
    np.testing.assert_allclose(pitches, np.degrees(np.arctan(rises / 12)), rtol=1e-14)
    np.testing.assert_allclose(rise_from_pitch(pitches), rises, rtol=1e-12)
    # the IFC 2021 §1205.2 exemption threshold: 2:12 is 9.46°
    assert pitches[0] == pytest.approx(9.46, abs=5e-3)


def test_a_leading_minus_applies_to_the_whole_length():
    # -3 ft 3.75 in = -(3 × 0.3048 + 3.75 × 0.0254) m exactly (1959 international foot)
    assert parse_length("-3 ft 3.75 in") == pytest.approx(-(3 * 0.3048 + 3.75 * 0.0254), abs=1e-12)
    assert parse_length(format_length(-1.0097, "imperial")) == pytest.approx(-1.0097, abs=0.0032)
    with pytest.raises(InputError):
        parse_length("--2 m")


# Coordinates: the sexagesimal conversion is the definition (1° = 60′ = 3600″); the places are
# ones whose coordinates are printed in many gazetteers (Denver's 40° 0′ 54″ N is the city's
# marker on the Capitol steps, from memory).
@pytest.mark.parametrize("text, axis, degrees", [
    ("40.0150", "latitude", 40.015),
    ("-105.2705", "longitude", -105.2705),
    ("40.0150 N", "latitude", 40.015),
    ("N 40 0 54", "latitude", 40.015),
    ("40° 0' 54\" N", "latitude", 40.015),
    ("40d 0m 54s N", "latitude", 40.015),
    ("40° 0.9' N", "latitude", 40.015),
    ("105°16'13.8\" W", "longitude", -105.2705),
    ("33.8688 S", "latitude", -33.8688),
    ("151° 12′ 33.5″ E", "longitude", 151 + 12 / 60 + 33.5 / 3600),
])
def test_parse_coordinate(text, axis, degrees):
    from layout.units import parse_coordinate

    assert parse_coordinate(text, axis) == pytest.approx(degrees, abs=1e-9)


@pytest.mark.parametrize("text, axis, words", [
    ("91", "latitude", "out of range"),
    ("181 W", "longitude", "out of range"),
    ("40 E", "latitude", "E is not a hemisphere"),
    ("40 61 0 N", "latitude", "minutes must be under 60"),
    ("-40 N", "latitude", "both a sign and a hemisphere"),
    ("forty north", "latitude", "is not a coordinate"),
])
def test_parse_coordinate_names_the_problem(text, axis, words):
    from layout.units import parse_coordinate

    with pytest.raises(InputError, match=words) as caught:
        parse_coordinate(text, axis)
    assert caught.value.field == axis


@pytest.mark.parametrize("text, degrees", [
    ("26.6", 26.6), ("26.6°", 26.6), ("30 deg", 30.0),
    # rise in 12: atan(rise / 12), the trade's definition
    ("6/12", math.degrees(math.atan(0.5))), ("6:12", math.degrees(math.atan(0.5))),
    ("12 in 12", 45.0), ("0/12", 0.0),
])
def test_parse_pitch(text, degrees):
    from layout.units import parse_pitch

    assert parse_pitch(text) == pytest.approx(degrees, abs=1e-9)


@pytest.mark.parametrize("text, words", [("45/12", "0 to 44 in 12"), ("80", "0 to 75"),
                                         ("steep", "is not a pitch"), ("-5", "is not a pitch")])
def test_parse_pitch_names_the_range(text, words):
    from layout.units import parse_pitch

    with pytest.raises(InputError, match=words):
        parse_pitch(text, field="pitch_deg")


@pytest.mark.parametrize("metres, text", [
    # the trade writes inches in sixteenths, reduced (a tape's marks): 3/4 in, not 0.75 in
    (0.75 * 0.0254, "3/4 in"),
    (6.5 * 0.0254, "6 1/2 in"),
    (11 * 0.3048 + 6.75 * 0.0254, "11 ft 6 3/4 in"),
    (40 * 0.3048 + 0.3125 * 0.0254, "40 ft 0 5/16 in"),
    (0.0, "0 in"),
    (-0.75 * 0.0254, "-3/4 in"),
])
def test_imperial_lengths_in_sixteenths(metres, text):
    assert format_length(metres, "imperial") == text
    assert parse_length(text) == pytest.approx(metres, abs=1e-12)


@pytest.mark.parametrize("text, inches", [("6 3/4 in", 6.75), ("6-3/4 in", 6.75),
                                          ("3/4\"", 0.75), ("1 ft 1/2 in", 12.5),
                                          ("11' 6-1/2\"", 138.5)])
def test_parse_length_reads_fractions_of_an_inch(text, inches):
    assert parse_length(text) == pytest.approx(inches * 0.0254, abs=1e-12)


def test_a_fraction_over_zero_is_refused():
    with pytest.raises(InputError, match="fraction over zero"):
        parse_length("1/0 in")
