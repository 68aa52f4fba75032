"""From SGP4's TEME frame to the station's look angles: time, Earth rotation and the site.

Julian dates are UTC as SGP4 expects (AIAA 2006-6753); Greenwich mean sidereal time is
IAU-82 (AIAA 2006-6753 App. C; Vallado) on UT1, taken from skyfield's built-in
UT1 - UTC tables, and rotates TEME to Earth-fixed (polar motion neglected: metres at the
site). The station's east-north-up frame then gives azimuth, elevation, range and range
rate. ``Observer`` computes these by calling SGP4 at the times asked; the pass search
uses the same geometry on its interpolated positions.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import UTC, datetime
from functools import lru_cache

import numpy as np
from sgp4.api import jday

from planner.passes.station import Station

SECONDS_PER_DAY = 86400.0
_BELOW_EVERYTHING_DEG = -180.0  # clearance used where SGP4 reports an error, or far below


@dataclass
class Look:
    """Topocentric geometry of one satellite at an array of times."""

    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    range_km: np.ndarray
    range_rate_km_s: np.ndarray
    error: np.ndarray  # SGP4 error code per sample, 0 = fine


def gmst_1982_rad(jd_ut1_whole: np.ndarray, jd_ut1_fraction: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Greenwich mean sidereal angle (rad) and its rate (rad/s), IAU-82 (AIAA 2006-6753 App. C)."""
    t = (jd_ut1_whole - 2451545.0 + jd_ut1_fraction) / 36525.0
    g = 67310.54841 + (8640184.812866 + (0.093104 + (-6.2e-6) * t) * t) * t
    dg = 8640184.812866 + (0.093104 * 2.0 + (-6.2e-6 * 3.0) * t) * t
    theta = np.mod(np.mod(jd_ut1_whole, 1.0) + jd_ut1_fraction + np.mod(g / SECONDS_PER_DAY, 1.0), 1.0) * 2 * np.pi
    theta_dot = (1.0 + dg / (SECONDS_PER_DAY * 36525.0)) * 2 * np.pi / SECONDS_PER_DAY
    return theta, theta_dot


@lru_cache(maxsize=1)
def _timescale():
    from skyfield.api import load

    return load.timescale()


@dataclass(frozen=True)
class _Clock:
    """UTC Julian dates and the Earth's rotation for times in seconds from the window start.

    Plain numbers only, so it travels to worker processes unchanged.
    """

    jd_whole: float
    jd_fraction: float
    dut1_knots_s: np.ndarray  # UT1 - UTC at hourly knots (it changes by milliseconds a day)
    dut1_s: np.ndarray

    @classmethod
    def starting(cls, start_utc: datetime, duration_s: float) -> _Clock:
        start = start_utc.astimezone(UTC)
        seconds = start.second + start.microsecond * 1e-6
        jd_whole, jd_fraction = jday(start.year, start.month, start.day, start.hour, start.minute, seconds)
        knots_s = np.arange(0.0, max(duration_s, 0.0) + 7200.0, 3600.0)
        knot_times = _timescale().utc(start.year, start.month, start.day, start.hour, start.minute, seconds + knots_s)
        return cls(jd_whole, jd_fraction, knots_s, np.atleast_1d(knot_times.dut1).astype(float))

    def julian(self, time_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(whole, fraction) UTC Julian dates as SGP4 takes them."""
        return np.full(np.shape(time_s), self.jd_whole), self.jd_fraction + time_s / SECONDS_PER_DAY

    def earth_angle(self, time_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """GMST-82 (rad) and its rate (rad/s) at the given times."""
        dut1_s = np.interp(time_s, self.dut1_knots_s, self.dut1_s)
        fraction = self.jd_fraction + time_s / SECONDS_PER_DAY
        return gmst_1982_rad(np.full(np.shape(time_s), self.jd_whole), fraction + dut1_s / SECONDS_PER_DAY)


def _three_floats(vector: np.ndarray) -> tuple[float, float, float]:
    """A 3-vector as three plain floats (x, y, z)."""
    x, y, z = (float(component) for component in vector)
    return x, y, z


@dataclass(frozen=True)
class _Site:
    """The station as plain numbers: Earth-fixed position, ENU rows, mask."""

    position_km: tuple[float, float, float]
    east: tuple[float, float, float]
    north: tuple[float, float, float]
    up: tuple[float, float, float]
    mask_azimuth_deg: np.ndarray
    mask_elevation_deg: np.ndarray

    @classmethod
    def of(cls, station: Station) -> _Site:
        east, north, up = station.enu_rotation
        mask = station.mask
        return cls(
            _three_floats(station.ecef_km),
            _three_floats(east),
            _three_floats(north),
            _three_floats(up),
            np.asarray(mask.azimuth_deg, float),
            np.asarray(mask.min_elevation_deg, float),
        )

    @property
    def flat_mask(self) -> bool:
        return len(self.mask_azimuth_deg) == 1

    def mask_at(self, azimuth_deg: np.ndarray) -> np.ndarray:
        if self.flat_mask:
            return np.full(np.shape(azimuth_deg), self.mask_elevation_deg[0])
        return np.interp(np.mod(azimuth_deg, 360.0), self.mask_azimuth_deg, self.mask_elevation_deg, period=360.0)


def _topocentric(site: _Site, x, y, z, cos_t, sin_t, *, azimuth=True, theta_dot=None, velocity=None):
    """(azimuth_deg or None, elevation_deg, range_km, range_rate_km_s or None) from TEME.

    ``cos_t, sin_t``: cosine and sine of GMST.  Element by element (no matrix
    products), so a sample's numbers never depend on which other samples share the
    call.  TEME -> pseudo Earth-fixed is a rotation by -GMST about z; the velocity
    also loses omega x r.
    """
    xe = cos_t * x + sin_t * y
    ye = cos_t * y - sin_t * x
    sx, sy, sz = site.position_km
    dx, dy, dz = xe - sx, ye - sy, z - sz
    (e0, e1, _), (n0, n1, n2), (u0, u1, u2) = site.east, site.north, site.up  # east has no z part
    east = e0 * dx + e1 * dy
    north = n0 * dx + n1 * dy + n2 * dz
    up = u0 * dx + u1 * dy + u2 * dz
    horizontal2 = east * east + north * north
    horizontal = np.sqrt(horizontal2)
    elevation = np.degrees(np.arctan2(up, horizontal))
    range_km = np.sqrt(horizontal2 + up * up)
    if azimuth:
        azimuth = np.degrees(np.arctan2(east, north))
        azimuth = np.where(azimuth < 0.0, azimuth + 360.0, azimuth)
    else:
        azimuth = None
    rate = None
    if velocity is not None:
        vx, vy, vz = velocity
        vxe = cos_t * vx + sin_t * vy + theta_dot * ye
        vye = cos_t * vy - sin_t * vx - theta_dot * xe
        rate = (dx * vxe + dy * vye + dz * vz) / range_km
    return azimuth, elevation, range_km, rate


class Observer:
    """Computes look angles from one station, for times in seconds from ``start_utc``.

    ``look`` calls SGP4 directly at the times asked (the pass search itself works on
    whole chunks of satellites, see the notes of ``planner.passes``).
    """

    def __init__(self, station: Station, start_utc: datetime, duration_s: float):
        self.station = station
        self.start_utc = start_utc
        self._clock = _Clock.starting(start_utc, duration_s)
        self._site = _Site.of(station)
        self._jd_whole, self._jd_fraction = self._clock.jd_whole, self._clock.jd_fraction

    def look(self, satrec, time_s: np.ndarray) -> Look:
        time_s = np.asarray(time_s, dtype=float)
        whole, fraction = self._clock.julian(time_s)
        error, r_teme, v_teme = satrec.sgp4_array(whole, fraction)
        theta, theta_dot = self._clock.earth_angle(time_s)
        with np.errstate(invalid="ignore"):
            azimuth, elevation, range_km, range_rate = _topocentric(
                self._site,
                r_teme[:, 0],
                r_teme[:, 1],
                r_teme[:, 2],
                np.cos(theta),
                np.sin(theta),
                theta_dot=theta_dot,
                velocity=(v_teme[:, 0], v_teme[:, 1], v_teme[:, 2]),
            )
        bad = error != 0
        if np.any(bad):
            for array in (azimuth, elevation, range_km, range_rate):
                array[bad] = np.nan
        return Look(azimuth, elevation, range_km, range_rate, error)

    def clearance_deg(self, satrec, time_s: np.ndarray) -> tuple[np.ndarray, Look]:
        """Elevation above the horizon mask (deg); very negative where SGP4 failed."""
        look = self.look(satrec, time_s)
        clearance = look.elevation_deg - self.station.mask.min_elevation_at(look.azimuth_deg)
        return np.where(np.isnan(clearance), _BELOW_EVERYTHING_DEG, clearance), look
