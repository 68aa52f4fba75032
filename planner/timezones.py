"""The station's time zone: which clock the hour tables and the calendar speak.

A station's ``time_zone`` is an IANA time zone name ("Europe/London", "Pacific/Auckland",
"UTC"), read through the standard library's :mod:`zoneinfo` (the system's zone files, or the
``tzdata`` package where the system has none).  A pass's local hour is the civil hour at TCA
in that zone, daylight saving included, so a week across a clock change puts each pass in the
hour a station clock shows.

The special name ``local-mean-solar`` keeps the sun's clock instead: mean solar time at the
station's longitude, UTC + longitude / 15 hours (the hour angle of the mean sun; no equation of
time, so within about 16 minutes of apparent solar time), independent of civil zones.
"""

from __future__ import annotations

from collections.abc import Iterable
from datetime import UTC, datetime, timedelta, tzinfo
from typing import TYPE_CHECKING
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

if TYPE_CHECKING:  # numpy is imported where hours are computed: loading a scenario needs none
    import numpy as np

DEFAULT_TIME_ZONE = "UTC"
LOCAL_MEAN_SOLAR = "local-mean-solar"
_LOCAL_MEAN_SOLAR_SPELLINGS = frozenset({LOCAL_MEAN_SOLAR, "local_mean_solar"})
ALLOWED_TIME_ZONES = f'an IANA time zone name such as "Europe/London" or "UTC", or "{LOCAL_MEAN_SOLAR}"'
MEAN_SOLAR_LABEL = "LMST"  # local mean solar time


def canonical_time_zone(name: str) -> str:
    """The name as stored: the mean-solar spelling unified, an IANA name checked to exist.

    Raises ValueError with the reason when ``name`` is no zone the IANA database knows (the
    caller turns it into the one-line report naming the key).
    """
    if name in _LOCAL_MEAN_SOLAR_SPELLINGS:
        return LOCAL_MEAN_SOLAR
    zone_info(name)
    return name


def zone_info(name: str) -> ZoneInfo:
    """The :class:`~zoneinfo.ZoneInfo` of an IANA name; ValueError when there is none.

    zoneinfo refuses malformed keys (absolute paths, ``..``) with ValueError and unknown ones
    with ZoneInfoNotFoundError; a folder of the database (``Europe``) or an unreadable file
    can surface as OSError.  All mean "not a time zone" here.
    """
    if not name or not name.isprintable():
        raise ValueError("not a time zone name")
    try:
        return ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError, OSError, UnicodeError) as exc:
        raise ValueError("not a time zone name") from exc


def is_mean_solar(name: str) -> bool:
    """True for the special name that keeps mean solar time at the station's longitude."""
    return name == LOCAL_MEAN_SOLAR


def mean_solar_offset(longitude_deg: float) -> timedelta:
    """Local mean solar time minus UTC: 1 hour per 15 degrees of longitude east."""
    return timedelta(hours=float(longitude_deg) / 15.0)


def clock_of(name: str, longitude_deg: float) -> tzinfo:
    """A tzinfo that gives the station's local time: the IANA zone, or a fixed mean-solar offset."""
    if is_mean_solar(name):
        return _MeanSolar(longitude_deg)
    return zone_info(name)


def local_hours(times_utc: Iterable[datetime], name: str, longitude_deg: float) -> np.ndarray:
    """Local hour (0..23, int64) of each aware instant on the station's clock.

    For an IANA zone it is the civil hour (daylight saving applied per instant); for
    ``local-mean-solar`` the floor of (UTC hours + longitude / 15) modulo 24.
    """
    import numpy as np

    times = list(times_utc)
    if is_mean_solar(name):
        utc_hours = np.array([_hours_of_day(t.astimezone(UTC)) for t in times], dtype=float)
        return np.floor(np.mod(utc_hours + float(longitude_deg) / 15.0, 24.0)).astype(np.int64) % 24
    zone = zone_info(name)
    return np.array([t.astimezone(zone).hour for t in times], dtype=np.int64)


def zone_label(name: str, longitude_deg: float) -> str:
    """How headings name the clock: the IANA name, or mean solar time with its offset from UTC."""
    if is_mean_solar(name):
        return f"{LOCAL_MEAN_SOLAR} (UTC{_signed_hours(longitude_deg / 15.0)})"
    return name


def local_text(time_utc: datetime, name: str, longitude_deg: float) -> str:
    """An instant as local wall time with the zone's abbreviation: ``2027-03-28 02:15:07 BST``."""
    local = time_utc.astimezone(clock_of(name, longitude_deg))
    return f"{local:%Y-%m-%d %H:%M:%S} {local.tzname()}"


def _hours_of_day(utc: datetime) -> float:
    return utc.hour + utc.minute / 60.0 + (utc.second + utc.microsecond * 1e-6) / 3600.0


def _signed_hours(hours: float) -> str:
    return f"{hours:+.2f} h"


class _MeanSolar(tzinfo):
    """A fixed offset of longitude / 15 hours, named LMST (no daylight saving)."""

    def __init__(self, longitude_deg: float) -> None:
        self._offset = mean_solar_offset(longitude_deg)

    def utcoffset(self, dt: datetime | None) -> timedelta:
        return self._offset

    def dst(self, dt: datetime | None) -> timedelta:
        return timedelta(0)

    def tzname(self, dt: datetime | None) -> str:
        return MEAN_SOLAR_LABEL
