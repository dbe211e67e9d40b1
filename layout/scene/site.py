"""The site: where the building stands on the earth, and its clock."""

from __future__ import annotations

import datetime as _dt
import functools
import re
import zoneinfo
from dataclasses import dataclass

from ..errors import InputError, check_fields, check_range

__all__ = ["Site", "parse_timezone", "timezone_at"]

_OFFSET = re.compile(r"^(?:UTC|GMT)?\s*([+-])(\d{1,2})(?::?(\d{2}))?$", re.IGNORECASE)


def parse_timezone(name: str) -> _dt.tzinfo:
    """Return the tzinfo for an IANA zone name or a fixed UTC offset.

    Parameters
    ----------
    name : str
        An IANA zone such as ``"America/Denver"``, ``"UTC"``, or a fixed offset such as
        ``"UTC-07:00"``, ``"-0700"`` or ``"+05:30"``. Fixed offsets suit typical-year
        weather files, which are kept in standard time all year.

    Raises
    ------
    InputError
        If the zone is unknown or the offset is outside -12:00 to +14:00.
    """
    if not isinstance(name, str) or not name.strip():
        raise InputError(
            "timezone", "must name a time zone", value=name,
            allowed="an IANA zone such as 'America/Denver' or an offset such as 'UTC-07:00'",
        )
    text = name.strip()
    match = _OFFSET.match(text)
    if match:
        sign, hours, minutes = match.groups()
        delta = _dt.timedelta(hours=int(hours), minutes=int(minutes or 0))
        if sign == "-":
            delta = -delta
        in_range = _dt.timedelta(hours=-12) <= delta <= _dt.timedelta(hours=14)
        if not in_range or int(minutes or 0) >= 60:
            raise InputError("timezone", "offset is out of range", value=name,
                             allowed="UTC-12:00 to UTC+14:00")
        return _dt.timezone(delta)
    try:
        return zoneinfo.ZoneInfo(text)
    except (zoneinfo.ZoneInfoNotFoundError, ValueError):
        raise InputError(
            "timezone", "is not a known time zone", value=name,
            allowed="an IANA zone such as 'America/Denver' or an offset such as 'UTC-07:00'",
        ) from None


@functools.lru_cache(maxsize=1)
def _zone_finder():
    from timezonefinder import TimezoneFinder  # reads its boundary data once (about 0.3 s)

    return TimezoneFinder()


def timezone_at(latitude: float, longitude: float) -> str:
    """Return the IANA time zone in force at a place, found offline from its coordinates.

    Parameters
    ----------
    latitude, longitude : float
        WGS84 coordinates [degrees], north and east positive.

    Returns
    -------
    str
        The zone name, such as ``"America/Denver"``; over open sea, the nautical zone
        (``"Etc/GMT+7"``).

    Raises
    ------
    InputError
        If a coordinate is out of range, or no zone is known there (type one in instead).

    Notes
    -----
    The lookup is a point-in-polygon test on the time zone boundaries of the
    ``timezone-boundary-builder`` project, as packaged by ``timezonefinder``; no network
    access is needed. A place close to a zone border is only as exact as those boundaries:
    check the zone of a site within a few hundred metres of one.

    References
    ----------
    .. [1] J. Michelfeit, timezonefinder, https://github.com/jannikmi/timezonefinder
    .. [2] E. Sweeney, timezone-boundary-builder,
       https://github.com/evansiroky/timezone-boundary-builder
    """
    latitude = check_range("latitude", latitude, -90, 90, unit="degrees")
    longitude = check_range("longitude", longitude, -180, 180, unit="degrees")
    name = _zone_finder().timezone_at(lng=longitude, lat=latitude)
    if not name:
        raise InputError("timezone", "no time zone is known at these coordinates; type one",
                         value=f"{latitude:.5f}, {longitude:.5f}",
                         allowed="an IANA zone such as 'America/Denver' or 'UTC-07:00'")
    return name


@dataclass(frozen=True)
class Site:
    """Where the building stands.

    Parameters
    ----------
    latitude : float
        Latitude [degrees north], -90 to 90.
    longitude : float
        Longitude [degrees east], -180 to 180.
    timezone : str
        IANA zone name or fixed UTC offset, see :func:`parse_timezone`.
    altitude_m : float, default 0
        Height above sea level [m], -500 to 9000.
    name : str, default ""
        A label for the user.
    """

    latitude: float
    longitude: float
    timezone: str
    altitude_m: float = 0.0
    name: str = ""

    def __post_init__(self):
        object.__setattr__(self, "latitude", check_range("latitude", self.latitude, -90, 90,
                                                         unit="degrees"))
        object.__setattr__(self, "longitude", check_range("longitude", self.longitude, -180, 180,
                                                          unit="degrees"))
        parse_timezone(self.timezone)
        object.__setattr__(self, "altitude_m", check_range("altitude_m", self.altitude_m,
                                                           -500, 9000, unit="m"))
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)

    @property
    def tzinfo(self) -> _dt.tzinfo:
        """The site's time zone as a tzinfo object."""
        return parse_timezone(self.timezone)

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {"latitude": self.latitude, "longitude": self.longitude,
                "timezone": self.timezone, "altitude_m": self.altitude_m, "name": self.name}

    @classmethod
    def from_dict(cls, data: dict) -> Site:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("latitude", "longitude", "timezone", "altitude_m", "name")
        check_fields(data, known, required=known[:3], what="site")
        return cls(**data)
