"""Tests for layout.scene.site: the Site and its time zone.

Outside references used here:
- the IANA time zone database (through the standard library's zoneinfo): America/Denver keeps
  UTC−7 in winter and UTC−6 in summer; Asia/Kolkata is UTC+5:30 all year;
- the REFERENCES.md solar-position row (Reda & Andreas 2004): its site, lat 39.742476,
  lon −105.1786, 1830.14 m, on UTC−7.
"""

import datetime as dt
import json
import zoneinfo

import pytest

from layout.errors import InputError
from layout.scene.site import Site, parse_timezone

SPA_SITE = dict(latitude=39.742476, longitude=-105.1786, timezone="UTC-07:00",
                altitude_m=1830.14, name="NREL SPA example")


def test_spa_site_is_accepted():
    site = Site(**SPA_SITE)
    assert site.latitude == 39.742476
    when = dt.datetime(2003, 10, 17, 12, 30, 30, tzinfo=site.tzinfo)
    assert when.utcoffset() == dt.timedelta(hours=-7)


@pytest.mark.parametrize("text, hours", [
    ("UTC-07:00", -7), ("-0700", -7), ("+05:30", 5.5), ("UTC+14:00", 14), ("UTC-12:00", -12),
    ("GMT+1", 1), ("utc+0", 0), ("UTC-3:30", -3.5),
])
def test_fixed_offsets(text, hours):
    zone = parse_timezone(text)
    assert zone.utcoffset(None) == dt.timedelta(hours=hours)


def test_iana_zones_follow_the_tz_database():
    denver = parse_timezone("America/Denver")
    assert isinstance(denver, zoneinfo.ZoneInfo)
    # IANA tz database: Mountain Standard Time in January, daylight time in July
    assert dt.datetime(2024, 1, 15, 12, tzinfo=denver).utcoffset() == dt.timedelta(hours=-7)
    assert dt.datetime(2024, 7, 15, 12, tzinfo=denver).utcoffset() == dt.timedelta(hours=-6)
    kolkata = parse_timezone("Asia/Kolkata")
    assert dt.datetime(2024, 7, 1, tzinfo=kolkata).utcoffset() == dt.timedelta(hours=5.5)
    assert parse_timezone(" UTC ").utcoffset(None) == dt.timedelta(0)


@pytest.mark.parametrize("text", ["Mars/Olympus_Mons", "UTC+15", "UTC-13:00", "+05:75", "",
                                  "   ", None, 7, "../../etc/passwd"])
def test_bad_time_zones(text):
    with pytest.raises(InputError) as err:
        parse_timezone(text)
    assert err.value.field == "timezone"


@pytest.mark.parametrize("kwargs, field", [
    (dict(latitude=90.1), "latitude"),
    (dict(latitude=-90.5), "latitude"),
    (dict(latitude=float("nan")), "latitude"),
    (dict(latitude="north"), "latitude"),
    (dict(longitude=180.01), "longitude"),
    (dict(longitude=-181), "longitude"),
    (dict(longitude=float("inf")), "longitude"),
    (dict(timezone="Nowhere/Land"), "timezone"),
    (dict(altitude_m=-600), "altitude_m"),
    (dict(altitude_m=float("nan")), "altitude_m"),
    (dict(name=3), "name"),
])
def test_site_validation_names_the_field(kwargs, field):
    with pytest.raises(InputError) as err:
        Site(**(SPA_SITE | kwargs))
    assert err.value.field == field
    assert "allowed" in str(err.value) or field == "name"


@pytest.mark.parametrize("lat, lon", [(90, 180), (-90, -180), (0, 0)])
def test_site_limits_are_inclusive(lat, lon):
    site = Site(lat, lon, "UTC")
    assert (site.latitude, site.longitude) == (lat, lon)
    assert isinstance(site.latitude, float)


def test_round_trip_is_exact():
    site = Site(**SPA_SITE)
    data = site.to_dict()
    again = Site.from_dict(json.loads(json.dumps(data)))
    assert again == site
    assert again.to_dict() == data
    named_zone = Site(51.4779, -0.0015, "Europe/London")
    assert Site.from_dict(named_zone.to_dict()) == named_zone


def test_from_dict_names_the_bad_field():
    data = Site(**SPA_SITE).to_dict() | {"latitude": 123.0}
    with pytest.raises(InputError) as err:
        Site.from_dict(data)
    assert err.value.field == "latitude"


# Time zones found offline from coordinates. Outside reference: the zones of these state
# capitals are a matter of public record (the IANA tz database names each city's zone; from
# memory, checked against the zone.tab comments where the city names its zone).
@pytest.mark.parametrize("place, latitude, longitude, zone", [
    ("Denver, Colorado", 39.7392, -104.9903, "America/Denver"),
    ("Austin, Texas", 30.2672, -97.7431, "America/Chicago"),
    ("Phoenix, Arizona", 33.4484, -112.0740, "America/Phoenix"),  # no daylight saving
    ("Boston, Massachusetts", 42.3601, -71.0589, "America/New_York"),
    ("Honolulu, Hawaii", 21.3069, -157.8583, "Pacific/Honolulu"),
    ("Boise, Idaho", 43.6150, -116.2023, "America/Boise"),
    ("Indianapolis, Indiana", 39.7684, -86.1581, "America/Indiana/Indianapolis"),
])
def test_timezone_at_state_capitals(place, latitude, longitude, zone):
    from layout.scene.site import timezone_at

    assert timezone_at(latitude, longitude) == zone, place


def test_timezone_at_checks_the_coordinates():
    from layout.scene.site import timezone_at

    with pytest.raises(InputError, match="latitude"):
        timezone_at(95.0, 0.0)
    # open sea has a nautical zone, 15° of longitude wide: 140° W is nine hours behind UTC
    assert timezone_at(0.0, -140.0) == "Etc/GMT+9"
